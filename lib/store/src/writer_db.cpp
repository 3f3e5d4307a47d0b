// The writer thread's side of the database: pragmas, batch transactions with incremental
// rollups, and retention in small steps (each its own short transaction).
#include "writer_db.h"

#include <sys/resource.h>
#include <sys/stat.h>
#include <sys/statvfs.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <limits>
#include <unordered_map>

#include "schema.h"
#include "tonewarden/store/schema.h"
#include "tonewarden/store/spectrum_codec.h"

namespace tonewarden::store::detail {

using base::ErrorCode;
using base::make_error;

namespace {

constexpr int64_t kMinuteMs = 60'000;
constexpr int64_t kHourMs = 3'600'000;
constexpr int64_t kDayMs = 86'400'000;
// The size cap drops raw readings in rounds of this share of their time span, re-measuring
// between rounds: small enough not to overshoot the low-water mark by much, large enough to
// need few rounds.
constexpr int64_t kSizeCapRoundsPerSpan = 64;
constexpr int64_t kSnapshotsPerSizeStep = 100;  // at most per transaction
constexpr int64_t kSnapshotRowBytes = 200;      // a snapshot row besides its codes (estimate)

int64_t floor_to(int64_t t, int64_t step) {
  const int64_t q = t / step;
  return (t % step < 0 ? q - 1 : q) * step;
}

struct Agg {
  int64_t series_id;
  int64_t t_ms;
  double min, max, sum;
  int64_t count;
};

struct KeyHash {
  size_t operator()(const std::pair<int64_t, int64_t>& k) const noexcept {
    return std::hash<int64_t>()(k.first * 1'000'003 ^ k.second);
  }
};

// Folds (series, bucket, value) into a small table; readings arrive mostly in order, so the
// last entry is checked first.
class Aggregator {
 public:
  void add(int64_t series, int64_t bucket, double v, int64_t n, double vmin, double vmax) {
    if (last_ < aggs_.size() && aggs_[last_].series_id == series && aggs_[last_].t_ms == bucket) {
      fold(aggs_[last_], v, n, vmin, vmax);
      return;
    }
    auto [it, inserted] = index_.try_emplace({series, bucket}, aggs_.size());
    if (inserted) aggs_.push_back(Agg{series, bucket, vmin, vmax, 0.0, 0});
    last_ = it->second;
    fold(aggs_[last_], v, n, vmin, vmax);
  }
  const std::vector<Agg>& aggs() const { return aggs_; }

 private:
  static void fold(Agg& a, double sum, int64_t n, double vmin, double vmax) {
    a.min = std::min(a.min, vmin);
    a.max = std::max(a.max, vmax);
    a.sum += sum;
    a.count += n;
  }
  std::vector<Agg> aggs_;
  std::unordered_map<std::pair<int64_t, int64_t>, size_t, KeyHash> index_;
  size_t last_ = 0;
};

std::string dir_of(const std::string& path) {
  const auto slash = path.find_last_of('/');
  if (slash == std::string::npos) return ".";
  return slash == 0 ? "/" : path.substr(0, slash);
}

int64_t file_size(const std::string& path) {
  struct stat st {};
  return ::stat(path.c_str(), &st) == 0 ? static_cast<int64_t>(st.st_size) : 0;
}

// Why the database's storage is full, or "" if it does not look full: the process file-size
// limit (RLIMIT_FSIZE) reached by the database or its WAL, or no free blocks on the device.
std::string storage_full_reason(const std::string& db_path) {
  constexpr int64_t kMargin = 64 << 10;  // a few WAL frames: a refused write stops this short
  rlimit lim{};
  if (::getrlimit(RLIMIT_FSIZE, &lim) == 0 && lim.rlim_cur != RLIM_INFINITY) {
    const auto limit = static_cast<int64_t>(lim.rlim_cur);
    const int64_t largest = std::max(file_size(db_path), file_size(db_path + "-wal"));
    if (largest + std::min(kMargin, limit / 4) >= limit) {
      return "file size limit of " + std::to_string(limit) + " bytes (RLIMIT_FSIZE) reached";
    }
  }
  struct statvfs vfs {};
  if (::statvfs(dir_of(db_path).c_str(), &vfs) == 0 &&
      static_cast<int64_t>(vfs.f_bavail) * static_cast<int64_t>(vfs.f_frsize) < kMargin) {
    return "no space left on the device of " + dir_of(db_path);
  }
  return "";
}

}  // namespace

void Batch::clear() noexcept {
  series.clear();
  run_starts.clear();
  run_stops.clear();
  readings.clear();
  events.clear();
  snapshots.clear();
  annotations.clear();
  last_seq = 0;
  items = 0;
}

base::Result<WriterDb> WriterDb::open(const StoreConfig& config) {
  const std::string dir = dir_of(config.path);
  struct stat st {};
  if (::stat(dir.c_str(), &st) != 0 || !S_ISDIR(st.st_mode)) {
    return base::errno_error(ErrorCode::kIo, "data directory " + dir + " is missing", errno);
  }
  // SQLite needs to create the -wal and -shm files beside the database.
  if (::access(dir.c_str(), W_OK) != 0) {
    return base::errno_error(ErrorCode::kIo, "data directory " + dir + " is not writable", errno);
  }
  if (auto s = check_file_header(config.path); !s.ok()) return std::move(s).error();

  WriterDb w;
  w.config_ = config;
  auto db = Db::open(config.path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE,
                     static_cast<int>(config.busy_timeout.count()));
  if (!db.ok()) return std::move(db).error();
  w.db_ = std::move(db).value();

  // Explicit pragmas: distribution builds differ in their defaults.
  {
    auto st_mode = Stmt::prepare(w.db_, "PRAGMA journal_mode=WAL");
    if (!st_mode.ok()) {
      return make_error(st_mode.error().code, config.path + ": " + st_mode.error().message);
    }
    const int rc = st_mode->step();
    if (rc != SQLITE_ROW) return st_mode->error(rc, "setting journal_mode=WAL on " + config.path);
    if (st_mode->col_text(0) != "wal") {
      return make_error(ErrorCode::kIo, config.path + ": WAL mode refused (got " +
                                            st_mode->col_text(0) + ")");
    }
  }
  std::string pragmas = "PRAGMA synchronous=NORMAL; PRAGMA secure_delete=OFF;"
                        " PRAGMA busy_timeout=" + std::to_string(config.busy_timeout.count()) +
                        "; PRAGMA journal_size_limit=" +
                        std::to_string(config.journal_size_limit_bytes) + ";";
  if (config.max_page_count > 0) {
    pragmas += " PRAGMA max_page_count=" + std::to_string(config.max_page_count) + ";";
  }
  if (auto s = w.db_.exec(pragmas.c_str()); !s.ok()) return std::move(s).error();
  if (auto s = migrate(w.db_, current_schema_version()); !s.ok()) return std::move(s).error();
  if (auto s = w.prepare_all(); !s.ok()) return std::move(s).error();
  return w;
}

namespace {

// The SQL below is built from fixed table names only; every value is a bound parameter.

// Adds one batch's aggregate to a rollup row, creating it if the bucket is new.
std::string rollup_upsert_sql(const char* table) {
  return std::string("INSERT INTO ") + table +
         "(series_id, t_ms, min, max, sum, count) VALUES(?1, ?2, ?3, ?4, ?5, ?6) "
         "ON CONFLICT(series_id, t_ms) DO UPDATE SET min = min(min, excluded.min), "
         "max = max(max, excluded.max), sum = sum + excluded.sum, count = count + excluded.count";
}

// Deletes the oldest ?3 rows of series ?1 below the cutoff ?2 from a (series_id, t_ms) table
// (t_ms is unique per series, so "up to the ?3-th oldest" is exactly ?3 rows).
std::string per_series_prune_sql(const char* table) {
  return std::string("DELETE FROM ") + table +
         " WHERE series_id = ?1 AND t_ms < ?2 AND t_ms <= coalesce((SELECT t_ms FROM " + table +
         " WHERE series_id = ?1 AND t_ms < ?2 ORDER BY t_ms LIMIT 1 OFFSET ?3 - 1), ?2)";
}

// Deletes the oldest ?2 rows older than ?1 from a table keyed by id with a t_ms index.
std::string age_prune_sql(const char* table) {
  return std::string("DELETE FROM ") + table + " WHERE id IN (SELECT id FROM " + table +
         " WHERE t_ms < ?1 ORDER BY t_ms LIMIT ?2)";
}

void bind_agg(Stmt& st, const Agg& a) {
  st.bind(1, a.series_id);
  st.bind(2, a.t_ms);
  st.bind(3, a.min);
  st.bind(4, a.max);
  st.bind(5, a.sum);
  st.bind(6, a.count);
}

}  // namespace

base::Status WriterDb::prepare_all() {
  struct Item {
    Stmt* st;
    std::string sql;
  };
  const Item items[] = {
      {&begin_, "BEGIN IMMEDIATE"},
      {&commit_, "COMMIT"},
      {&rollback_, "ROLLBACK"},
      {&ins_series_,
       "INSERT OR IGNORE INTO series(id, rig, channel, metric, unit) VALUES(?1, ?2, ?3, ?4, ?5)"},
      {&ins_run_, "INSERT INTO runs(id, start_ms, stop_ms, config_hash, version) "
                  "VALUES(?1, ?2, NULL, ?3, ?4)"},
      {&upd_run_, "UPDATE runs SET stop_ms = ?2 WHERE id = ?1"},
      {&ins_reading_,
       "INSERT INTO readings(series_id, t_ms, value) VALUES(?1, ?2, ?3) ON CONFLICT DO NOTHING"},
      {&up_minute_, rollup_upsert_sql("rollup_minute")},
      {&up_hour_, rollup_upsert_sql("rollup_hour")},
      {&ins_event_,
       "INSERT INTO alarm_events(t_ms, rig, channel, rule, severity, state, value, threshold, "
       "message, evidence_path, user, comment) "
       "VALUES(?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12)"},
      {&ins_snapshot_,
       "INSERT INTO snapshots(t_ms, rig, channel, reason, sample_rate_hz, fft_length, bin_hz, "
       "window, scale, unit, bins, floor_db, step_db, codes) "
       "VALUES(?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14)"},
      {&ins_annotation_,
       "INSERT INTO annotations(t_ms, rig, text, author) VALUES(?1, ?2, ?3, ?4)"},
      {&prune_series_[0], per_series_prune_sql("readings")},
      {&prune_series_[1], per_series_prune_sql("rollup_minute")},
      {&prune_series_[2], per_series_prune_sql("rollup_hour")},
      {&prune_age_[0], age_prune_sql("snapshots")},
      {&prune_age_[1], age_prune_sql("alarm_events")},
      {&prune_age_[2], age_prune_sql("annotations")},
      {&prune_snap_count_,
       "DELETE FROM snapshots WHERE id IN (SELECT id FROM (SELECT id, row_number() OVER "
       "(PARTITION BY rig, channel ORDER BY t_ms DESC, id DESC) AS rn FROM snapshots) "
       "WHERE rn > ?1 LIMIT ?2)"},
      {&oldest_raw_, "SELECT t_ms FROM readings WHERE series_id = ?1 ORDER BY t_ms LIMIT 1"},
      {&newest_raw_,
       "SELECT t_ms FROM readings WHERE series_id = ?1 ORDER BY t_ms DESC LIMIT 1"},
      {&series_ids_, "SELECT id FROM series ORDER BY id"},
      {&oldest_snapshot_bins_, "SELECT bins FROM snapshots ORDER BY t_ms, id"},
      {&drop_oldest_snapshots_, "DELETE FROM snapshots WHERE id IN "
                                "(SELECT id FROM snapshots ORDER BY t_ms, id LIMIT ?1)"},
      {&live_bytes_,
       "SELECT ((SELECT page_count FROM pragma_page_count()) - "
       "(SELECT freelist_count FROM pragma_freelist_count())) * "
       "(SELECT page_size FROM pragma_page_size())"},
      {&checkpoint_, "PRAGMA wal_checkpoint(TRUNCATE)"},
  };
  for (const auto& it : items) {
    auto st = Stmt::prepare(db_, it.sql.c_str());
    if (!st.ok()) return std::move(st).error();
    *it.st = std::move(st).value();
  }
  return {};
}

std::vector<SeriesInfo> WriterDb::load_series() {
  std::vector<SeriesInfo> out;
  auto st = Stmt::prepare(db_, "SELECT id, rig, channel, metric, unit FROM series ORDER BY id");
  if (!st.ok()) return out;
  while (st->step() == SQLITE_ROW) {
    out.push_back({st->col_int(0), {st->col_text(1), st->col_text(2), st->col_text(3),
                                    st->col_text(4)}});
  }
  return out;
}

int64_t WriterDb::max_run_id() {
  auto v = db_.query_int("SELECT coalesce(max(id), 0) FROM runs");
  return v.ok() ? *v : 0;
}

base::Result<WriteOutcome> WriterDb::write(const Batch& b, bool* disk_full) {
  *disk_full = false;
  int failed_rc = SQLITE_OK;
  const char* failed_what = "";
  auto check = [&](int rc, const char* what) {
    if (rc == SQLITE_DONE || rc == SQLITE_ROW) return true;
    failed_rc = rc;
    failed_what = what;
    return false;
  };
  auto step_reset = [&](Stmt& st, const char* what) {
    const int rc = st.step();
    st.reset();
    return check(rc, what);
  };

  WriteOutcome out;
  Aggregator minute;
  bool ok = step_reset(begin_, "BEGIN IMMEDIATE");
  for (size_t i = 0; ok && i < b.series.size(); ++i) {
    const auto& s = b.series[i];
    ins_series_.bind(1, s.id);
    ins_series_.bind(2, s.key.rig);
    ins_series_.bind(3, s.key.channel);
    ins_series_.bind(4, s.key.metric);
    ins_series_.bind(5, s.key.unit);
    ok = step_reset(ins_series_, "inserting series");
  }
  for (size_t i = 0; ok && i < b.run_starts.size(); ++i) {
    const auto& r = b.run_starts[i];
    ins_run_.bind(1, r.id);
    ins_run_.bind(2, r.start.unix_ms);
    ins_run_.bind(3, r.config_hash);
    ins_run_.bind(4, r.version);
    ok = step_reset(ins_run_, "inserting run");
  }
  for (size_t i = 0; ok && i < b.readings.size(); ++i) {
    const Reading& r = b.readings[i];
    ins_reading_.bind(1, r.series_id);
    ins_reading_.bind(2, r.t_unix_ms);
    ins_reading_.bind(3, r.value);
    const int rc = ins_reading_.step();
    ins_reading_.reset();
    ok = check(rc, "inserting reading");
    if (!ok) break;
    if (db_.changes() == 1) {
      ++out.readings_written;
      minute.add(r.series_id, floor_to(r.t_unix_ms, kMinuteMs), r.value, 1, r.value, r.value);
    } else {
      ++out.duplicates;  // same series and time already stored: first value wins
    }
  }
  Aggregator hour;
  for (size_t i = 0; ok && i < minute.aggs().size(); ++i) {
    const Agg& a = minute.aggs()[i];
    hour.add(a.series_id, floor_to(a.t_ms, kHourMs), a.sum, a.count, a.min, a.max);
    bind_agg(up_minute_, a);
    ok = step_reset(up_minute_, "updating minute rollup");
  }
  for (size_t i = 0; ok && i < hour.aggs().size(); ++i) {
    const Agg& a = hour.aggs()[i];
    bind_agg(up_hour_, a);
    ok = step_reset(up_hour_, "updating hour rollup");
  }
  for (size_t i = 0; ok && i < b.events.size(); ++i) {
    const AlarmEvent& e = b.events[i];
    ins_event_.bind(1, e.t.unix_ms);
    ins_event_.bind(2, e.rig);
    ins_event_.bind(3, e.channel);
    ins_event_.bind(4, e.rule);
    ins_event_.bind(5, to_string(e.severity));
    ins_event_.bind(6, to_string(e.state));
    ins_event_.bind(7, e.value);
    ins_event_.bind(8, e.threshold);
    ins_event_.bind(9, e.message);
    ins_event_.bind(10, e.evidence_path);
    ins_event_.bind(11, e.user);
    ins_event_.bind(12, e.comment);
    ok = step_reset(ins_event_, "inserting alarm event");
  }
  for (size_t i = 0; ok && i < b.snapshots.size(); ++i) {
    const Snapshot& s = b.snapshots[i];
    auto enc = encode_spectrum(s.magnitude);  // validated at append, cannot fail here
    ins_snapshot_.bind(1, s.t.unix_ms);
    ins_snapshot_.bind(2, s.rig);
    ins_snapshot_.bind(3, s.channel);
    ins_snapshot_.bind(4, s.reason);
    ins_snapshot_.bind(5, s.sample_rate_hz);
    ins_snapshot_.bind(6, s.fft_length);
    ins_snapshot_.bind(7, s.bin_hz);
    ins_snapshot_.bind(8, s.window);
    ins_snapshot_.bind(9, s.scale);
    ins_snapshot_.bind(10, s.unit);
    ins_snapshot_.bind(11, static_cast<int64_t>(s.magnitude.size()));
    ins_snapshot_.bind(12, enc.ok() ? enc->floor_db : 0.0);
    ins_snapshot_.bind(13, kCodeStepDb);
    ins_snapshot_.bind_blob(14, enc.ok() ? enc->bytes : std::string());
    ok = step_reset(ins_snapshot_, "inserting snapshot");
  }
  for (size_t i = 0; ok && i < b.annotations.size(); ++i) {
    const Annotation& a = b.annotations[i];
    ins_annotation_.bind(1, a.t.unix_ms);
    ins_annotation_.bind(2, a.rig);
    ins_annotation_.bind(3, a.text);
    ins_annotation_.bind(4, a.author);
    ok = step_reset(ins_annotation_, "inserting annotation");
  }
  for (size_t i = 0; ok && i < b.run_stops.size(); ++i) {
    upd_run_.bind(1, b.run_stops[i].first);
    upd_run_.bind(2, b.run_stops[i].second);
    ok = step_reset(upd_run_, "closing run");
  }
  if (ok) ok = step_reset(commit_, "COMMIT");
  if (!ok) {
    base::Error e = sql_error(db_.get(), failed_rc, std::string("writing batch to ") +
                                                        config_.path + ": " + failed_what);
    *disk_full = (failed_rc & 0xff) == SQLITE_FULL;
    if ((failed_rc & 0xff) == SQLITE_IOERR) {
      // A write refused for lack of room (EFBIG, some ENOSPC paths) reaches us as a bare
      // I/O error without its errno: look at the storage to tell full from broken.
      const std::string why = storage_full_reason(config_.path);
      if (!why.empty()) {
        *disk_full = true;
        e.message += " (storage full: " + why + ")";
      }
    }
    // SQLite may already have rolled back (e.g. on SQLITE_FULL); a second rollback is harmless.
    if (!sqlite3_get_autocommit(db_.get())) {
      rollback_.step();
      rollback_.reset();
    }
    return e;
  }
  return out;
}

base::Result<int64_t> WriterDb::run_delete(Stmt& st, const char* what) {
  const int rc = st.step();
  st.reset();
  if (rc != SQLITE_DONE) return sql_error(db_.get(), rc, std::string("pruning ") + what);
  return db_.changes();
}

void WriterDb::load_series_ids(std::vector<int64_t>* out) {
  out->clear();
  while (series_ids_.step() == SQLITE_ROW) out->push_back(series_ids_.col_int(0));
  series_ids_.reset();
}

int64_t WriterDb::live_bytes() {
  int64_t live = 0;
  if (live_bytes_.step() == SQLITE_ROW) live = live_bytes_.col_int(0);
  live_bytes_.reset();
  return live;
}

base::Result<int64_t> WriterDb::size_step(bool* more, bool* unmet) {
  const int64_t cap = config_.retention.max_db_bytes;
  const int64_t limit = config_.prune_batch_rows;
  *more = true;
  *unmet = false;
  if (size_cutoff_ == kNoCutoff) {
    const int64_t live = live_bytes();
    const int64_t excess = live - static_cast<int64_t>(kSizeCapLowWater * static_cast<double>(cap));
    if (cap <= 0 || excess <= 0) {
      *more = false;
      return int64_t{0};
    }
    load_series_ids(&size_series_);
    int64_t oldest = std::numeric_limits<int64_t>::max();
    int64_t newest = std::numeric_limits<int64_t>::min();
    for (int64_t id : size_series_) {
      oldest_raw_.bind(1, id);
      if (oldest_raw_.step() == SQLITE_ROW) oldest = std::min(oldest, oldest_raw_.col_int(0));
      oldest_raw_.reset();
      newest_raw_.bind(1, id);
      if (newest_raw_.step() == SQLITE_ROW) newest = std::max(newest, newest_raw_.col_int(0));
      newest_raw_.reset();
    }
    if (oldest > newest) return drop_snapshots_for_size(excess, more, unmet);
    // This round's cutoff: the share of the raw time span that the excess is of all pages in
    // use. Raw rows are only part of those pages, so a round frees at most the excess (rounds
    // repeat until under the low-water mark); at least 1/64 of the span so rounds stay few.
    const double span = static_cast<double>(newest - oldest);
    const double share = std::max(static_cast<double>(excess) / static_cast<double>(live),
                                  1.0 / kSizeCapRoundsPerSpan);
    size_cutoff_ = oldest + std::max<int64_t>(1, static_cast<int64_t>(share * span));
    size_cursor_ = 0;
  }
  // Apply the cutoff to every series before measuring again, so that the readings kept are
  // exactly those at or after one time. Up to prune_batch_rows rows per transaction.
  if (auto s = begin_.run("BEGIN IMMEDIATE for the size cap"); !s.ok()) return std::move(s).error();
  int64_t deleted = 0;
  Stmt& st = prune_series_[kReadings];
  while (size_cursor_ < size_series_.size() && deleted < limit) {
    st.bind(1, size_series_[size_cursor_]);
    st.bind(2, size_cutoff_);
    st.bind(3, limit - deleted);
    auto n = run_delete(st, "raw readings for the size cap");
    if (!n.ok()) {
      (void)rollback_.run("ROLLBACK");
      size_cutoff_ = kNoCutoff;
      return n;
    }
    deleted += *n;
    if (deleted < limit) ++size_cursor_;  // this series has nothing left below the cutoff
  }
  if (auto s = commit_.run("COMMIT of the size cap"); !s.ok()) {
    if (!sqlite3_get_autocommit(db_.get())) (void)rollback_.run("ROLLBACK");
    size_cutoff_ = kNoCutoff;
    return std::move(s).error();
  }
  if (size_cursor_ >= size_series_.size()) size_cutoff_ = kNoCutoff;  // round done: re-measure
  return deleted;
}

base::Result<int64_t> WriterDb::drop_snapshots_for_size(int64_t excess, bool* more,
                                                        bool* unmet) {
  // Count the oldest snapshots whose codes add up to the excess (2 bytes per bin plus the
  // row's other columns), so that a step does not free far more than needed.
  int64_t n = 0, bytes = 0;
  const int64_t most = std::min<int64_t>(config_.prune_batch_rows, kSnapshotsPerSizeStep);
  while (n < most && bytes < excess && oldest_snapshot_bins_.step() == SQLITE_ROW) {
    bytes += 2 * oldest_snapshot_bins_.col_int(0) + kSnapshotRowBytes;
    ++n;
  }
  oldest_snapshot_bins_.reset();
  if (n == 0) {
    *more = false;
    *unmet = true;
    return int64_t{0};
  }
  drop_oldest_snapshots_.bind(1, n);
  return run_delete(drop_oldest_snapshots_, "snapshots for the size cap");
}

base::Result<int64_t> WriterDb::prune_step(int64_t now_ms, bool* more) {
  const RetentionConfig& r = config_.retention;
  const int64_t limit = config_.prune_batch_rows;
  // Tasks in order: the per-series tables (raw, minute, hour), the tables pruned by age
  // (snapshots, alarm events, annotations), the per-channel snapshot count.
  const int series_days[kNumSeriesTables] = {r.raw_days, r.minute_rollup_days,
                                             r.hour_rollup_days};
  const int age_days[kNumAgeTables] = {r.snapshot_days, r.event_days, r.event_days};
  const char* const age_what[kNumAgeTables] = {"old snapshots", "old alarm events",
                                               "old annotations"};
  constexpr int kFirstAge = kNumSeriesTables, kSnapCount = kFirstAge + kNumAgeTables,
                kDone = kSnapCount + 1;
  *more = true;
  while (task_ < kDone) {
    if (task_ < kFirstAge) {
      if (series_cursor_ == 0) load_series_ids(&series_);
      Stmt& st = prune_series_[task_];
      while (series_cursor_ < series_.size()) {
        st.bind(1, series_[series_cursor_]);
        st.bind(2, now_ms - series_days[task_] * kDayMs);
        st.bind(3, limit);
        auto n = run_delete(st, "rows past retention");
        if (!n.ok()) return n;
        if (*n < limit) ++series_cursor_;  // this series is done
        if (*n > 0) return n;
      }
      series_cursor_ = 0;
      ++task_;
      continue;
    }
    base::Result<int64_t> n = int64_t{0};
    if (task_ < kSnapCount) {
      Stmt& st = prune_age_[task_ - kFirstAge];
      st.bind(1, now_ms - age_days[task_ - kFirstAge] * kDayMs);
      st.bind(2, limit);
      n = run_delete(st, age_what[task_ - kFirstAge]);
    } else {
      prune_snap_count_.bind(1, r.snapshots_per_channel);
      prune_snap_count_.bind(2, limit);
      n = run_delete(prune_snap_count_, "snapshots over the per-channel count");
    }
    if (!n.ok()) return n;
    if (*n < limit) ++task_;
    if (*n > 0) return n;
  }
  task_ = 0;
  *more = false;
  return int64_t{0};
}

void WriterDb::checkpoint() {
  // Busy readers may keep part of the WAL; that is fine, the next checkpoint catches up.
  checkpoint_.step();
  checkpoint_.reset();
}

}  // namespace tonewarden::store::detail
