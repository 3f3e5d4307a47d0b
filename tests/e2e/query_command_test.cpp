// Focus: `tonewarden query` against a history database that a StoreWriter is still writing:
// formats, filters, and exit code 2 with a one-line reason on usage errors.
#include <gtest/gtest.h>

#include <atomic>
#include <nlohmann/json.hpp>
#include <thread>

#include "store/store_test_util.h"
#include "support/subprocess.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store {
namespace {

using tonewarden::testing::run_process;
using tonewarden::testing::tonewarden_binary;

class QueryCommandTest : public ::testing::Test {
 protected:
  void SetUp() override {
    path_ = dir_.file("h.db");
    auto w = StoreWriter::create(testing::fast_config(path_));
    ASSERT_TRUE(w.ok()) << w.error().message;
    writer_ = std::move(w).value();
    id_ = writer_->register_series({"pump", "de", "rms", "g"}).value();
    // One hour at 1 Hz, value 1 except one 7.0 at 30 min.
    for (int i = 0; i < 3600; ++i) {
      ASSERT_TRUE(writer_->append(Reading{id_, t0_ + i * 1000, i == 1800 ? 7.0 : 1.0}));
    }
    AlarmEvent e;
    e.t = {t0_ + 1'800'000};
    e.rig = "pump";
    e.channel = "de";
    e.rule = "rms-high";
    e.message = "RMS, above 3 g";
    ASSERT_TRUE(writer_->append(e));
    e.t = {t0_ + 1'900'000};
    e.state = AlarmState::kAcknowledged;
    ASSERT_TRUE(writer_->append(e));
    ASSERT_TRUE(writer_->flush().ok());
  }
  std::vector<std::string> args(std::vector<std::string> rest) {
    std::vector<std::string> a = {tonewarden_binary(), "query", "--db", path_};
    a.insert(a.end(), rest.begin(), rest.end());
    return a;
  }

  testing::TempDir dir_;
  std::string path_;
  std::unique_ptr<StoreWriter> writer_;
  SeriesId id_ = 0;
  const int64_t t0_ = testing::kT0;
};

TEST_F(QueryCommandTest, TrendAsJsonWhileTheWriterKeepsWriting) {
  std::atomic<bool> done{false};
  std::thread busy([&] {  // keeps committing other rows during the query
    for (int64_t i = 0; !done; ++i) {
      writer_->append(Reading{id_, t0_ + 7'200'000 + i, 2.0});
      std::this_thread::sleep_for(std::chrono::milliseconds(1));
    }
  });
  auto r = run_process(args({"--format", "json", "trend", "--series", "pump/de/rms", "--from",
                             std::to_string(t0_), "--to", std::to_string(t0_ + 3'600'000),
                             "--points", "6"}));
  done = true;
  busy.join();
  ASSERT_EQ(r.exit_code, 0) << r.stderr_text;
  auto j = nlohmann::json::parse(r.stdout_text);
  ASSERT_EQ(j.size(), 1u);
  EXPECT_EQ(j[0]["series"], "pump/de/rms");
  EXPECT_EQ(j[0]["bucket_ms"], 600'000);  // 1 h / 6 points
  ASSERT_EQ(j[0]["points"].size(), 6u);
  // The 7.0 at 30 min lies in bucket 3 ([30 min, 40 min)); 600 readings per bucket.
  EXPECT_EQ(j[0]["points"][3]["max"], 7.0);
  EXPECT_EQ(j[0]["points"][3]["count"], 600);
  EXPECT_EQ(j[0]["points"][2]["max"], 1.0);
}

TEST_F(QueryCommandTest, EventsAsCsvFilteredByState) {
  auto r = run_process(args({"--format", "csv", "events", "--from", std::to_string(t0_), "--to",
                             std::to_string(t0_ + 3'600'000), "--state", "acknowledged"}));
  ASSERT_EQ(r.exit_code, 0) << r.stderr_text;
  // Header plus one row; the comma in the message is quoted (RFC 4180).
  EXPECT_EQ(r.stdout_text,
            "time,rig,channel,rule,severity,state,value,threshold,message\n" +
                base::format_rfc3339({t0_ + 1'900'000}) +
                ",pump,de,rms-high,warning,acknowledged,0,0,\"RMS, above 3 g\"\n");
}

TEST_F(QueryCommandTest, SeriesAsTable) {
  auto r = run_process(args({"series"}));
  ASSERT_EQ(r.exit_code, 0) << r.stderr_text;
  EXPECT_NE(r.stdout_text.find("pump"), std::string::npos);
  EXPECT_NE(r.stdout_text.find("rms"), std::string::npos);
}

TEST_F(QueryCommandTest, UsageErrorsExitTwoWithOneLineReason) {
  struct Case {
    std::vector<std::string> rest;
    const char* expect;
  };
  const Case cases[] = {
      {{"trend", "--series", "pump/de/rms", "--from", "last tuesday"}, "--from 'last tuesday'"},
      {{"trend", "--series", "pump/de/nope"}, "no series pump/de/nope"},
      {{"trend", "--series", "pumprms"}, "not RIG/CHANNEL/METRIC"},
      {{"events", "--state", "sleepy"}, "--state 'sleepy'"},
      {{"trend", "--series", "pump/de/rms", "--from", "2000", "--to", "1000"}, "not after"},
  };
  for (const auto& c : cases) {
    auto r = run_process(args(c.rest));
    EXPECT_EQ(r.exit_code, 2) << c.expect;
    EXPECT_NE(r.stderr_text.find(c.expect), std::string::npos) << r.stderr_text;
    EXPECT_EQ(std::count(r.stderr_text.begin(), r.stderr_text.end(), '\n'), 1) << r.stderr_text;
  }
  auto missing = run_process({tonewarden_binary(), "query", "--db", dir_.file("absent.db"),
                              "series"});
  EXPECT_EQ(missing.exit_code, 2);
  EXPECT_NE(missing.stderr_text.find("absent.db"), std::string::npos);
  auto bad_format = run_process(args({"--format", "xml", "series"}));
  EXPECT_EQ(bad_format.exit_code, 2);
}

}  // namespace
}  // namespace tonewarden::store
