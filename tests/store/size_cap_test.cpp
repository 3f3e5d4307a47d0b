// Focus: retention.max_db_bytes: past the cap the writer drops the oldest raw readings first,
// then the oldest snapshots, never rollups or the alarm log, and the file stays under the cap.
#include <gtest/gtest.h>
#include <sys/stat.h>

#include <chrono>
#include <string>
#include <thread>
#include <vector>

#include "store_test_util.h"
#include "tonewarden/store/store_reader.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store {
namespace {

using testing::fast_config;
using testing::kT0;
using testing::sqlite_shell;
using testing::TempDir;

constexpr int64_t kCapBytes = 1 << 20;  // the smallest cap validate() allows
constexpr int kSeries = 4;
constexpr int64_t kSecondMs = 1000;

int64_t file_bytes(const std::string& path) {
  struct stat st {};
  return ::stat(path.c_str(), &st) == 0 ? st.st_size : 0;
}

// Database plus WAL: what the cap limits.
int64_t store_bytes(const std::string& db) { return file_bytes(db) + file_bytes(db + "-wal"); }

Snapshot spectrum(int64_t t_ms, int seed) {
  Snapshot s;
  s.t = {t_ms};
  s.rig = "rig";
  s.channel = "ch";
  s.reason = "periodic";
  s.sample_rate_hz = 51200;
  s.fft_length = 8192;
  s.bin_hz = 6.25;
  s.window = "hann";
  s.scale = "peak";
  s.unit = "g";
  s.magnitude.resize(4097);  // 8 KiB of codes (SCHEMA.md: 2 bytes per bin)
  for (size_t k = 0; k < s.magnitude.size(); ++k) {
    s.magnitude[k] = 1e-4f * static_cast<float>(1 + (k * 37 + static_cast<size_t>(seed)) % 1000);
  }
  return s;
}

class SizeCapTest : public ::testing::Test {
 protected:
  void SetUp() override {
    path_ = dir_.file("h.db");
    StoreConfig c = fast_config(path_);
    c.retention.max_db_bytes = kCapBytes;
    c.prune_batch_rows = 5000;  // keeps the test in seconds; the cap logic is the same
    auto w = StoreWriter::create(c);
    ASSERT_TRUE(w.ok()) << w.error().message;
    writer_ = std::move(w).value();
    for (int k = 0; k < kSeries; ++k) {
      ids_.push_back(writer_->register_series({"rig", "ch", "m" + std::to_string(k), "g"}).value());
    }
  }

  // kSeries readings per second over [t0, t0 + seconds); value = seconds since kT0, so every
  // row's value names its time. Flushed every five minutes of data (about 35 KiB per batch,
  // far below the 10 % headroom the cap contract asks of one commit).
  void write_seconds(int64_t t0, int64_t seconds) {
    std::vector<Reading> batch;
    for (int64_t s = 0; s < seconds; ++s) {
      const int64_t t = t0 + s * kSecondMs;
      for (SeriesId id : ids_) batch.push_back({id, t, static_cast<double>((t - kT0) / kSecondMs)});
      if (batch.size() >= 300 * kSeries) {
        ASSERT_TRUE(writer_->append(batch));
        ASSERT_TRUE(writer_->flush().ok());
        batch.clear();
      }
    }
    ASSERT_TRUE(writer_->append(batch));
    ASSERT_TRUE(writer_->flush().ok());
  }

  // Waits until the writer has finished freeing space for the cap, then stops it (the final
  // checkpoint truncates the WAL).
  void settle_and_stop() {
    const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(30);
    while (writer_->health().over_size_cap && std::chrono::steady_clock::now() < deadline) {
      std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    EXPECT_FALSE(writer_->health().over_size_cap) << "the writer never got under the cap";
    pruned_ = writer_->num_pruned_rows();
    ASSERT_TRUE(writer_->stop().ok());
  }

  int64_t count(const std::string& sql) { return std::stoll(sqlite_shell(path_, sql)); }

  TempDir dir_;
  std::string path_;
  std::unique_ptr<StoreWriter> writer_;
  std::vector<SeriesId> ids_;
  int64_t pruned_ = 0;
};

TEST_F(SizeCapTest, OldestRawReadingsGoFirstAndTheFileStaysUnderTheCap) {
  // Old snapshots and alarm events first, then 8 hours of 4 series at 1 Hz (115 200 readings,
  // about 3 MiB of raw rows): three times the cap.
  constexpr int kSnapshots = 10, kEvents = 20;
  for (int i = 0; i < kSnapshots; ++i) ASSERT_TRUE(writer_->append(spectrum(kT0 + i, i)));
  for (int i = 0; i < kEvents; ++i) {
    AlarmEvent e;
    e.t = {kT0 + i * 600'000};
    e.rig = "rig";
    e.channel = "ch";
    e.rule = "rms-high";
    e.state = i % 2 ? AlarmState::kNormal : AlarmState::kUnacknowledged;
    ASSERT_TRUE(writer_->append(e));
  }
  ASSERT_TRUE(writer_->append(Annotation{0, {kT0}, "rig", "test start", "op"}));
  constexpr int64_t kSeconds = 8 * 3600;
  write_seconds(kT0, kSeconds);
  settle_and_stop();

  // 1. The file (database + WAL after the final checkpoint) is at or below the cap. Tolerance:
  // none. The writer starts freeing at 90 % of the cap and frees down to 80 %, so one commit
  // may add up to 10 % of the cap before the file could pass it; each batch here is ~3 %.
  const int64_t bytes = store_bytes(path_);
  EXPECT_LE(bytes, kCapBytes) << "file " << bytes << " bytes, cap " << kCapBytes;
  EXPECT_EQ(file_bytes(path_ + "-wal"), 0);
  // ... and pruning stopped near the low-water mark instead of emptying the table: well over
  // half the cap still holds data (freed pages are counted by freelist_count).
  const int64_t live = count(
      "SELECT (page_count - freelist_count) * page_size FROM pragma_page_count, "
      "pragma_freelist_count, pragma_page_size");
  EXPECT_GT(live, kCapBytes / 2);

  // 2. Oldest raw readings went first, at one cutoff for all series: each series keeps exactly
  // the seconds [cutoff, end), the same cutoff everywhere, and nothing newer is missing.
  ASSERT_GT(pruned_, 0) << "nothing was pruned: the test never passed the cap";
  const int64_t end = kT0 + kSeconds * kSecondMs;
  const int64_t cutoff = count("SELECT min(t_ms) FROM readings");
  EXPECT_GT(cutoff, kT0);
  for (SeriesId id : ids_) {
    const std::string where = " FROM readings WHERE series_id = " + std::to_string(id);
    EXPECT_EQ(count("SELECT min(t_ms)" + where), cutoff) << "series " << id;
    EXPECT_EQ(count("SELECT max(t_ms)" + where), end - kSecondMs) << "series " << id;
    EXPECT_EQ(count("SELECT count(*)" + where), (end - cutoff) / kSecondMs) << "series " << id;
  }
  // Every value still equals its own time (no row was rewritten or shifted).
  EXPECT_EQ(count("SELECT count(*) FROM readings WHERE value != (t_ms - " + std::to_string(kT0) +
                  ") / 1000"),
            0);
  EXPECT_EQ(pruned_, kSeries * (cutoff - kT0) / kSecondMs);  // exactly the rows below cutoff

  // 3. Rollups and the alarm log survive whole: every minute and hour of every series, with
  // counts adding up to everything written (kSeries x kSeconds).
  EXPECT_EQ(count("SELECT count(*) FROM rollup_minute"), kSeries * kSeconds / 60);
  EXPECT_EQ(count("SELECT count(*) FROM rollup_hour"), kSeries * kSeconds / 3600);
  EXPECT_EQ(count("SELECT sum(count) FROM rollup_minute"), kSeries * kSeconds);
  EXPECT_EQ(count("SELECT sum(count) FROM rollup_hour"), kSeries * kSeconds);
  EXPECT_EQ(count("SELECT count(*) FROM alarm_events"), kEvents);
  EXPECT_EQ(count("SELECT count(*) FROM annotations"), 1);
  // 4. Snapshots are older than every dropped reading, yet all stay: raw rows remain.
  EXPECT_EQ(count("SELECT count(*) FROM snapshots"), kSnapshots);

  auto r = StoreReader::open(path_);
  ASSERT_TRUE(r.ok());
  EXPECT_EQ((*r)->integrity_check().value(), "ok");
}

TEST_F(SizeCapTest, SnapshotsGoOnlyOnceNoRawReadingsAreLeft) {
  // An hour of readings (14 400 rows, ~0.4 MiB) and its minute of alarm events, then 200
  // spectra of 8 KiB each (1.6 MiB), newer than every reading: raw rows must all go before
  // the oldest snapshot does, and then only as many of the oldest snapshots as needed.
  constexpr int kSnapshots = 200;
  write_seconds(kT0, 3600);
  AlarmEvent e;
  e.t = {kT0 + 1000};
  e.rig = "rig";
  e.channel = "ch";
  e.rule = "rms-high";
  ASSERT_TRUE(writer_->append(e));
  const int64_t snap_t0 = kT0 + 2 * 3'600'000;
  for (int i = 0; i < kSnapshots; ++i) {
    ASSERT_TRUE(writer_->append(spectrum(snap_t0 + i * 1000, i)));
    if (i % 5 == 4) ASSERT_TRUE(writer_->flush().ok());
  }
  settle_and_stop();

  const int64_t bytes = store_bytes(path_);
  EXPECT_LE(bytes, kCapBytes) << "file " << bytes << " bytes, cap " << kCapBytes;
  EXPECT_EQ(count("SELECT count(*) FROM readings"), 0);
  const int64_t kept = count("SELECT count(*) FROM snapshots");
  EXPECT_GT(kept, 0);
  EXPECT_LT(kept, kSnapshots);
  // The newest `kept` snapshots, none missing in between.
  EXPECT_EQ(count("SELECT max(t_ms) FROM snapshots"), snap_t0 + (kSnapshots - 1) * 1000);
  EXPECT_EQ(count("SELECT min(t_ms) FROM snapshots"), snap_t0 + (kSnapshots - kept) * 1000);
  // Rollups and the alarm log are untouched by the cap.
  EXPECT_EQ(count("SELECT sum(count) FROM rollup_minute"), kSeries * 3600);
  EXPECT_EQ(count("SELECT sum(count) FROM rollup_hour"), kSeries * 3600);
  EXPECT_EQ(count("SELECT count(*) FROM alarm_events"), 1);
}

}  // namespace
}  // namespace tonewarden::store
