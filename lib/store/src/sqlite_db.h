// Thin RAII wrappers over sqlite3 connections and prepared statements (private to store).
// Every SQL with a value in it goes through a prepared statement with bound parameters.
#pragma once

#include <sqlite3.h>

#include <cstdint>
#include <string>
#include <string_view>

#include "tonewarden/base/result.h"

namespace tonewarden::store::detail {

// Maps an SQLite result code to our error classes: FULL/BUSY/LOCKED -> kUnavailable,
// NOTADB/CORRUPT -> kCorruptData, CANTOPEN/IOERR/READONLY/PERM -> kIo, else kInternal.
base::Error sql_error(sqlite3* db, int rc, const std::string& what);

class Db {
 public:
  Db() = default;
  ~Db();
  Db(Db&& o) noexcept : h_(o.h_), path_(std::move(o.path_)) { o.h_ = nullptr; }
  Db& operator=(Db&& o) noexcept;
  Db(const Db&) = delete;
  Db& operator=(const Db&) = delete;

  // flags: SQLITE_OPEN_READONLY or SQLITE_OPEN_READWRITE|SQLITE_OPEN_CREATE.
  static base::Result<Db> open(const std::string& path, int flags, int busy_timeout_ms);

  base::Status exec(const char* sql);  // no parameters: DDL and pragmas only
  base::Result<int64_t> query_int(const char* sql);  // first column of the first row
  sqlite3* get() const noexcept { return h_; }
  const std::string& path() const noexcept { return path_; }
  int64_t changes() const noexcept { return sqlite3_changes64(h_); }
  int64_t last_insert_rowid() const noexcept { return sqlite3_last_insert_rowid(h_); }

 private:
  sqlite3* h_ = nullptr;
  std::string path_;
};

class Stmt {
 public:
  Stmt() = default;
  ~Stmt();
  Stmt(Stmt&& o) noexcept : s_(o.s_), db_(o.db_) { o.s_ = nullptr; }
  Stmt& operator=(Stmt&& o) noexcept;
  Stmt(const Stmt&) = delete;
  Stmt& operator=(const Stmt&) = delete;

  static base::Result<Stmt> prepare(const Db& db, const char* sql);

  // Parameters are 1-based, as in SQLite.
  void bind(int i, int64_t v) { sqlite3_bind_int64(s_, i, v); }
  void bind(int i, int v) { sqlite3_bind_int64(s_, i, v); }
  void bind(int i, double v) { sqlite3_bind_double(s_, i, v); }
  void bind(int i, std::string_view v) {
    sqlite3_bind_text(s_, i, v.data(), static_cast<int>(v.size()), SQLITE_TRANSIENT);
  }
  void bind(int i, const char* v) { bind(i, std::string_view(v)); }
  void bind(int i, const std::string& v) { bind(i, std::string_view(v)); }
  void bind_blob(int i, const std::string& v) {
    sqlite3_bind_blob(s_, i, v.data(), static_cast<int>(v.size()), SQLITE_TRANSIENT);
  }
  void bind_null(int i) { sqlite3_bind_null(s_, i); }

  // SQLITE_ROW, SQLITE_DONE, or an error code (then error() describes it).
  int step() { return sqlite3_step(s_); }
  // Runs to completion (for statements without rows); resets and clears bindings.
  base::Status run(const char* what);
  void reset() { sqlite3_reset(s_); sqlite3_clear_bindings(s_); }
  base::Error error(int rc, const std::string& what) const;

  int64_t col_int(int i) const { return sqlite3_column_int64(s_, i); }
  double col_double(int i) const { return sqlite3_column_double(s_, i); }
  bool col_is_null(int i) const { return sqlite3_column_type(s_, i) == SQLITE_NULL; }
  std::string col_text(int i) const;
  std::string col_blob(int i) const;

 private:
  sqlite3_stmt* s_ = nullptr;
  sqlite3* db_ = nullptr;
};

}  // namespace tonewarden::store::detail
