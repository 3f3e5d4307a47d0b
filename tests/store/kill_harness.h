// Crash harness shared by the default durability test and the soak: a forked child writes
// numbered batches through StoreWriter and reports each one after flush() returns; the parent
// kills it with SIGKILL at a random moment and checks what survived.
#pragma once

#include <fcntl.h>
#include <gtest/gtest.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <random>
#include <string>
#include <thread>
#include <vector>

#include "tonewarden/store/store_reader.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store::testing {

inline constexpr int kKillBatchRows = 2000;
inline constexpr int64_t kKillT0 = 1'700'000'000'000;

// Child side: never returns.
[[noreturn]] inline void kill_child_main(const std::string& path, int report_fd) {
  StoreConfig c;
  c.path = path;
  c.commit_interval = std::chrono::milliseconds(10);
  auto w = StoreWriter::create(c);
  if (!w.ok()) _exit(3);
  auto id = (*w)->register_series({"crash", "ch", "n", ""});
  if (!id.ok()) _exit(4);
  const int64_t ready = -1;  // the database exists and is migrated: start the clock
  if (write(report_fd, &ready, sizeof ready) != sizeof ready) _exit(7);
  std::vector<Reading> batch(kKillBatchRows);
  for (int64_t b = 0;; ++b) {
    // Batch b owns times [b*N, (b+1)*N): whole-batch checks are a count per time window.
    for (int i = 0; i < kKillBatchRows; ++i) {
      batch[static_cast<size_t>(i)] = {*id, kKillT0 + b * kKillBatchRows + i, static_cast<double>(b)};
    }
    if (!(*w)->append(batch)) _exit(5);
    if (!(*w)->flush().ok()) _exit(6);
    if (write(report_fd, &b, sizeof b) != sizeof b) _exit(7);
  }
}

// One run: fork, wait until the child has opened the database, let it write for a random
// 30..330 ms, SIGKILL, verify.
inline void kill_nine_run(const std::string& path, uint32_t seed) {
  SCOPED_TRACE("seed " + std::to_string(seed));
  std::mt19937 rng(seed);
  int fds[2];
  ASSERT_EQ(pipe(fds), 0);
  const pid_t pid = fork();
  ASSERT_GE(pid, 0);
  if (pid == 0) {
    close(fds[0]);
    kill_child_main(path, fds[1]);
  }
  close(fds[1]);
  int64_t ready = 0;
  ASSERT_EQ(read(fds[0], &ready, sizeof ready), static_cast<ssize_t>(sizeof ready));
  ASSERT_EQ(ready, -1);
  std::this_thread::sleep_for(std::chrono::milliseconds(30 + rng() % 300));
  ASSERT_EQ(kill(pid, SIGKILL), 0);
  int status = 0;
  ASSERT_EQ(waitpid(pid, &status, 0), pid);
  ASSERT_TRUE(WIFSIGNALED(status)) << "child exited early with " << WEXITSTATUS(status);
  int64_t last = -1, b = 0;
  while (read(fds[0], &b, sizeof b) == sizeof b) {
    EXPECT_EQ(b, last + 1);
    last = b;
  }
  close(fds[0]);

  auto r = StoreReader::open(path);
  ASSERT_TRUE(r.ok()) << r.error().message;
  EXPECT_EQ((*r)->integrity_check().value(), "ok");
  auto series = (*r)->find_series("crash", "ch", "n");
  ASSERT_TRUE(series.ok());
  const SeriesId id = series->id;
  // Every reported batch is whole; after the last reported one at most one more batch may
  // have committed before the report was written; nothing partial anywhere.
  for (int64_t k = 0; k <= last + 1; ++k) {
    const int64_t n = (*r)->count_readings(id, {kKillT0 + k * kKillBatchRows},
                                           {kKillT0 + (k + 1) * kKillBatchRows}).value();
    if (k <= last) {
      EXPECT_EQ(n, kKillBatchRows) << "reported batch " << k;
    } else {
      EXPECT_TRUE(n == 0 || n == kKillBatchRows) << "batch " << k << " has " << n << " rows";
    }
  }
  const int64_t total = (*r)->count_readings(id, {kKillT0}, {kKillT0 + (int64_t{1} << 40)}).value();
  EXPECT_TRUE(total == (last + 1) * kKillBatchRows || total == (last + 2) * kKillBatchRows)
      << total << " rows after " << last + 1 << " reported batches";
  // Rollups commit in the same transaction: their counts add up to the raw row count.
  auto tr = (*r)->trend({{id}, {kKillT0}, {kKillT0 + 3'600'000 * 24}, 1});
  ASSERT_TRUE(tr.ok());
  int64_t rolled = 0;
  for (const auto& p : (*tr)[0].points) rolled += p.count;
  EXPECT_EQ(rolled, total);
  EXPECT_GE(last, 0) << "no batch committed in the run; the run proved little";
}

}  // namespace tonewarden::store::testing
