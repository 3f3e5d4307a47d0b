// Focus: StoreWriter batching, flush, rollups kept in step with raw rows, the reject-newest
// overflow policy, input validation, and the records other than readings.
#include "tonewarden/store/store_writer.h"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

#include "store_test_util.h"
#include "tonewarden/store/schema.h"
#include "tonewarden/store/store_reader.h"

namespace tonewarden::store {
namespace {

using testing::fast_config;
using testing::kT0;
using testing::sqlite_shell;
using testing::TempDir;

std::unique_ptr<StoreWriter> open_writer(const StoreConfig& c) {
  auto w = StoreWriter::create(c);
  EXPECT_TRUE(w.ok()) << (w.ok() ? "" : w.error().message);
  return w.ok() ? std::move(w).value() : nullptr;
}

TEST(StoreWriterTest, FlushMakesQueuedReadingsVisibleToAnotherConnection) {
  TempDir dir;
  auto c = fast_config(dir.file("h.db"));
  c.commit_interval = std::chrono::seconds(60);  // only flush() can commit within the test
  auto w = open_writer(c);
  ASSERT_TRUE(w);
  auto id = w->register_series({"pump-1", "de", "rms", "m/s^2"});
  ASSERT_TRUE(id.ok());
  std::vector<Reading> batch;
  for (int i = 0; i < 1000; ++i) batch.push_back({*id, kT0 + i * 1000, 0.001 * i});
  ASSERT_TRUE(w->append(batch));
  ASSERT_TRUE(w->flush().ok());
  EXPECT_EQ(w->num_written_readings(), 1000);
  EXPECT_EQ(w->queued(), 0u);
  // Expected: exactly the 1000 rows appended, seen by the sqlite3 shell.
  EXPECT_EQ(sqlite_shell(c.path, "SELECT count(*), min(t_ms), max(t_ms) FROM readings"),
            "1000|" + std::to_string(kT0) + "|" + std::to_string(kT0 + 999'000));
}

TEST(StoreWriterTest, RollupsEqualAggregatesOfRawRowsAcrossBatches) {
  TempDir dir;
  auto c = fast_config(dir.file("h.db"));
  auto w = open_writer(c);
  ASSERT_TRUE(w);
  auto id = w->register_series({"fan", "nde", "peak", "g"});
  ASSERT_TRUE(id.ok());
  // 150 readings at 1 s from 30 s before an hour boundary, values 0..149, written in three
  // flushes so each minute is updated by more than one transaction.
  const int64_t start = kT0 + 3'600'000 - 30'000;
  for (int part = 0; part < 3; ++part) {
    for (int i = part * 50; i < (part + 1) * 50; ++i) {
      ASSERT_TRUE(w->append(Reading{*id, start + i * 1000, static_cast<double>(i)}));
    }
    ASSERT_TRUE(w->flush().ok());
  }
  // The rollups must equal GROUP BY over the raw rows (identity: an aggregate of a partition).
  const std::string from_raw = sqlite_shell(
      c.path, "SELECT (t_ms / 60000) * 60000, min(value), max(value), avg(value), count(*) "
              "FROM readings GROUP BY 1 ORDER BY 1");
  const std::string from_rollup =
      sqlite_shell(c.path, "SELECT t_ms, min, max, mean, count FROM trend_minute ORDER BY t_ms");
  EXPECT_EQ(from_rollup, from_raw);
  // By hand: minute 1 holds values 0..29 (mean 14.5), the hour boundary splits 29|30.
  EXPECT_EQ(sqlite_shell(c.path, "SELECT min, max, mean, count FROM trend_hour ORDER BY t_ms"),
            "0.0|29.0|14.5|30\n30.0|149.0|89.5|120");
}

TEST(StoreWriterTest, DuplicateTimeKeepsFirstValueAndCountsOnce) {
  TempDir dir;
  auto c = fast_config(dir.file("h.db"));
  auto w = open_writer(c);
  ASSERT_TRUE(w);
  auto id = w->register_series({"rig", "ch", "m", ""});
  ASSERT_TRUE(id.ok());
  ASSERT_TRUE(w->append(Reading{*id, kT0, 1.0}));
  ASSERT_TRUE(w->flush().ok());
  ASSERT_TRUE(w->append(Reading{*id, kT0, 5.0}));
  ASSERT_TRUE(w->flush().ok());
  EXPECT_EQ(w->num_duplicates(), 1);
  EXPECT_EQ(sqlite_shell(c.path, "SELECT value FROM readings"), "1.0");
  EXPECT_EQ(sqlite_shell(c.path, "SELECT max, count FROM rollup_minute"), "1.0|1");
}

TEST(StoreWriterTest, FullQueueRejectsNewestWholeAppendAndCountsIt) {
  TempDir dir;
  auto c = fast_config(dir.file("h.db"));
  c.commit_interval = std::chrono::seconds(60);
  c.queue_capacity = 10;
  auto w = open_writer(c);
  ASSERT_TRUE(w);
  auto id = w->register_series({"rig", "ch", "m", ""});
  ASSERT_TRUE(id.ok());
  for (int i = 0; i < 8; ++i) ASSERT_TRUE(w->append(Reading{*id, kT0 + i, 1.0}));
  // 8 queued: an append of 3 would exceed 10 and is rejected whole; then 2 more fit.
  std::vector<Reading> three = {{*id, kT0 + 100, 1}, {*id, kT0 + 101, 1}, {*id, kT0 + 102, 1}};
  EXPECT_FALSE(w->append(three));
  EXPECT_EQ(w->num_dropped(), 3);
  EXPECT_TRUE(w->append(Reading{*id, kT0 + 8, 1.0}));
  EXPECT_TRUE(w->append(Annotation{0, {kT0}, "rig", "fits", "op"}));
  EXPECT_FALSE(w->append(Reading{*id, kT0 + 9, 1.0}));
  EXPECT_EQ(w->num_dropped(), 4);
  EXPECT_EQ(w->queued(), 10u);
  ASSERT_TRUE(w->flush().ok());
  EXPECT_EQ(w->queued(), 0u);
  EXPECT_EQ(sqlite_shell(c.path, "SELECT count(*) FROM readings"), "9");
  EXPECT_TRUE(w->append(Reading{*id, kT0 + 9, 1.0}));  // room again after the commit
}

TEST(StoreWriterTest, EmptyAppendIsAcceptedAndDoesNotStallFlushOrStop) {
  TempDir dir;
  auto c = fast_config(dir.file("h.db"));
  auto w = open_writer(c);
  ASSERT_TRUE(w);
  auto id = w->register_series({"rig", "ch", "m", ""});
  ASSERT_TRUE(id.ok());
  ASSERT_TRUE(w->append(Reading{*id, kT0, 1.0}));
  EXPECT_TRUE(w->append(std::span<const Reading>()));  // e.g. the tail of a chunked write
  // Expected: both return at once; before the fix each waited its whole timeout for a
  // commit of the empty append that never came.
  EXPECT_TRUE(w->flush(std::chrono::seconds(5)).ok());
  EXPECT_EQ(w->num_dropped(), 0);
  EXPECT_EQ(sqlite_shell(c.path, "SELECT count(*) FROM readings"), "1");
  EXPECT_TRUE(w->append(std::span<const Reading>()));
  EXPECT_TRUE(w->stop(std::chrono::seconds(5)).ok());
}

TEST(StoreWriterTest, RejectsUnknownSeriesAndNonFiniteValues) {
  TempDir dir;
  auto w = open_writer(fast_config(dir.file("h.db")));
  ASSERT_TRUE(w);
  auto id = w->register_series({"rig", "ch", "m", ""});
  ASSERT_TRUE(id.ok());
  EXPECT_FALSE(w->append(Reading{*id + 1, kT0, 1.0}));
  EXPECT_FALSE(w->append(Reading{0, kT0, 1.0}));
  EXPECT_FALSE(w->append(Reading{*id, kT0, std::numeric_limits<double>::quiet_NaN()}));
  EXPECT_FALSE(w->append(Reading{*id, kT0, std::numeric_limits<double>::infinity()}));
  Snapshot s;
  s.magnitude = {1.0f, std::numeric_limits<float>::infinity()};
  EXPECT_FALSE(w->append(s));
  EXPECT_EQ(w->num_dropped(), 5);
}

TEST(StoreWriterTest, SeriesIdsAreStableAndPersist) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  SeriesId a = 0, b = 0;
  {
    auto w = open_writer(fast_config(path));
    ASSERT_TRUE(w);
    a = w->register_series({"r", "c", "rms", "g"}).value();
    b = w->register_series({"r", "c", "peak", "g"}).value();
    EXPECT_NE(a, b);
    EXPECT_EQ(w->register_series({"r", "c", "rms", "g"}).value(), a);
    EXPECT_FALSE(w->register_series({"", "c", "rms", "g"}).ok());
    EXPECT_FALSE(w->register_series({"r", std::string(kMaxNameBytes + 1, 'x'), "m", ""}).ok());
  }
  auto w = open_writer(fast_config(path));
  ASSERT_TRUE(w);
  EXPECT_EQ(w->register_series({"r", "c", "peak", "g"}).value(), b);
  const SeriesId c = w->register_series({"r", "c", "crest", ""}).value();
  EXPECT_GT(c, std::max(a, b));
}

TEST(StoreWriterTest, EventsSnapshotsAnnotationsAndRunsRoundTrip) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  auto w = open_writer(fast_config(path));
  ASSERT_TRUE(w);
  const int64_t run = w->begin_run({0, {kT0}, {}, "abc123", "0.1.0"});
  AlarmEvent e;
  e.t = {kT0 + 5};
  e.rig = "pump";
  e.channel = "de";
  e.rule = "bpfo-high";
  e.severity = Severity::kCritical;
  e.state = AlarmState::kReturnedUnacknowledged;
  e.value = 3.5;
  e.threshold = 2.0;
  e.message = "BPFO above 2.0 g";
  e.evidence_path = "clips/x.flac";
  ASSERT_TRUE(w->append(e));
  Snapshot s;
  s.t = {kT0 + 6};
  s.rig = "pump";
  s.channel = "de";
  s.reason = "alarm";
  s.sample_rate_hz = 48000;
  s.fft_length = 8;
  s.bin_hz = 6000;
  s.window = "hann";
  s.scale = "peak";
  s.unit = "g";
  s.magnitude = {0.0f, 0.25f, 1.0f, 0.125f, 0.0f};
  ASSERT_TRUE(w->append(s));
  ASSERT_TRUE(w->append(Annotation{0, {kT0 + 7}, "pump", "bearing replaced", "op"}));
  w->end_run(run, {kT0 + 10});
  ASSERT_TRUE(w->stop().ok());

  auto r = StoreReader::open(path);
  ASSERT_TRUE(r.ok()) << r.error().message;
  auto ev = (*r)->events({{kT0}, {kT0 + 100}});
  ASSERT_TRUE(ev.ok());
  ASSERT_EQ(ev->size(), 1u);
  EXPECT_EQ((*ev)[0].state, AlarmState::kReturnedUnacknowledged);
  EXPECT_EQ((*ev)[0].severity, Severity::kCritical);
  EXPECT_EQ((*ev)[0].message, e.message);
  EXPECT_EQ((*ev)[0].evidence_path, e.evidence_path);
  EXPECT_EQ(sqlite_shell(path, "SELECT state FROM alarm_events"), "returned-unacknowledged");
  auto snaps = (*r)->nearest_snapshots({kT0}, 1);
  ASSERT_TRUE(snaps.ok());
  ASSERT_EQ(snaps->size(), 1u);
  const auto& got = (*snaps)[0];
  EXPECT_EQ(got.window, "hann");
  EXPECT_EQ(got.fft_length, 8);
  ASSERT_EQ(got.magnitude.size(), 5u);
  EXPECT_EQ(got.magnitude[0], 0.0f);
  EXPECT_NEAR(got.magnitude[2], 1.0f, 0.00058f);  // 0.005 dB code bound (spectrum_codec.h)
  EXPECT_EQ(sqlite_shell(path, "SELECT bins, length(codes), step_db FROM snapshots"), "5|10|0.01");
  auto notes = (*r)->annotations({kT0}, {kT0 + 100});
  ASSERT_TRUE(notes.ok());
  ASSERT_EQ(notes->size(), 1u);
  EXPECT_EQ((*notes)[0].text, "bearing replaced");
  auto runs = (*r)->runs({kT0}, {kT0 + 100});
  ASSERT_TRUE(runs.ok());
  ASSERT_EQ(runs->size(), 1u);
  EXPECT_EQ((*runs)[0].stop.unix_ms, kT0 + 10);
  EXPECT_EQ((*runs)[0].config_hash, "abc123");
}

TEST(StoreWriterTest, DatabaseIsInWalModeWithOurIdentity) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  ASSERT_TRUE(open_writer(fast_config(path)));
  EXPECT_EQ(sqlite_shell(path, "PRAGMA journal_mode"), "wal");
  EXPECT_EQ(sqlite_shell(path, "PRAGMA application_id"), std::to_string(kApplicationId));
  EXPECT_EQ(sqlite_shell(path, "PRAGMA user_version"), std::to_string(current_schema_version()));
}

TEST(StoreWriterTest, ConfigValidationNamesEveryBadField) {
  StoreConfig c;
  c.path = "/tmp/x.db";
  c.commit_interval = std::chrono::milliseconds(1);
  c.queue_capacity = 0;
  c.retention.raw_days = 30;
  c.retention.minute_rollup_days = 7;
  auto s = validate(c);
  ASSERT_FALSE(s.ok());
  EXPECT_EQ(s.error().code, base::ErrorCode::kInvalidArgument);
  for (const char* field : {"commit_interval", "queue_capacity", "minute_rollup_days"}) {
    EXPECT_NE(s.error().message.find(field), std::string::npos) << s.error().message;
  }
  EXPECT_FALSE(StoreWriter::create(c).ok());
}

}  // namespace
}  // namespace tonewarden::store
