// StoreReader: read-only queries over the history (trends, events, snapshots, annotations).
//
// Threads: one StoreReader per thread (its connection is not shared). It opens the file
// SQLITE_OPEN_READONLY and works while a StoreWriter (in this or another process) writes:
// each query sees the last committed state. Never blocks the writer (WAL).
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/store/records.h"

namespace tonewarden::store {

// Where a trend's points came from: raw readings or a rollup tier.
enum class TrendSource { kRaw, kMinute, kHour };
const char* to_string(TrendSource s) noexcept;  // "raw", "minute", "hour"

// One bucket of a trend. t_unix_ms is the earliest time contributing to the bucket (for a
// single raw reading, its exact time). min <= mean <= max; count = raw readings covered.
struct TrendPoint {
  int64_t t_unix_ms = 0;
  double min = 0.0;
  double max = 0.0;
  double mean = 0.0;
  int64_t count = 0;
};

struct Trend {
  SeriesInfo series;
  int64_t bucket_ms = 0;        // width of each bucket, ceil((to - from) / max_points), >= 1
  TrendSource finest_source = TrendSource::kRaw;  // finest tier used for any point
  std::vector<TrendPoint> points;  // ascending time, at most max_points
};

struct TrendQuery {
  std::vector<SeriesId> series;
  WallTimeMs from;              // inclusive
  WallTimeMs to;                // exclusive, > from
  int max_points = 1000;        // 1 .. 100000
};

struct EventQuery {
  WallTimeMs from;
  WallTimeMs to;                         // exclusive
  std::optional<AlarmState> state;
  std::optional<std::string> rule;
  std::optional<std::string> rig;
  int limit = 1000;                      // newest first, 1 .. 100000
};

class StoreReader {
 public:
  // kNotFound if the file does not exist, kCorruptData if it is not a tonewarden database,
  // kUnavailable if its schema is newer than this build. Never creates or migrates.
  static base::Result<std::unique_ptr<StoreReader>> open(
      const std::string& path, std::chrono::milliseconds busy_timeout = std::chrono::seconds(5));
  ~StoreReader();
  StoreReader(const StoreReader&) = delete;
  StoreReader& operator=(const StoreReader&) = delete;

  base::Result<std::vector<SeriesInfo>> list_series();
  // kNotFound if no series has that rig, channel and metric.
  base::Result<SeriesInfo> find_series(const std::string& rig, const std::string& channel,
                                       const std::string& metric);

  // At most max_points buckets per series, from raw readings when the bucket is shorter than a
  // minute, else from the per-minute (shorter than an hour) or per-hour rollups. Where a finer
  // tier has been pruned, the next coarser one fills in. Min and max are kept per bucket, so
  // no peak is hidden by the reduction.
  base::Result<std::vector<Trend>> trend(const TrendQuery& q);
  // Raw readings of one series in [from, to).
  base::Result<int64_t> count_readings(SeriesId series, WallTimeMs from, WallTimeMs to);

  base::Result<std::vector<AlarmEvent>> events(const EventQuery& q);
  // The `count` snapshots closest in time to `t` (either side), nearest first; rig/channel
  // filter when not empty.
  base::Result<std::vector<Snapshot>> nearest_snapshots(WallTimeMs t, int count,
                                                        const std::string& rig = "",
                                                        const std::string& channel = "");
  // Snapshots in [from, to), newest first, at most `limit` (1..100000); filters when not empty.
  base::Result<std::vector<Snapshot>> list_snapshots(WallTimeMs from, WallTimeMs to, int limit,
                                                     const std::string& rig = "",
                                                     const std::string& channel = "");
  // One snapshot by id; kNotFound if there is none.
  base::Result<Snapshot> snapshot(int64_t id);
  base::Result<std::vector<Annotation>> annotations(WallTimeMs from, WallTimeMs to,
                                                    const std::string& rig = "");
  base::Result<std::vector<RunRecord>> runs(WallTimeMs from, WallTimeMs to);

  int schema_version() const noexcept;
  // PRAGMA integrity_check: "ok" or SQLite's first complaint.
  base::Result<std::string> integrity_check();

 private:
  struct Impl;
  explicit StoreReader(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::store
