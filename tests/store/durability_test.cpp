// Focus: crash safety (kill -9 mid-write), stop on SIGTERM flushing the queue, disk-full
// faults that are exposed, bounded and recovered from, and read-only data directories.
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/mount.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <cerrno>
#include <cstring>
#include <filesystem>
#include <map>
#include <random>
#include <sstream>

#include "kill_harness.h"
#include "store_test_util.h"
#include "tonewarden/store/store_reader.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store {
namespace {

using testing::fast_config;
using testing::kT0;
using testing::sqlite_shell;
using testing::TempDir;

TEST(DurabilityTest, KillNineDuringHeavyWritesLeavesOnlyWholeCommittedBatches) {
  std::random_device rd;
  for (int run = 0; run < 3; ++run) {
    TempDir dir;
    testing::kill_nine_run(dir.file("h.db"), rd());
  }
}

std::atomic<bool> g_term{false};
extern "C" void on_term(int) { g_term = true; }  // flag only

TEST(DurabilityTest, SigtermStopFlushesEverythingQueued) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  constexpr int kRows = 20'000;
  int fds[2];
  ASSERT_EQ(pipe(fds), 0);
  const pid_t pid = fork();
  ASSERT_GE(pid, 0);
  if (pid == 0) {
    close(fds[0]);
    signal(SIGTERM, on_term);
    auto c = fast_config(path);
    c.commit_interval = std::chrono::seconds(60);  // nothing commits unless stop() flushes
    auto w = StoreWriter::create(c);
    if (!w.ok()) _exit(3);
    const SeriesId id = (*w)->register_series({"r", "c", "m", ""}).value();
    for (int i = 0; i < kRows; ++i) {
      if (!(*w)->append(Reading{id, kT0 + i, 1.0})) _exit(4);
    }
    const char ready = 'r';
    if (write(fds[1], &ready, 1) != 1) _exit(5);
    while (!g_term) usleep(1000);
    _exit((*w)->stop().ok() ? 0 : 6);
  }
  close(fds[1]);
  char ready = 0;
  ASSERT_EQ(read(fds[0], &ready, 1), 1);
  close(fds[0]);
  {  // Before the signal nothing is committed yet (60 s commit interval).
    auto r = StoreReader::open(path);
    ASSERT_TRUE(r.ok()) << r.error().message;
    auto s = (*r)->list_series();
    ASSERT_TRUE(s.ok());
    EXPECT_TRUE(s->empty());
  }
  ASSERT_EQ(kill(pid, SIGTERM), 0);
  int status = 0;
  ASSERT_EQ(waitpid(pid, &status, 0), pid);
  ASSERT_TRUE(WIFEXITED(status));
  EXPECT_EQ(WEXITSTATUS(status), 0);
  auto r = StoreReader::open(path);
  ASSERT_TRUE(r.ok());
  const SeriesId id = (*r)->find_series("r", "c", "m")->id;
  EXPECT_EQ((*r)->count_readings(id, {kT0}, {kT0 + kRows}).value(), kRows)
      << testing::sqlite_shell(path, "SELECT count(*), min(t_ms) - " + std::to_string(kT0) + ", max(t_ms) - " + std::to_string(kT0) + " FROM readings");
}

// A size-limited tmpfs; unmounted (lazily) at scope exit.
class SmallMount {
 public:
  SmallMount(const std::string& dir, const char* options, unsigned long flags = 0) : dir_(dir) {
    mounted_ = ::mount("tmpfs", dir.c_str(), "tmpfs", flags, options) == 0;
    if (!mounted_) error_ = std::strerror(errno);
  }
  ~SmallMount() {
    if (mounted_) ::umount2(dir_.c_str(), MNT_DETACH);
  }
  bool mounted() const { return mounted_; }
  const std::string& error() const { return error_; }
  bool resize(const char* options) {
    return ::mount("tmpfs", dir_.c_str(), "tmpfs", MS_REMOUNT, options) == 0;
  }

 private:
  std::string dir_;
  bool mounted_ = false;
  std::string error_;
};

TEST(DurabilityTest, DiskFullIsExposedBoundedAndRecovered) {
  TempDir dir;
  const std::string mnt = dir.file("data");
  std::filesystem::create_directory(mnt);
  SmallMount m(mnt, "size=512k");
  if (!m.mounted()) GTEST_SKIP() << "cannot mount a tmpfs here (" << m.error() << ")";
  auto c = fast_config(mnt + "/h.db");
  c.queue_capacity = 50'000;
  auto w = StoreWriter::create(c);
  ASSERT_TRUE(w.ok()) << w.error().message;
  const SeriesId id = (*w)->register_series({"r", "c", "m", ""}).value();
  int64_t accepted = 0, t = kT0;
  auto push = [&](int n) {
    std::vector<Reading> b;
    for (int i = 0; i < n; ++i) b.push_back({id, t++, 1.0});
    if ((*w)->append(b)) {
      accepted += n;
      return true;
    }
    t -= n;
    return false;
  };
  // 512 KiB holds roughly 20 k readings; write until the writer reports the fault.
  for (int i = 0; i < 400 && (*w)->health().ok; ++i) {
    ASSERT_TRUE(push(500));
    (void)(*w)->flush(std::chrono::milliseconds(500));
  }
  const StoreHealth h = (*w)->health();
  ASSERT_FALSE(h.ok) << "512 KiB never filled";
  EXPECT_TRUE(h.disk_full);
  EXPECT_NE(h.last_error.find("full"), std::string::npos) << h.last_error;
  // Still accepting until the queue is full, then rejecting newest and counting.
  while (push(1000)) {
  }
  EXPECT_GT((*w)->num_dropped(), 0);
  EXPECT_LE((*w)->queued(), c.queue_capacity);
  const auto flushed = (*w)->flush(std::chrono::milliseconds(300));
  EXPECT_FALSE(flushed.ok());
  EXPECT_EQ(flushed.error().code, base::ErrorCode::kUnavailable);
  EXPECT_EQ((*w)->health().num_faults, 1);  // several retries so far, one state change
  // Space returns: everything accepted gets written.
  ASSERT_TRUE(m.resize("size=16m"));
  ASSERT_TRUE((*w)->flush(std::chrono::seconds(20)).ok());
  EXPECT_TRUE((*w)->health().ok);
  EXPECT_EQ((*w)->health().num_faults, 1);
  auto r = StoreReader::open(c.path);
  ASSERT_TRUE(r.ok());
  EXPECT_EQ((*r)->count_readings(id, {kT0}, {t}).value(), accepted);
  EXPECT_EQ((*r)->integrity_check().value(), "ok");
  ASSERT_TRUE((*w)->stop().ok());
}

TEST(DurabilityTest, PageCapActsAsFullDiskWithoutLosingCommittedRows) {
  TempDir dir;
  auto c = fast_config(dir.file("h.db"));
  c.max_page_count = 40;  // 160 KiB at 4 KiB pages
  auto w = StoreWriter::create(c);
  ASSERT_TRUE(w.ok()) << w.error().message;
  const SeriesId id = (*w)->register_series({"r", "c", "m", ""}).value();
  std::vector<Reading> b;
  for (int i = 0; i < 100; ++i) b.push_back({id, kT0 + i, 1.0});
  ASSERT_TRUE((*w)->append(b));
  ASSERT_TRUE((*w)->flush().ok());
  for (int k = 1; k < 200 && (*w)->health().ok; ++k) {
    b.clear();
    for (int i = 0; i < 1000; ++i) b.push_back({id, kT0 + k * 1000 + i, 1.0});
    ASSERT_TRUE((*w)->append(b));
    (void)(*w)->flush(std::chrono::milliseconds(500));
  }
  EXPECT_FALSE((*w)->health().ok);
  EXPECT_TRUE((*w)->health().disk_full);
  auto r = StoreReader::open(c.path);
  ASSERT_TRUE(r.ok());
  EXPECT_GE((*r)->count_readings(id, {kT0}, {kT0 + 100}).value(), 100);
  EXPECT_EQ((*r)->integrity_check().value(), "ok");
  EXPECT_FALSE((*w)->stop(std::chrono::milliseconds(200)).ok());  // queue could not drain
}

// Child side of the file-size-limit test: writes until the limit bites, keeps appending until
// the queue rejects, lifts the limit, flushes. Reports "key value" lines on `fd`; never returns.
[[noreturn]] void file_limit_child(const std::string& path, int fd) {
  std::ostringstream out;
  auto report = [&](int code) {
    const std::string text = out.str();
    if (write(fd, text.data(), text.size()) != static_cast<ssize_t>(text.size())) _exit(9);
    _exit(code);
  };
  auto c = fast_config(path);
  c.queue_capacity = 20'000;
  auto w = StoreWriter::create(c);
  if (!w.ok()) report(3);
  const SeriesId id = (*w)->register_series({"r", "c", "m", ""}).value();
  int64_t accepted = 0, t = kT0;
  auto push = [&](int n) {
    std::vector<Reading> b;
    for (int i = 0; i < n; ++i) b.push_back({id, t + i, 1.0});
    if (!(*w)->append(b)) return false;
    accepted += n;
    t += n;
    return true;
  };
  push(100);
  if (!(*w)->flush().ok()) report(4);
  // Past 256 KiB, write() fails with EFBIG (SIGXFSZ ignored) for the database and its WAL.
  signal(SIGXFSZ, SIG_IGN);
  rlimit lim{};
  getrlimit(RLIMIT_FSIZE, &lim);
  const rlim_t hard = lim.rlim_max;
  lim.rlim_cur = 256 << 10;
  if (setrlimit(RLIMIT_FSIZE, &lim) != 0) report(5);
  for (int i = 0; i < 400 && (*w)->health().ok; ++i) {
    if (!push(500)) break;
    (void)(*w)->flush(std::chrono::milliseconds(500));
  }
  const StoreHealth h = (*w)->health();
  out << "fault_ok " << h.ok << "\nfault_disk_full " << h.disk_full << "\nfault_error "
      << h.last_error << "\n";
  while (push(1000)) {
  }
  out << "dropped " << (*w)->num_dropped() << "\nqueued " << (*w)->queued() << "\n";
  const auto stalled = (*w)->flush(std::chrono::milliseconds(300));
  out << "stalled_flush_ok " << stalled.ok() << "\n";
  lim.rlim_cur = hard;  // space returns (raising the soft limit up to the hard one needs no rights)
  if (setrlimit(RLIMIT_FSIZE, &lim) != 0) report(6);
  const auto resumed = (*w)->flush(std::chrono::seconds(20));
  out << "resumed_flush_ok " << resumed.ok() << "\nresumed_ok " << (*w)->health().ok
      << "\nfaults " << (*w)->health().num_faults << "\naccepted " << accepted << "\nend "
      << t << "\n";
  report((*w)->stop().ok() ? 0 : 7);
}

TEST(DurabilityTest, FileSizeLimitActsAsFullDiskAndWritingResumesWhenLifted) {
  // Needs no root, unlike the tmpfs test above: RLIMIT_FSIZE in a child process.
  TempDir dir;
  const std::string path = dir.file("h.db");
  int fds[2];
  ASSERT_EQ(pipe(fds), 0);
  const pid_t pid = fork();
  ASSERT_GE(pid, 0);
  if (pid == 0) {
    close(fds[0]);
    file_limit_child(path, fds[1]);
  }
  close(fds[1]);
  std::string text;
  char buf[512];
  for (ssize_t n; (n = read(fds[0], buf, sizeof buf)) > 0;) text.append(buf, static_cast<size_t>(n));
  close(fds[0]);
  int status = 0;
  ASSERT_EQ(waitpid(pid, &status, 0), pid);
  ASSERT_TRUE(WIFEXITED(status));
  EXPECT_EQ(WEXITSTATUS(status), 0) << text;
  std::map<std::string, std::string> got;
  std::istringstream in(text);
  for (std::string line; std::getline(in, line);) {
    const auto sp = line.find(' ');
    got[line.substr(0, sp)] = sp == std::string::npos ? "" : line.substr(sp + 1);
  }
  // While the limit holds: the writer reports a full disk in one clear line and stays up.
  EXPECT_EQ(got["fault_ok"], "0") << text;
  EXPECT_EQ(got["fault_disk_full"], "1") << text;
  EXPECT_NE(got["fault_error"].find(path), std::string::npos) << text;
  EXPECT_NE(got["fault_error"].find("full"), std::string::npos) << text;
  // It keeps accepting into its queue (capacity 20 000) and then rejects and counts.
  EXPECT_GT(std::stoll(got["dropped"]), 0) << text;
  EXPECT_LE(std::stoll(got["queued"]), 20'000) << text;
  EXPECT_EQ(got["stalled_flush_ok"], "0") << text;
  // Once the limit is lifted, everything accepted is written; one fault, one recovery.
  EXPECT_EQ(got["resumed_flush_ok"], "1") << text;
  EXPECT_EQ(got["resumed_ok"], "1") << text;
  EXPECT_EQ(got["faults"], "1") << text;
  const int64_t accepted = std::stoll(got["accepted"]);
  EXPECT_EQ(sqlite_shell(path, "SELECT count(*), min(t_ms), max(t_ms) FROM readings"),
            std::to_string(accepted) + "|" + std::to_string(kT0) + "|" +
                std::to_string(kT0 + accepted - 1));
  EXPECT_EQ(sqlite_shell(path, "PRAGMA integrity_check"), "ok");
}

TEST(DurabilityTest, ReadOnlyDataDirectoryFailsAtOpenWithReason) {
  TempDir dir;
  const std::string mnt = dir.file("ro");
  std::filesystem::create_directory(mnt);
  SmallMount m(mnt, "size=64k", MS_RDONLY);
  if (!m.mounted()) GTEST_SKIP() << "cannot mount a read-only tmpfs here (" << m.error() << ")";
  auto w = StoreWriter::create(fast_config(mnt + "/h.db"));
  ASSERT_FALSE(w.ok());
  EXPECT_EQ(w.error().code, base::ErrorCode::kIo);
  EXPECT_NE(w.error().message.find("not writable"), std::string::npos) << w.error().message;
  EXPECT_NE(w.error().message.find("Read-only file system"), std::string::npos)
      << w.error().message;
}

TEST(DurabilityTest, MissingDataDirectoryFailsAtOpenWithReason) {
  TempDir dir;
  auto w = StoreWriter::create(fast_config(dir.file("absent/h.db")));
  ASSERT_FALSE(w.ok());
  EXPECT_EQ(w.error().code, base::ErrorCode::kIo);
  EXPECT_NE(w.error().message.find("absent"), std::string::npos) << w.error().message;
  auto r = StoreReader::open(dir.file("absent/h.db"));
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, base::ErrorCode::kNotFound);
}

}  // namespace
}  // namespace tonewarden::store
