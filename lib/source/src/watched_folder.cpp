// WatchedFolder: directory polling with opendir/fstatat, readiness by stable size, and an
// append-only record of finished names (one per line, fsync'd after each append).
#include "tonewarden/source/watched_folder.h"

#include <dirent.h>
#include <fcntl.h>
#include <fnmatch.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <fstream>
#include <tuple>
#include <vector>

namespace tonewarden::source {
namespace {

constexpr const char* kRecordHeader = "# tonewarden: finished recordings, one file name per line";

}  // namespace

base::Result<WatchedFolder> WatchedFolder::create(const WatchedFolderConfig& config) {
  const std::string ctx = "watched folder " + config.dir;
  if (config.pattern.empty() || config.pattern.find('/') != std::string::npos) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            ctx + ": pattern \"" + config.pattern +
                                "\" must be a non-empty file-name glob without '/'");
  }
  struct stat st {};
  if (::stat(config.dir.c_str(), &st) != 0) {
    const int err = errno;
    return base::errno_error(err == ENOENT ? base::ErrorCode::kNotFound : base::ErrorCode::kIo,
                             ctx, err);
  }
  if (!S_ISDIR(st.st_mode)) {
    return base::make_error(base::ErrorCode::kInvalidArgument, ctx + ": not a directory");
  }
  WatchedFolder folder(config);
  if (!config.record_path.empty()) {
    std::ifstream in(config.record_path);
    if (in) {
      std::string line;
      while (std::getline(in, line)) {
        if (line.empty() || line[0] == '#') continue;
        folder.done_.insert(line);
      }
      if (in.bad()) {
        return base::make_error(base::ErrorCode::kIo,
                                ctx + ": cannot read record " + config.record_path);
      }
    } else if (::access(config.record_path.c_str(), F_OK) == 0) {
      return base::errno_error(base::ErrorCode::kIo, ctx + ": cannot open record " +
                                                         config.record_path, errno);
    }
  }
  return folder;
}

std::string WatchedFolder::name_of(const std::string& path) const {
  const size_t slash = path.find_last_of('/');
  return slash == std::string::npos ? path : path.substr(slash + 1);
}

base::Status WatchedFolder::poll() {
  DIR* d = ::opendir(config_.dir.c_str());
  if (d == nullptr) return base::errno_error(base::ErrorCode::kIo, "watched folder " + config_.dir, errno);
  std::map<std::string, Entry> seen;
  while (dirent* e = ::readdir(d)) {
    const std::string name = e->d_name;
    if (name == "." || name == "..") continue;
    if (::fnmatch(config_.pattern.c_str(), name.c_str(), FNM_PERIOD) != 0) continue;
    struct stat st {};
    // No symlink following: only regular files that live in this folder.
    if (::fstatat(::dirfd(d), name.c_str(), &st, AT_SYMLINK_NOFOLLOW) != 0) continue;
    if (!S_ISREG(st.st_mode)) continue;
    Entry now;
    now.size = static_cast<uint64_t>(st.st_size);
    now.mtime_ns = static_cast<int64_t>(st.st_mtim.tv_sec) * 1'000'000'000 + st.st_mtim.tv_nsec;
    auto it = entries_.find(name);
    if (it != entries_.end() && it->second.size == now.size &&
        it->second.mtime_ns == now.mtime_ns) {
      now.stable_polls = it->second.stable_polls + 1;
    }
    seen.emplace(name, now);
  }
  ::closedir(d);
  entries_ = std::move(seen);  // vanished files are forgotten
  return base::Status::success();
}

std::optional<std::string> WatchedFolder::next_ready() const {
  const std::string* best = nullptr;
  const Entry* best_entry = nullptr;
  for (const auto& [name, e] : entries_) {
    if (e.stable_polls < 1 || done_.count(name) || skipped_.count(name)) continue;
    if (best == nullptr ||
        std::tie(e.mtime_ns, name) < std::tie(best_entry->mtime_ns, *best)) {
      best = &name;
      best_entry = &e;
    }
  }
  if (best == nullptr) return std::nullopt;
  return config_.dir + "/" + *best;
}

base::Status WatchedFolder::mark_done(const std::string& path) {
  const std::string name = name_of(path);
  done_.insert(name);
  if (config_.record_path.empty()) return base::Status::success();
  if (name.find('\n') != std::string::npos) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "watched folder " + config_.dir +
                                ": a file name with a newline cannot be recorded as finished");
  }
  const std::string ctx = "watched folder " + config_.dir + ": record " + config_.record_path;
  const int fd = ::open(config_.record_path.c_str(), O_WRONLY | O_APPEND | O_CREAT | O_CLOEXEC, 0644);
  if (fd < 0) return base::errno_error(base::ErrorCode::kIo, ctx, errno);
  std::string text;
  struct stat st {};
  if (::fstat(fd, &st) == 0 && st.st_size == 0) text = std::string(kRecordHeader) + "\n";
  text += name + "\n";
  size_t off = 0;
  while (off < text.size()) {
    const ssize_t n = ::write(fd, text.data() + off, text.size() - off);
    if (n < 0) {
      if (errno == EINTR) continue;
      const int err = errno;
      ::close(fd);
      return base::errno_error(base::ErrorCode::kIo, ctx, err);
    }
    off += static_cast<size_t>(n);
  }
  // The record must survive a power cut, or a restart would redo the file.
  if (::fsync(fd) != 0) {
    const int err = errno;
    ::close(fd);
    return base::errno_error(base::ErrorCode::kIo, ctx + ": fsync", err);
  }
  if (::close(fd) != 0) return base::errno_error(base::ErrorCode::kIo, ctx + ": close", errno);
  return base::Status::success();
}

void WatchedFolder::mark_skipped(const std::string& path) { skipped_.insert(name_of(path)); }

}  // namespace tonewarden::source
