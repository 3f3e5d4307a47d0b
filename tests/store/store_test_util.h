// Shared by the store tests: temporary directories, the sqlite3 shell as an independent
// reader, and small helpers to open a writer with test-friendly settings.
#pragma once

#include <gtest/gtest.h>
#include <stdlib.h>

#include <filesystem>
#include <string>

#include "support/subprocess.h"
#include "tonewarden/base/time.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store::testing {

// A fresh directory under /tmp, removed with everything in it at scope exit.
class TempDir {
 public:
  TempDir() {
    char tmpl[] = "/tmp/tw-store-XXXXXX";
    const char* p = mkdtemp(tmpl);
    path_ = p != nullptr ? p : "";
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;
  const std::string& path() const { return path_; }
  std::string file(const std::string& name) const { return path_ + "/" + name; }

 private:
  std::string path_;
};

// Runs SQL through Debian's sqlite3 shell (an independent reader of our files) and returns its
// stdout, trimmed of the final newline.
inline std::string sqlite_shell(const std::string& db, const std::string& sql) {
  auto r = tonewarden::testing::run_process({"/usr/bin/sqlite3", db, sql});
  EXPECT_EQ(r.exit_code, 0) << "sqlite3 " << db << " '" << sql << "': " << r.stderr_text;
  std::string out = r.stdout_text;
  while (!out.empty() && (out.back() == '\n' || out.back() == '\r')) out.pop_back();
  return out;
}

// Commit often and run retention often, so tests never wait long.
inline StoreConfig fast_config(const std::string& path) {
  StoreConfig c;
  c.path = path;
  c.commit_interval = std::chrono::milliseconds(20);
  c.prune_interval = std::chrono::milliseconds(20);
  c.checkpoint_interval = std::chrono::milliseconds(500);
  c.prune_batch_rows = 100;
  return c;
}

// A whole hour three days ago: recent enough that the default retention (14 days raw) keeps
// everything a test writes around it.
inline const int64_t kT0 =
    (tonewarden::base::wall_now().unix_ms / 3'600'000 - 72) * 3'600'000;

}  // namespace tonewarden::store::testing
