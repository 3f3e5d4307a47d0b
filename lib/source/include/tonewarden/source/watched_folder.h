// WatchedFolder: finds new recordings in a folder, the way a rig's recorder drops them, and
// remembers which are finished. A file is ready once its size and mtime are the same on two
// polls in a row (the recorder has stopped writing). Ready files are taken oldest first (by
// mtime, then name). Finished names are appended to a small record file and fsync'd, so a
// restart does not redo them; skipped files are remembered in memory only, so a restart
// reports them again.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <set>
#include <string>

#include "tonewarden/base/result.h"

namespace tonewarden::source {

struct WatchedFolderConfig {
  std::string dir;                // the folder; only its direct entries are considered
  std::string pattern = "*.wav";  // shell glob on the file name (fnmatch, no '/')
  std::string record_path;        // finished-file record; empty = keep none
};

// Not thread-safe: owned by the capture thread. Allocates as folders change (not a hot path).
class WatchedFolder {
 public:
  // kNotFound if dir is missing, kInvalidArgument for a bad pattern, kIo/kCorruptData if the
  // record exists but cannot be read.
  static base::Result<WatchedFolder> create(const WatchedFolderConfig& config);

  // Lists the folder once and updates what it knows of each matching regular file.
  base::Status poll();
  // The oldest ready file that is neither finished nor skipped, as a full path.
  std::optional<std::string> next_ready() const;
  // Records `path` as finished: appended to the record and fsync'd before returning.
  base::Status mark_done(const std::string& path);
  // Leaves `path` out from now on (this run only).
  void mark_skipped(const std::string& path);

  bool is_done(const std::string& name) const { return done_.count(name) != 0; }
  size_t num_done() const noexcept { return done_.size(); }
  size_t num_skipped() const noexcept { return skipped_.size(); }
  const WatchedFolderConfig& config() const noexcept { return config_; }

 private:
  struct Entry {
    uint64_t size = 0;
    int64_t mtime_ns = 0;
    int stable_polls = 0;  // consecutive polls that saw the same size and mtime
  };
  explicit WatchedFolder(const WatchedFolderConfig& config) : config_(config) {}
  std::string name_of(const std::string& path) const;

  WatchedFolderConfig config_;
  std::map<std::string, Entry> entries_;  // by file name
  std::set<std::string> done_;
  std::set<std::string> skipped_;
};

}  // namespace tonewarden::source
