// Read-only queries: trends reduced to at most P buckets from raw readings or rollups,
// alarm events, nearest snapshots, annotations, runs. One connection, SQLITE_OPEN_READONLY.
#include "tonewarden/store/store_reader.h"

#include <sys/stat.h>

#include <algorithm>
#include <cerrno>
#include <limits>
#include <map>

#include "schema.h"
#include "sqlite_db.h"
#include "tonewarden/store/schema.h"
#include "tonewarden/store/spectrum_codec.h"

namespace tonewarden::store {

using base::ErrorCode;
using base::make_error;
using detail::Stmt;

namespace {
constexpr int64_t kMinuteMs = 60'000;
constexpr int64_t kHourMs = 3'600'000;
constexpr int64_t kNever = std::numeric_limits<int64_t>::max();
constexpr int64_t kEver = std::numeric_limits<int64_t>::min();
constexpr int kMaxPoints = 100'000;

int64_t floor_to(int64_t t, int64_t step) {
  const int64_t q = t / step;
  return (t % step < 0 ? q - 1 : q) * step;
}

int64_t ceil_to(int64_t t, int64_t step) {
  const int64_t q = t / step;
  return (t % step > 0 ? q + 1 : q) * step;
}

struct Bucket {
  int64_t t = kNever;
  double min = std::numeric_limits<double>::infinity();
  double max = -std::numeric_limits<double>::infinity();
  double sum = 0.0;
  int64_t count = 0;
};
}  // namespace

const char* to_string(TrendSource s) noexcept {
  switch (s) {
    case TrendSource::kRaw: return "raw";
    case TrendSource::kMinute: return "minute";
    case TrendSource::kHour: return "hour";
  }
  return "raw";
}

struct StoreReader::Impl {
  detail::Db db;
  int version = 0;
  Stmt series_all, series_one, series_find, oldest_raw, oldest_minute, oldest_hour, count_raw;
  Stmt raw_buckets, minute_buckets, hour_buckets;
  Stmt events, snap_before, snap_after, snap_range, snap_id, annotations, runs, integrity;

  base::Status prepare();
  base::Result<SeriesInfo> series_by_id(SeriesId id);
  base::Result<int64_t> oldest(Stmt& st, SeriesId id);
  base::Status fold(Stmt& st, SeriesId id, int64_t from, int64_t bucket_ms, int64_t lo,
                    int64_t hi, std::map<int64_t, Bucket>* out, bool* any);
  base::Result<std::vector<Snapshot>> snapshots(Stmt& st, int64_t t, int n,
                                                const std::string& rig, const std::string& ch);
};

base::Status StoreReader::Impl::prepare() {
  struct Item {
    Stmt* st;
    const char* sql;
  };
  const Item items[] = {
      {&series_all, "SELECT id, rig, channel, metric, unit FROM series ORDER BY id"},
      {&series_one, "SELECT id, rig, channel, metric, unit FROM series WHERE id = ?1"},
      {&series_find, "SELECT id, rig, channel, metric, unit FROM series "
                     "WHERE rig = ?1 AND channel = ?2 AND metric = ?3 ORDER BY id LIMIT 1"},
      {&oldest_raw, "SELECT t_ms FROM readings WHERE series_id = ?1 ORDER BY t_ms LIMIT 1"},
      {&oldest_minute,
       "SELECT t_ms FROM rollup_minute WHERE series_id = ?1 ORDER BY t_ms LIMIT 1"},
      {&oldest_hour, "SELECT t_ms FROM rollup_hour WHERE series_id = ?1 ORDER BY t_ms LIMIT 1"},
      {&count_raw,
       "SELECT count(*) FROM readings WHERE series_id = ?1 AND t_ms >= ?2 AND t_ms < ?3"},
      // ?2 = query start, ?3 = bucket width, [?4, ?5) = the part of the range this tier serves.
      {&raw_buckets,
       "SELECT (t_ms - ?2) / ?3 AS b, min(t_ms), min(value), max(value), sum(value), count(*) "
       "FROM readings WHERE series_id = ?1 AND t_ms >= ?4 AND t_ms < ?5 GROUP BY b ORDER BY b"},
      {&minute_buckets,
       "SELECT max(0, (t_ms - ?2) / ?3) AS b, max(min(t_ms), ?2), min(min), max(max), sum(sum), "
       "sum(count) FROM rollup_minute WHERE series_id = ?1 AND t_ms > ?4 - 60000 AND t_ms < ?5 "
       "GROUP BY b ORDER BY b"},
      {&hour_buckets,
       "SELECT max(0, (t_ms - ?2) / ?3) AS b, max(min(t_ms), ?2), min(min), max(max), sum(sum), "
       "sum(count) FROM rollup_hour WHERE series_id = ?1 AND t_ms > ?4 - 3600000 AND t_ms < ?5 "
       "GROUP BY b ORDER BY b"},
      {&events,
       "SELECT id, t_ms, rig, channel, rule, severity, state, value, threshold, message, "
       "evidence_path, user, comment FROM alarm_events WHERE t_ms >= ?1 AND t_ms < ?2 "
       "AND (?3 IS NULL OR state = ?3) AND (?4 IS NULL OR rule = ?4) "
       "AND (?5 IS NULL OR rig = ?5) ORDER BY t_ms DESC, id DESC LIMIT ?6"},
      {&snap_before,
       "SELECT id, t_ms, rig, channel, reason, sample_rate_hz, fft_length, bin_hz, window, scale, "
       "unit, floor_db, codes FROM snapshots WHERE t_ms <= ?1 AND (?2 = '' OR rig = ?2) "
       "AND (?3 = '' OR channel = ?3) ORDER BY t_ms DESC, id DESC LIMIT ?4"},
      {&snap_after,
       "SELECT id, t_ms, rig, channel, reason, sample_rate_hz, fft_length, bin_hz, window, scale, "
       "unit, floor_db, codes FROM snapshots WHERE t_ms > ?1 AND (?2 = '' OR rig = ?2) "
       "AND (?3 = '' OR channel = ?3) ORDER BY t_ms ASC, id ASC LIMIT ?4"},
      // ?1 = end (exclusive), ?5 = start (inclusive); newest first.
      {&snap_range,
       "SELECT id, t_ms, rig, channel, reason, sample_rate_hz, fft_length, bin_hz, window, scale, "
       "unit, floor_db, codes FROM snapshots WHERE t_ms < ?1 AND t_ms >= ?5 AND (?2 = '' OR rig = ?2) "
       "AND (?3 = '' OR channel = ?3) ORDER BY t_ms DESC, id DESC LIMIT ?4"},
      // ?1 = id.
      {&snap_id,
       "SELECT id, t_ms, rig, channel, reason, sample_rate_hz, fft_length, bin_hz, window, scale, "
       "unit, floor_db, codes FROM snapshots WHERE id = ?1 AND (?2 = '' OR rig = ?2) "
       "AND (?3 = '' OR channel = ?3) LIMIT ?4"},
      {&annotations,
       "SELECT id, t_ms, rig, text, author FROM annotations WHERE t_ms >= ?1 AND t_ms < ?2 "
       "AND (?3 = '' OR rig = ?3) ORDER BY t_ms, id"},
      {&runs,
       "SELECT id, start_ms, coalesce(stop_ms, 0), config_hash, version FROM runs "
       "WHERE start_ms < ?2 AND (stop_ms IS NULL OR stop_ms >= ?1) ORDER BY start_ms"},
      {&integrity, "PRAGMA integrity_check(1)"},
  };
  for (const auto& it : items) {
    auto st = Stmt::prepare(db, it.sql);
    if (!st.ok()) return std::move(st).error();
    *it.st = std::move(st).value();
  }
  return {};
}

base::Result<std::unique_ptr<StoreReader>> StoreReader::open(const std::string& path,
                                                             std::chrono::milliseconds busy) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) {
    return base::errno_error(ErrorCode::kNotFound, "store: cannot open " + path, errno);
  }
  if (auto s = detail::check_file_header(path); !s.ok()) {
    return std::move(s).error().with_context("store");
  }
  auto impl = std::make_unique<Impl>();
  auto db = detail::Db::open(path, SQLITE_OPEN_READONLY, static_cast<int>(busy.count()));
  if (!db.ok()) return std::move(db).error().with_context("store");
  impl->db = std::move(db).value();
  auto ver = detail::check_identity(impl->db);
  if (!ver.ok()) return std::move(ver).error().with_context("store");
  if (*ver < current_schema_version()) {
    return make_error(ErrorCode::kUnavailable,
                      "store: " + path + " has schema version " + std::to_string(*ver) +
                          "; start the daemon on it once to migrate it to " +
                          std::to_string(current_schema_version()));
  }
  impl->version = *ver;
  if (auto s = impl->prepare(); !s.ok()) return std::move(s).error().with_context("store");
  return std::unique_ptr<StoreReader>(new StoreReader(std::move(impl)));
}

StoreReader::StoreReader(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
StoreReader::~StoreReader() = default;
int StoreReader::schema_version() const noexcept { return impl_->version; }

namespace {
SeriesInfo series_row(const Stmt& st) {
  return {st.col_int(0), {st.col_text(1), st.col_text(2), st.col_text(3), st.col_text(4)}};
}
}  // namespace

base::Result<std::vector<SeriesInfo>> StoreReader::list_series() {
  std::vector<SeriesInfo> out;
  Stmt& st = impl_->series_all;
  int rc;
  while ((rc = st.step()) == SQLITE_ROW) out.push_back(series_row(st));
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "listing series");
  return out;
}

base::Result<SeriesInfo> StoreReader::Impl::series_by_id(SeriesId id) {
  series_one.bind(1, id);
  const int rc = series_one.step();
  if (rc == SQLITE_ROW) {
    SeriesInfo s = series_row(series_one);
    series_one.reset();
    return s;
  }
  series_one.reset();
  if (rc != SQLITE_DONE) return series_one.error(rc, "looking up series");
  return make_error(ErrorCode::kNotFound, "no series with id " + std::to_string(id));
}

base::Result<SeriesInfo> StoreReader::find_series(const std::string& rig,
                                                  const std::string& channel,
                                                  const std::string& metric) {
  Stmt& st = impl_->series_find;
  st.bind(1, rig);
  st.bind(2, channel);
  st.bind(3, metric);
  const int rc = st.step();
  if (rc == SQLITE_ROW) {
    SeriesInfo s = series_row(st);
    st.reset();
    return s;
  }
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "looking up series");
  return make_error(ErrorCode::kNotFound,
                    "no series " + rig + "/" + channel + "/" + metric + " in the database");
}

base::Result<int64_t> StoreReader::Impl::oldest(Stmt& st, SeriesId id) {
  st.bind(1, id);
  const int rc = st.step();
  int64_t t = kNever;
  if (rc == SQLITE_ROW) t = st.col_int(0);
  st.reset();
  if (rc != SQLITE_ROW && rc != SQLITE_DONE) return st.error(rc, "finding oldest row");
  return t;
}

base::Status StoreReader::Impl::fold(Stmt& st, SeriesId id, int64_t from, int64_t bucket_ms,
                                     int64_t lo, int64_t hi, std::map<int64_t, Bucket>* out,
                                     bool* any) {
  *any = false;
  if (lo >= hi) return {};
  st.bind(1, id);
  st.bind(2, from);
  st.bind(3, bucket_ms);
  st.bind(4, lo);
  st.bind(5, hi);
  int rc;
  while ((rc = st.step()) == SQLITE_ROW) {
    Bucket& b = (*out)[st.col_int(0)];
    b.t = std::min(b.t, st.col_int(1));
    b.min = std::min(b.min, st.col_double(2));
    b.max = std::max(b.max, st.col_double(3));
    b.sum += st.col_double(4);
    b.count += st.col_int(5);
    *any = true;
  }
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "reading trend");
  return {};
}

base::Result<std::vector<Trend>> StoreReader::trend(const TrendQuery& q) {
  if (q.series.empty()) return make_error(ErrorCode::kInvalidArgument, "trend: no series given");
  if (q.to.unix_ms <= q.from.unix_ms) {
    return make_error(ErrorCode::kInvalidArgument, "trend: end time " + base::format_rfc3339(q.to) +
                                                       " is not after start time " +
                                                       base::format_rfc3339(q.from));
  }
  if (q.max_points < 1 || q.max_points > kMaxPoints) {
    return make_error(ErrorCode::kInvalidArgument, "trend: max_points " +
                                                       std::to_string(q.max_points) +
                                                       " outside 1.." + std::to_string(kMaxPoints));
  }
  const int64_t from = q.from.unix_ms, to = q.to.unix_ms;
  const int64_t span = to - from;
  const int64_t bucket_ms = std::max<int64_t>(1, span / q.max_points + (span % q.max_points ? 1 : 0));
  std::vector<Trend> out;
  for (SeriesId id : q.series) {
    auto info = impl_->series_by_id(id);
    if (!info.ok()) return std::move(info).error().with_context("trend");
    Trend t;
    t.series = std::move(info).value();
    t.bucket_ms = bucket_ms;
    // Tier boundaries: raw serves from the first whole minute it fully covers, minute rollups
    // from the first whole hour; a coarser tier fills in wherever a finer one is pruned.
    // A tier that was never pruned (the next coarser tier starts no earlier) serves the whole
    // range; a pruned one serves from its first whole bucket of the coarser tier on.
    int64_t raw_from = kNever, minute_from = kNever;
    if (bucket_ms < kHourMs) {
      auto m = impl_->oldest(impl_->oldest_minute, id);
      auto h = impl_->oldest(impl_->oldest_hour, id);
      if (!m.ok()) return std::move(m).error();
      if (!h.ok()) return std::move(h).error();
      if (*m != kNever) minute_from = *h >= floor_to(*m, kHourMs) ? kEver : ceil_to(*m, kHourMs);
      if (bucket_ms < kMinuteMs) {
        auto r = impl_->oldest(impl_->oldest_raw, id);
        if (!r.ok()) return std::move(r).error();
        if (*r != kNever) raw_from = *m >= floor_to(*r, kMinuteMs) ? kEver : ceil_to(*r, kMinuteMs);
      }
      minute_from = std::min(minute_from, raw_from);
    }
    std::map<int64_t, Bucket> buckets;
    bool any_raw = false, any_minute = false, any_hour = false;
    auto s = impl_->fold(impl_->raw_buckets, id, from, bucket_ms, std::max(from, raw_from), to,
                         &buckets, &any_raw);
    if (s.ok()) {
      s = impl_->fold(impl_->minute_buckets, id, from, bucket_ms, std::max(from, minute_from),
                      std::min(to, raw_from), &buckets, &any_minute);
    }
    if (s.ok()) {
      s = impl_->fold(impl_->hour_buckets, id, from, bucket_ms, from, std::min(to, minute_from),
                      &buckets, &any_hour);
    }
    if (!s.ok()) return std::move(s).error().with_context("trend");
    t.finest_source = any_raw ? TrendSource::kRaw : any_minute ? TrendSource::kMinute
                                                               : TrendSource::kHour;
    t.points.reserve(buckets.size());
    for (const auto& [b, v] : buckets) {
      t.points.push_back({v.t, v.min, v.max, v.sum / static_cast<double>(v.count), v.count});
    }
    out.push_back(std::move(t));
  }
  return out;
}

base::Result<int64_t> StoreReader::count_readings(SeriesId series, WallTimeMs from,
                                                  WallTimeMs to) {
  Stmt& st = impl_->count_raw;
  st.bind(1, series);
  st.bind(2, from.unix_ms);
  st.bind(3, to.unix_ms);
  const int rc = st.step();
  const int64_t n = rc == SQLITE_ROW ? st.col_int(0) : 0;
  st.reset();
  if (rc != SQLITE_ROW) return st.error(rc, "counting readings");
  return n;
}

base::Result<std::vector<AlarmEvent>> StoreReader::events(const EventQuery& q) {
  if (q.limit < 1 || q.limit > kMaxPoints) {
    return make_error(ErrorCode::kInvalidArgument,
                      "events: limit " + std::to_string(q.limit) + " outside 1..100000");
  }
  Stmt& st = impl_->events;
  st.bind(1, q.from.unix_ms);
  st.bind(2, q.to.unix_ms);
  if (q.state) st.bind(3, to_string(*q.state)); else st.bind_null(3);
  if (q.rule) st.bind(4, *q.rule); else st.bind_null(4);
  if (q.rig) st.bind(5, *q.rig); else st.bind_null(5);
  st.bind(6, q.limit);
  std::vector<AlarmEvent> out;
  int rc;
  while ((rc = st.step()) == SQLITE_ROW) {
    AlarmEvent e;
    e.id = st.col_int(0);
    e.t.unix_ms = st.col_int(1);
    e.rig = st.col_text(2);
    e.channel = st.col_text(3);
    e.rule = st.col_text(4);
    // Unknown names (from a newer build) read as the defaults rather than failing the query.
    (void)parse_severity(st.col_text(5), &e.severity);
    (void)parse_alarm_state(st.col_text(6), &e.state);
    e.value = st.col_double(7);
    e.threshold = st.col_double(8);
    e.message = st.col_text(9);
    e.evidence_path = st.col_text(10);
    e.user = st.col_text(11);
    e.comment = st.col_text(12);
    out.push_back(std::move(e));
  }
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "reading alarm events");
  return out;
}

base::Result<std::vector<Snapshot>> StoreReader::Impl::snapshots(Stmt& st, int64_t t, int n,
                                                                 const std::string& rig,
                                                                 const std::string& ch) {
  st.bind(1, t);
  st.bind(2, rig);
  st.bind(3, ch);
  st.bind(4, n);
  std::vector<Snapshot> out;
  int rc;
  while ((rc = st.step()) == SQLITE_ROW) {
    Snapshot s;
    s.id = st.col_int(0);
    s.t.unix_ms = st.col_int(1);
    s.rig = st.col_text(2);
    s.channel = st.col_text(3);
    s.reason = st.col_text(4);
    s.sample_rate_hz = st.col_double(5);
    s.fft_length = st.col_int(6);
    s.bin_hz = st.col_double(7);
    s.window = st.col_text(8);
    s.scale = st.col_text(9);
    s.unit = st.col_text(10);
    auto mag = decode_spectrum(st.col_double(11), st.col_blob(12));
    if (!mag.ok()) {
      st.reset();
      return std::move(mag).error().with_context("snapshot " + std::to_string(s.id));
    }
    s.magnitude = std::move(mag).value();
    out.push_back(std::move(s));
  }
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "reading snapshots");
  return out;
}

base::Result<std::vector<Snapshot>> StoreReader::nearest_snapshots(WallTimeMs t, int count,
                                                                   const std::string& rig,
                                                                   const std::string& channel) {
  if (count < 1 || count > 1000) {
    return make_error(ErrorCode::kInvalidArgument,
                      "snapshots: count " + std::to_string(count) + " outside 1..1000");
  }
  auto before = impl_->snapshots(impl_->snap_before, t.unix_ms, count, rig, channel);
  if (!before.ok()) return before;
  auto after = impl_->snapshots(impl_->snap_after, t.unix_ms, count, rig, channel);
  if (!after.ok()) return after;
  std::vector<Snapshot> all = std::move(before).value();
  for (auto& s : after.value()) all.push_back(std::move(s));
  std::stable_sort(all.begin(), all.end(), [&](const Snapshot& a, const Snapshot& b) {
    const int64_t da = a.t.unix_ms > t.unix_ms ? a.t.unix_ms - t.unix_ms : t.unix_ms - a.t.unix_ms;
    const int64_t db = b.t.unix_ms > t.unix_ms ? b.t.unix_ms - t.unix_ms : t.unix_ms - b.t.unix_ms;
    return da < db;
  });
  if (all.size() > static_cast<size_t>(count)) all.resize(static_cast<size_t>(count));
  return all;
}

base::Result<std::vector<Snapshot>> StoreReader::list_snapshots(WallTimeMs from, WallTimeMs to,
                                                                int limit, const std::string& rig,
                                                                const std::string& channel) {
  if (limit < 1 || limit > 100000) {
    return make_error(ErrorCode::kInvalidArgument,
                      "snapshots: limit " + std::to_string(limit) + " outside 1..100000");
  }
  impl_->snap_range.bind(5, from.unix_ms);
  return impl_->snapshots(impl_->snap_range, to.unix_ms, limit, rig, channel);
}

base::Result<Snapshot> StoreReader::snapshot(int64_t id) {
  auto found = impl_->snapshots(impl_->snap_id, id, 1, "", "");
  if (!found.ok()) return std::move(found).error();
  if (found->empty()) return make_error(ErrorCode::kNotFound, "no snapshot with id " + std::to_string(id));
  return std::move(found->front());
}

base::Result<std::vector<Annotation>> StoreReader::annotations(WallTimeMs from, WallTimeMs to,
                                                               const std::string& rig) {
  Stmt& st = impl_->annotations;
  st.bind(1, from.unix_ms);
  st.bind(2, to.unix_ms);
  st.bind(3, rig);
  std::vector<Annotation> out;
  int rc;
  while ((rc = st.step()) == SQLITE_ROW) {
    out.push_back({st.col_int(0), {st.col_int(1)}, st.col_text(2), st.col_text(3),
                   st.col_text(4)});
  }
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "reading annotations");
  return out;
}

base::Result<std::vector<RunRecord>> StoreReader::runs(WallTimeMs from, WallTimeMs to) {
  Stmt& st = impl_->runs;
  st.bind(1, from.unix_ms);
  st.bind(2, to.unix_ms);
  std::vector<RunRecord> out;
  int rc;
  while ((rc = st.step()) == SQLITE_ROW) {
    out.push_back({st.col_int(0), {st.col_int(1)}, {st.col_int(2)}, st.col_text(3),
                   st.col_text(4)});
  }
  st.reset();
  if (rc != SQLITE_DONE) return st.error(rc, "reading runs");
  return out;
}

base::Result<std::string> StoreReader::integrity_check() {
  Stmt& st = impl_->integrity;
  const int rc = st.step();
  std::string verdict = rc == SQLITE_ROW ? st.col_text(0) : std::string();
  st.reset();
  if (rc != SQLITE_ROW) return st.error(rc, "integrity_check");
  return verdict;
}

}  // namespace tonewarden::store
