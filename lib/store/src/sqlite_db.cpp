// RAII connection and statement wrappers; SQLite error codes mapped to our error classes.
#include "sqlite_db.h"

#include <cerrno>
#include <cstring>

namespace tonewarden::store::detail {

using base::ErrorCode;

base::Error sql_error(sqlite3* db, int rc, const std::string& what) {
  ErrorCode code = ErrorCode::kInternal;
  switch (rc & 0xff) {
    case SQLITE_FULL:
    case SQLITE_BUSY:
    case SQLITE_LOCKED: code = ErrorCode::kUnavailable; break;
    case SQLITE_NOTADB:
    case SQLITE_CORRUPT: code = ErrorCode::kCorruptData; break;
    case SQLITE_CANTOPEN:
    case SQLITE_IOERR:
    case SQLITE_READONLY:
    case SQLITE_PERM: code = ErrorCode::kIo; break;
    default: break;
  }
  std::string msg = what + ": " + sqlite3_errstr(rc);
  if (db != nullptr) {
    const char* detail = sqlite3_errmsg(db);
    if (detail != nullptr && std::strcmp(detail, sqlite3_errstr(rc)) != 0) {
      msg += std::string(" (") + detail + ")";
    }
    const int sys = sqlite3_system_errno(db);
    if (sys != 0 && ((rc & 0xff) == SQLITE_CANTOPEN || (rc & 0xff) == SQLITE_IOERR)) {
      msg += std::string(": ") + std::strerror(sys);
    }
  }
  return base::make_error(code, msg);
}

Db::~Db() {
  if (h_ != nullptr) sqlite3_close_v2(h_);
}

Db& Db::operator=(Db&& o) noexcept {
  if (this != &o) {
    if (h_ != nullptr) sqlite3_close_v2(h_);
    h_ = o.h_;
    path_ = std::move(o.path_);
    o.h_ = nullptr;
  }
  return *this;
}

base::Result<Db> Db::open(const std::string& path, int flags, int busy_timeout_ms) {
  Db db;
  db.path_ = path;
  // NOMUTEX: each connection is used by one thread only.
  const int rc = sqlite3_open_v2(path.c_str(), &db.h_, flags | SQLITE_OPEN_NOMUTEX, nullptr);
  if (rc != SQLITE_OK) return sql_error(db.h_, rc, "opening " + path);
  sqlite3_extended_result_codes(db.h_, 1);
  sqlite3_busy_timeout(db.h_, busy_timeout_ms);
  return db;
}

base::Status Db::exec(const char* sql) {
  char* err = nullptr;
  const int rc = sqlite3_exec(h_, sql, nullptr, nullptr, &err);
  sqlite3_free(err);
  if (rc != SQLITE_OK) return sql_error(h_, rc, std::string("executing ") + sql);
  return {};
}

base::Result<int64_t> Db::query_int(const char* sql) {
  auto st = Stmt::prepare(*this, sql);
  if (!st.ok()) return std::move(st).error();
  const int rc = st->step();
  if (rc == SQLITE_ROW) return st->col_int(0);
  if (rc == SQLITE_DONE) return int64_t{0};
  return st->error(rc, sql);
}

Stmt::~Stmt() {
  if (s_ != nullptr) sqlite3_finalize(s_);
}

Stmt& Stmt::operator=(Stmt&& o) noexcept {
  if (this != &o) {
    if (s_ != nullptr) sqlite3_finalize(s_);
    s_ = o.s_;
    db_ = o.db_;
    o.s_ = nullptr;
  }
  return *this;
}

base::Result<Stmt> Stmt::prepare(const Db& db, const char* sql) {
  Stmt st;
  st.db_ = db.get();
  const int rc = sqlite3_prepare_v3(db.get(), sql, -1, SQLITE_PREPARE_PERSISTENT, &st.s_, nullptr);
  if (rc != SQLITE_OK) return sql_error(db.get(), rc, std::string("preparing ") + sql);
  return st;
}

base::Status Stmt::run(const char* what) {
  const int rc = step();
  if (rc != SQLITE_DONE && rc != SQLITE_ROW) {
    base::Error e = error(rc, what);
    reset();
    return e;
  }
  reset();
  return {};
}

base::Error Stmt::error(int rc, const std::string& what) const { return sql_error(db_, rc, what); }

std::string Stmt::col_text(int i) const {
  const auto* p = reinterpret_cast<const char*>(sqlite3_column_text(s_, i));
  const int n = sqlite3_column_bytes(s_, i);
  return p == nullptr ? std::string() : std::string(p, static_cast<size_t>(n));
}

std::string Stmt::col_blob(int i) const {
  const auto* p = static_cast<const char*>(sqlite3_column_blob(s_, i));
  const int n = sqlite3_column_bytes(s_, i);
  return p == nullptr ? std::string() : std::string(p, static_cast<size_t>(n));
}

}  // namespace tonewarden::store::detail
