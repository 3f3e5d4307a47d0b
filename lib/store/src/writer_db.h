// Private: the writer thread's connection, its prepared statements, batch commits with
// incremental rollups, and retention steps. Used by one thread only.
#pragma once

#include <cstdint>
#include <limits>
#include <string>
#include <utility>
#include <vector>

#include "sqlite_db.h"
#include "tonewarden/store/records.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store::detail {

// Everything taken from the queue for one transaction.
struct Batch {
  std::vector<SeriesInfo> series;
  std::vector<RunRecord> run_starts;
  std::vector<std::pair<int64_t, int64_t>> run_stops;  // (run id, stop unix ms)
  std::vector<Reading> readings;
  std::vector<AlarmEvent> events;
  std::vector<Snapshot> snapshots;
  std::vector<Annotation> annotations;
  uint64_t last_seq = 0;  // sequence number of the last append in the batch
  size_t items = 0;       // items counted against the queue capacity

  bool empty() const noexcept {
    return series.empty() && run_starts.empty() && run_stops.empty() && readings.empty() &&
           events.empty() && snapshots.empty() && annotations.empty();
  }
  void clear() noexcept;  // keeps capacity
};

struct WriteOutcome {
  int64_t readings_written = 0;
  int64_t duplicates = 0;
};

class WriterDb {
 public:
  // Opens, checks, migrates, sets pragmas, prepares statements.
  static base::Result<WriterDb> open(const StoreConfig& config);

  std::vector<SeriesInfo> load_series();  // the dictionary, for the id cache
  int64_t max_run_id();

  // One BEGIN IMMEDIATE ... COMMIT. On error everything is rolled back; disk_full tells
  // whether the cause was SQLITE_FULL.
  base::Result<WriteOutcome> write(const Batch& b, bool* disk_full);

  // One age/count retention step of at most prune_batch_rows rows in its own transaction.
  // Returns rows deleted; *more is true when that task has rows left.
  base::Result<int64_t> prune_step(int64_t now_ms, bool* more);

  // Pages in use (page_count - freelist_count) times the page size.
  int64_t live_bytes();
  // One size-cap step (see "Size cap" in store_writer.h), at most prune_batch_rows rows.
  // *more stays true while use is above the low-water mark and something can still go;
  // *unmet is set when use is above it and no raw reading or snapshot is left.
  base::Result<int64_t> size_step(bool* more, bool* unmet);
  void checkpoint();

 private:
  base::Status prepare_all();
  base::Result<int64_t> run_delete(Stmt& st, const char* what);
  void load_series_ids(std::vector<int64_t>* out);
  base::Result<int64_t> drop_snapshots_for_size(int64_t excess, bool* more, bool* unmet);

  StoreConfig config_;
  Db db_;
  Stmt begin_, commit_, rollback_;
  Stmt ins_series_, ins_run_, upd_run_, ins_reading_, up_minute_, up_hour_;
  Stmt ins_event_, ins_snapshot_, ins_annotation_;
  // Retention deletes: per series (by kReadings.. index) and by age (kSnapshots.. index).
  enum SeriesTable { kReadings, kRollupMinute, kRollupHour, kNumSeriesTables };
  enum AgeTable { kSnapshots, kAlarmEvents, kAnnotations, kNumAgeTables };
  Stmt prune_series_[kNumSeriesTables], prune_age_[kNumAgeTables], prune_snap_count_;
  Stmt oldest_raw_, newest_raw_, series_ids_, live_bytes_, checkpoint_;
  Stmt oldest_snapshot_bins_, drop_oldest_snapshots_;
  int task_ = 0;            // which retention task runs next
  size_t series_cursor_ = 0;  // per-series tasks walk the dictionary
  std::vector<int64_t> series_;
  // Size cap: the raw cutoff being applied (kNoCutoff between rounds), series by series.
  static constexpr int64_t kNoCutoff = std::numeric_limits<int64_t>::min();
  int64_t size_cutoff_ = kNoCutoff;
  size_t size_cursor_ = 0;
  std::vector<int64_t> size_series_;
};

}  // namespace tonewarden::store::detail
