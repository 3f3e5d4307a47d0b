// Schema migrations (PRAGMA user_version) and the checks that refuse foreign files.
// Each step is one transaction; a crash mid-migration leaves the previous version intact.
// Never edit a released step: add a new one and document it in SCHEMA.md.
#include "schema.h"

#include <sys/stat.h>

#include <cstdio>
#include <cstring>
#include <fstream>

#include "tonewarden/store/schema.h"

namespace tonewarden::store {
namespace {

// Step i takes the schema from version i to i+1.
const char* const kSteps[] = {
    // 0 -> 1: the series dictionary, raw readings and rollups.
    R"sql(
CREATE TABLE series (
  id      INTEGER PRIMARY KEY,
  rig     TEXT NOT NULL,
  channel TEXT NOT NULL,
  metric  TEXT NOT NULL,
  unit    TEXT NOT NULL,
  UNIQUE (rig, channel, metric, unit));
CREATE TABLE readings (
  series_id INTEGER NOT NULL,
  t_ms      INTEGER NOT NULL,
  value     REAL NOT NULL,
  PRIMARY KEY (series_id, t_ms)) WITHOUT ROWID;
CREATE TABLE rollup_minute (
  series_id INTEGER NOT NULL,
  t_ms      INTEGER NOT NULL,
  min       REAL NOT NULL,
  max       REAL NOT NULL,
  sum       REAL NOT NULL,
  count     INTEGER NOT NULL,
  PRIMARY KEY (series_id, t_ms)) WITHOUT ROWID;
CREATE TABLE rollup_hour (
  series_id INTEGER NOT NULL,
  t_ms      INTEGER NOT NULL,
  min       REAL NOT NULL,
  max       REAL NOT NULL,
  sum       REAL NOT NULL,
  count     INTEGER NOT NULL,
  PRIMARY KEY (series_id, t_ms)) WITHOUT ROWID;
)sql",
    // 1 -> 2: snapshots, alarm events, runs, annotations.
    R"sql(
CREATE TABLE snapshots (
  id             INTEGER PRIMARY KEY,
  t_ms           INTEGER NOT NULL,
  rig            TEXT NOT NULL,
  channel        TEXT NOT NULL,
  reason         TEXT NOT NULL,
  sample_rate_hz REAL NOT NULL,
  fft_length     INTEGER NOT NULL,
  bin_hz         REAL NOT NULL,
  window         TEXT NOT NULL,
  scale          TEXT NOT NULL,
  unit           TEXT NOT NULL,
  bins           INTEGER NOT NULL,
  floor_db       REAL NOT NULL,
  step_db        REAL NOT NULL,
  codes          BLOB NOT NULL);
CREATE INDEX snapshots_t ON snapshots (t_ms);
CREATE TABLE alarm_events (
  id            INTEGER PRIMARY KEY,
  t_ms          INTEGER NOT NULL,
  rig           TEXT NOT NULL,
  channel       TEXT NOT NULL,
  rule          TEXT NOT NULL,
  severity      TEXT NOT NULL,
  state         TEXT NOT NULL CHECK (state IN ('normal', 'unacknowledged', 'acknowledged',
                                               'returned-unacknowledged', 'shelved')),
  value         REAL NOT NULL,
  threshold     REAL NOT NULL,
  message       TEXT NOT NULL,
  evidence_path TEXT NOT NULL,
  user          TEXT NOT NULL,
  comment       TEXT NOT NULL);
CREATE INDEX alarm_events_t ON alarm_events (t_ms);
CREATE TABLE runs (
  id          INTEGER PRIMARY KEY,
  start_ms    INTEGER NOT NULL,
  stop_ms     INTEGER,
  config_hash TEXT NOT NULL,
  version     TEXT NOT NULL);
CREATE TABLE annotations (
  id     INTEGER PRIMARY KEY,
  t_ms   INTEGER NOT NULL,
  rig    TEXT NOT NULL,
  text   TEXT NOT NULL,
  author TEXT NOT NULL);
CREATE INDEX annotations_t ON annotations (t_ms);
)sql",
    // 2 -> 3: indexes for event filters and per-channel snapshot lookups; views for notebooks.
    R"sql(
CREATE INDEX alarm_events_rule_t ON alarm_events (rule, t_ms);
CREATE INDEX alarm_events_state_t ON alarm_events (state, t_ms);
CREATE INDEX snapshots_rig_channel_t ON snapshots (rig, channel, t_ms);
CREATE VIEW readings_named AS
  SELECT s.rig, s.channel, s.metric, s.unit, r.t_ms, r.value
  FROM readings r JOIN series s ON s.id = r.series_id;
CREATE VIEW trend_minute AS
  SELECT series_id, t_ms, min, max, sum / count AS mean, count FROM rollup_minute;
CREATE VIEW trend_hour AS
  SELECT series_id, t_ms, min, max, sum / count AS mean, count FROM rollup_hour;
)sql",
};
constexpr int kCurrentVersion = static_cast<int>(sizeof kSteps / sizeof kSteps[0]);

}  // namespace

int current_schema_version() noexcept { return kCurrentVersion; }

namespace detail {

using base::ErrorCode;
using base::make_error;

base::Status check_file_header(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) return {};  // absent: will be created
  if (!S_ISREG(st.st_mode)) {
    return make_error(ErrorCode::kIo, path + " is not a regular file");
  }
  if (st.st_size == 0) return {};
  std::ifstream in(path, std::ios::binary);
  char header[16] = {};
  in.read(header, sizeof header);
  if (!in || std::memcmp(header, "SQLite format 3", 16) != 0) {
    return make_error(ErrorCode::kCorruptData,
                      path + " is not a tonewarden database (not an SQLite file)");
  }
  return {};
}

base::Result<int> check_identity(Db& db) {
  auto app = db.query_int("PRAGMA application_id");
  if (!app.ok()) {
    return make_error(app.error().code, db.path() + " cannot be read: " + app.error().message);
  }
  auto ver = db.query_int("PRAGMA user_version");
  if (!ver.ok()) return std::move(ver).error();
  auto tables = db.query_int("SELECT count(*) FROM sqlite_schema");
  if (!tables.ok()) return std::move(tables).error();
  const bool empty = *app == 0 && *ver == 0 && *tables == 0;
  if (!empty && *app != kApplicationId) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "0x%08llx", static_cast<unsigned long long>(*app));
    return make_error(ErrorCode::kCorruptData,
                      db.path() + " is an SQLite database of another application (application_id " +
                          buf + ")");
  }
  if (*ver > kCurrentVersion) {
    return make_error(ErrorCode::kUnavailable,
                      db.path() + " has schema version " + std::to_string(*ver) +
                          ", newer than this build supports (" + std::to_string(kCurrentVersion) +
                          ")");
  }
  return static_cast<int>(*ver);
}

base::Status migrate(Db& db, int target) {
  auto found = check_identity(db);
  if (!found.ok()) return std::move(found).error();
  for (int v = *found; v < target; ++v) {
    if (auto s = db.exec("BEGIN IMMEDIATE"); !s.ok()) return s;
    std::string sql = kSteps[v];
    if (v == 0) sql += "PRAGMA application_id = " + std::to_string(kApplicationId) + ";";
    sql += "PRAGMA user_version = " + std::to_string(v + 1) + ";";
    if (auto s = db.exec(sql.c_str()); !s.ok()) {
      (void)db.exec("ROLLBACK");
      return make_error(s.error().code, "migrating " + db.path() + " to schema version " +
                                            std::to_string(v + 1) + ": " + s.error().message);
    }
    if (auto s = db.exec("COMMIT"); !s.ok()) {
      (void)db.exec("ROLLBACK");
      return s;
    }
  }
  return {};
}

}  // namespace detail

base::Status create_database_at_version(const std::string& path, int version) {
  if (version < 0 || version > kCurrentVersion) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "schema version " + std::to_string(version) + " outside 0.." +
                                std::to_string(kCurrentVersion));
  }
  struct stat st {};
  if (::stat(path.c_str(), &st) == 0) {
    return base::make_error(base::ErrorCode::kInvalidArgument, path + " already exists");
  }
  auto db = detail::Db::open(path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE, 5000);
  if (!db.ok()) return std::move(db).error();
  if (auto s = db->exec("PRAGMA journal_mode=WAL"); !s.ok()) return s;
  return detail::migrate(*db, version);
}

}  // namespace tonewarden::store
