// Focus: StoreReader trends (point cap, tier choice, peaks kept, pruned tiers filled in),
// event filters, nearest snapshots, and clear errors on bad queries.
#include "tonewarden/store/store_reader.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <thread>

#include "store_test_util.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store {
namespace {

using testing::fast_config;
using testing::kT0;
using testing::sqlite_shell;
using testing::TempDir;

constexpr int64_t kMin = 60'000, kHour = 3'600'000, kDay = 86'400'000;

class StoreReaderTest : public ::testing::Test {
 protected:
  void SetUp() override {
    path_ = dir_.file("h.db");
    auto w = StoreWriter::create(fast_config(path_));
    ASSERT_TRUE(w.ok()) << w.error().message;
    writer_ = std::move(w).value();
    id_ = writer_->register_series({"pump", "de", "rms", "g"}).value();
  }
  // Readings every `step_ms` over [start, start + span_ms), value 1.0, with one spike.
  void write_flat(int64_t start, int64_t span_ms, int64_t step_ms, int64_t spike_t, double spike) {
    std::vector<Reading> batch;
    for (int64_t t = start; t < start + span_ms; t += step_ms) {
      batch.push_back({id_, t, t == spike_t ? spike : 1.0});
      if (batch.size() == 10'000) {
        ASSERT_TRUE(writer_->append(batch));
        batch.clear();
      }
    }
    ASSERT_TRUE(writer_->append(batch));
    ASSERT_TRUE(writer_->flush().ok());
  }
  std::unique_ptr<StoreReader> reader() {
    auto r = StoreReader::open(path_);
    EXPECT_TRUE(r.ok()) << r.error().message;
    return r.ok() ? std::move(r).value() : nullptr;
  }

  TempDir dir_;
  std::string path_;
  std::unique_ptr<StoreWriter> writer_;
  SeriesId id_ = 0;
};

TEST_F(StoreReaderTest, ShortRangeUsesRawAndKeepsThePeak) {
  const int64_t spike_t = kT0 + 317'000;
  write_flat(kT0, 10 * kMin, 1000, spike_t, 100.0);
  auto r = reader();
  ASSERT_TRUE(r);
  auto tr = r->trend({{id_}, {kT0}, {kT0 + 10 * kMin}, 20});
  ASSERT_TRUE(tr.ok()) << tr.error().message;
  const Trend& t = (*tr)[0];
  EXPECT_EQ(t.bucket_ms, 30'000);  // 600 s / 20 points
  EXPECT_EQ(t.finest_source, TrendSource::kRaw);
  ASSERT_EQ(t.points.size(), 20u);
  // Bucket 10 covers [300 s, 330 s): 29 ones and the spike -> max 100, mean 129/30 = 4.3.
  EXPECT_EQ(t.points[10].max, 100.0);
  EXPECT_EQ(t.points[10].min, 1.0);
  EXPECT_DOUBLE_EQ(t.points[10].mean, 129.0 / 30.0);
  EXPECT_EQ(t.points[10].count, 30);
  EXPECT_EQ(t.points[10].t_unix_ms, kT0 + 300'000);
}

TEST_F(StoreReaderTest, LongRangeUsesRollupsAndStillShowsThePeak) {
  // Two days at one reading per 10 s (17280 rows), one spike.
  const int64_t spike_t = kT0 + 30 * kHour + 40'000;
  write_flat(kT0, 2 * kDay, 10'000, spike_t, -50.0);
  auto r = reader();
  ASSERT_TRUE(r);
  auto minute = r->trend({{id_}, {kT0}, {kT0 + 2 * kDay}, 100});  // bucket 28.8 min
  ASSERT_TRUE(minute.ok());
  const Trend& m = (*minute)[0];
  EXPECT_EQ(m.finest_source, TrendSource::kMinute);
  EXPECT_LE(m.points.size(), 100u);
  int64_t total = 0;
  double lowest = 1e9;
  for (const auto& p : m.points) {
    total += p.count;
    lowest = std::min(lowest, p.min);
    EXPECT_LE(p.min, p.mean);
    EXPECT_LE(p.mean, p.max);
  }
  EXPECT_EQ(total, 17280);  // 2 days / 10 s: every reading counted once
  EXPECT_EQ(lowest, -50.0);
  auto hour = r->trend({{id_}, {kT0}, {kT0 + 2 * kDay}, 24});  // bucket 2 h
  ASSERT_TRUE(hour.ok());
  EXPECT_EQ((*hour)[0].finest_source, TrendSource::kHour);
  EXPECT_EQ((*hour)[0].points.size(), 24u);
  EXPECT_EQ((*hour)[0].points[15].min, -50.0);  // 30 h 40 s falls in bucket 15 (30 h..32 h)
}

TEST_F(StoreReaderTest, PrunedRawRangeIsFilledFromRollups) {
  // Raw readings from 20 days ago, beyond the default 14-day raw retention, are pruned by the
  // writer; the minute rollups (90 days) still answer a fine-grained query.
  const int64_t old = base::wall_now().unix_ms / kHour * kHour - 20 * kDay;
  write_flat(old, 10 * kMin, 1000, old + 125'000, 9.0);
  for (int i = 0; i < 200 && writer_->num_pruned_rows() < 600; ++i) {
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  ASSERT_EQ(writer_->num_pruned_rows(), 600);  // exactly the 600 raw rows
  auto r = reader();
  ASSERT_TRUE(r);
  EXPECT_EQ(r->count_readings(id_, {old}, {old + kDay}).value(), 0);
  auto tr = r->trend({{id_}, {old}, {old + 10 * kMin}, 100});  // 6 s buckets: raw wanted
  ASSERT_TRUE(tr.ok());
  const Trend& t = (*tr)[0];
  EXPECT_EQ(t.finest_source, TrendSource::kMinute);
  ASSERT_EQ(t.points.size(), 10u);  // one point per minute rollup
  EXPECT_EQ(t.points[2].max, 9.0);  // 125 s lies in minute 2
  EXPECT_EQ(t.points[2].count, 60);
}

TEST_F(StoreReaderTest, BadQueriesGiveClearErrors) {
  auto r = reader();
  ASSERT_TRUE(r);
  auto backwards = r->trend({{id_}, {kT0 + 1}, {kT0}, 10});
  ASSERT_FALSE(backwards.ok());
  EXPECT_EQ(backwards.error().code, base::ErrorCode::kInvalidArgument);
  auto zero = r->trend({{id_}, {kT0}, {kT0 + 1000}, 0});
  ASSERT_FALSE(zero.ok());
  EXPECT_NE(zero.error().message.find("max_points"), std::string::npos);
  auto unknown = r->trend({{id_ + 99}, {kT0}, {kT0 + 1000}, 10});
  ASSERT_FALSE(unknown.ok());
  EXPECT_EQ(unknown.error().code, base::ErrorCode::kNotFound);
  auto missing = r->find_series("pump", "de", "nope");
  ASSERT_FALSE(missing.ok());
  EXPECT_EQ(missing.error().code, base::ErrorCode::kNotFound);
}

TEST_F(StoreReaderTest, EventsFilterByStateRuleAndRigNewestFirst) {
  auto ev = [&](int64_t t, const char* rig, const char* rule, AlarmState st) {
    AlarmEvent e;
    e.t = {t};
    e.rig = rig;
    e.channel = "de";
    e.rule = rule;
    e.state = st;
    ASSERT_TRUE(writer_->append(e));
  };
  ev(kT0 + 1, "pump", "rms-high", AlarmState::kUnacknowledged);
  ev(kT0 + 2, "pump", "rms-high", AlarmState::kAcknowledged);
  ev(kT0 + 3, "fan", "bpfo", AlarmState::kUnacknowledged);
  ev(kT0 + 4, "pump", "bpfo", AlarmState::kNormal);
  ASSERT_TRUE(writer_->flush().ok());
  auto r = reader();
  ASSERT_TRUE(r);
  EventQuery q{{kT0}, {kT0 + 10}};
  auto all = r->events(q);
  ASSERT_TRUE(all.ok());
  ASSERT_EQ(all->size(), 4u);
  EXPECT_EQ((*all)[0].t.unix_ms, kT0 + 4);  // newest first
  q.state = AlarmState::kUnacknowledged;
  EXPECT_EQ(r->events(q)->size(), 2u);
  q.rig = "fan";
  ASSERT_EQ(r->events(q)->size(), 1u);
  EXPECT_EQ(r->events(q)->at(0).rule, "bpfo");
  EventQuery by_rule{{kT0}, {kT0 + 10}};
  by_rule.rule = "rms-high";
  EXPECT_EQ(r->events(by_rule)->size(), 2u);
  by_rule.limit = 1;
  EXPECT_EQ(r->events(by_rule)->size(), 1u);
}

TEST_F(StoreReaderTest, NearestSnapshotsComeNearestFirstFromBothSides) {
  for (int64_t dt : {-5000, -1000, 2000, 9000}) {
    Snapshot s;
    s.t = {kT0 + dt};
    s.rig = "pump";
    s.channel = "de";
    s.magnitude = {1.0f};
    ASSERT_TRUE(writer_->append(s));
  }
  Snapshot other;
  other.t = {kT0};
  other.rig = "fan";
  other.channel = "de";
  ASSERT_TRUE(writer_->append(other));
  ASSERT_TRUE(writer_->flush().ok());
  auto r = reader();
  ASSERT_TRUE(r);
  auto got = r->nearest_snapshots({kT0}, 3, "pump");
  ASSERT_TRUE(got.ok());
  ASSERT_EQ(got->size(), 3u);
  EXPECT_EQ((*got)[0].t.unix_ms, kT0 - 1000);
  EXPECT_EQ((*got)[1].t.unix_ms, kT0 + 2000);
  EXPECT_EQ((*got)[2].t.unix_ms, kT0 - 5000);
}

TEST_F(StoreReaderTest, ReaderSeesNewCommitsWhileWriterRuns) {
  auto r = reader();
  ASSERT_TRUE(r);
  EXPECT_EQ(r->count_readings(id_, {kT0}, {kT0 + kDay}).value(), 0);
  write_flat(kT0, kMin, 1000, -1, 0.0);
  EXPECT_EQ(r->count_readings(id_, {kT0}, {kT0 + kDay}).value(), 60);
  auto series = r->list_series();
  ASSERT_TRUE(series.ok());
  ASSERT_EQ(series->size(), 1u);
  EXPECT_EQ((*series)[0].key.metric, "rms");
  EXPECT_EQ(r->integrity_check().value(), "ok");
}

}  // namespace
}  // namespace tonewarden::store
