// Focus: GET /api/v1/spectrogram answers the fake's history (shape, order, frequency axis,
// max-pooling to fewer points), keeps only rows newer than ?since=, refuses bad parameters with
// the JSON error shape, names an unconfigured channel with 404 and says 503 before the
// channel's first spectrum.
#include "http_fixture.h"

namespace tonewarden::http::fixture {
namespace {

using SpectrogramRouteTest = HttpServerTest;

constexpr const char* kRoute = "/api/v1/spectrogram?channel=motor_de";

TEST_F(SpectrogramRouteTest, AllKeptPointsOldestFirstWithTimesAndAxis) {
  const json j = body_of(get(kRoute));
  EXPECT_EQ(j["channel"], "motor_de");
  EXPECT_EQ(j["unit"], "g");
  EXPECT_EQ(j["level"], "dB re 1 g RMS");
  EXPECT_EQ(j["bin_hz"], 0.5);
  EXPECT_EQ(j["num_bins"], 48);
  EXPECT_EQ(j["decimation"], "max");
  EXPECT_EQ(j["capacity"], 600);
  EXPECT_EQ(j["order"], "oldest_first");
  // 48 bins of 0.5 Hz: the last bin is at 47 * 0.5 = 23.5 Hz.
  EXPECT_EQ(j["max_frequency_hz"], 23.5);
  EXPECT_EQ(j["frequency_hz"], json({0, 2, 4, 6, 8, 10, 12, 14, 16, 18, 20, 22}));
  // Default rows (120) exceed the fake's 3: all of them, 1 s apart from kT0Ms, oldest first.
  ASSERT_EQ(j["rows"].size(), 3u);
  EXPECT_EQ(j["rows"][0]["t"], "2026-12-02T00:00:00.000Z");
  EXPECT_EQ(j["rows"][1]["t"], "2026-12-02T00:00:01.000Z");
  EXPECT_EQ(j["rows"][2]["t"], "2026-12-02T00:00:02.000Z");
  // Row r is the fake's kRowDb + r dB, unchanged at 12 points.
  EXPECT_EQ(j["rows"][2]["db"], json({-58, -38, -48, -68, -28, -18, -58, -53, -43, -33, -23, -78}));
  EXPECT_EQ(fakes.live.last_max_rows, 120u);  // kDefaultSpectrogramRows
}

TEST_F(SpectrogramRouteTest, FewerRowsAndPointsKeepEachBucketsMaximum) {
  // 12 points into 4 buckets of 3 (bucket j starts at kept point 3j: 0, 6, 12, 18 Hz).
  // Maxima of kRowDb by hand: max(-60,-40,-50) = -40, max(-70,-30,-20) = -20,
  // max(-60,-55,-45) = -45, max(-35,-25,-80) = -25; the newest 2 rows add 1 and 2 dB.
  const json j = body_of(get(std::string(kRoute) + "&rows=2&points=4"));
  EXPECT_EQ(fakes.live.last_max_rows, 2u);
  EXPECT_EQ(j["frequency_hz"], json({0, 6, 12, 18}));
  ASSERT_EQ(j["rows"].size(), 2u);
  EXPECT_EQ(j["rows"][0]["t"], "2026-12-02T00:00:01.000Z");
  EXPECT_EQ(j["rows"][0]["db"], json({-39, -19, -44, -24}));
  EXPECT_EQ(j["rows"][1]["db"], json({-38, -18, -43, -23}));
  EXPECT_EQ(j["max_frequency_hz"], 23.5);  // the last bucket still ends at the last bin
}

TEST_F(SpectrogramRouteTest, MorePointsThanKeptReturnsWhatIsKept) {
  const json j = body_of(get(std::string(kRoute) + "&points=1024"));
  EXPECT_EQ(j["frequency_hz"].size(), 12u);
  EXPECT_EQ(j["rows"][0]["db"].size(), 12u);
}

TEST_F(SpectrogramRouteTest, SinceKeepsOnlyNewerRowsStillBoundedByRows) {
  // The fake's rows are at kT0Ms + 0, 1000 and 2000 ms (2026-12-02T00:00:00/01/02Z).
  // since = the first row's time (RFC 3339): the two after it, exclusive of since itself.
  json j = body_of(get(std::string(kRoute) + "&since=2026-12-02T00:00:00Z"));
  ASSERT_EQ(j["rows"].size(), 2u);
  EXPECT_EQ(j["rows"][0]["t"], "2026-12-02T00:00:01.000Z");
  EXPECT_EQ(j["rows"][1]["t"], "2026-12-02T00:00:02.000Z");
  // Unix ms half-way between the first two rows: still the same two.
  j = body_of(get(std::string(kRoute) + "&since=" + std::to_string(kT0Ms + 500)));
  ASSERT_EQ(j["rows"].size(), 2u);
  EXPECT_EQ(j["rows"][0]["t"], "2026-12-02T00:00:01.000Z");
  // rows=1 bounds them to the newest one.
  j = body_of(get(std::string(kRoute) + "&rows=1&since=2026-12-02T00:00:00Z"));
  ASSERT_EQ(j["rows"].size(), 1u);
  EXPECT_EQ(j["rows"][0]["t"], "2026-12-02T00:00:02.000Z");
  // since = the newest row: nothing newer yet is an empty list (200), with the axis still there.
  const auto r = get(std::string(kRoute) + "&since=2026-12-02T00:00:02.000Z");
  j = body_of(r);
  EXPECT_EQ(j["rows"], json::array());
  EXPECT_EQ(j["frequency_hz"].size(), 12u);
  // A since before all rows returns all three.
  j = body_of(get(std::string(kRoute) + "&since=2026-12-01T23:59:59Z"));
  EXPECT_EQ(j["rows"].size(), 3u);
}

TEST_F(SpectrogramRouteTest, BadParametersAre400NamingThem) {
  auto expect_param = [](const json& e, const std::string& code, const std::string& parameter) {
    EXPECT_EQ(e.value("code", ""), code) << e.dump();
    EXPECT_EQ(e.value("parameter", ""), parameter) << e.dump();
  };
  // rows: 1..600 (kMaxSpectrogramRows); points: 2..1024 (kMin/kMaxSpectrogramPoints).
  expect_param(error_of(get("/api/v1/spectrogram"), 400), "missing_parameter", "channel");
  expect_param(error_of(get("/api/v1/spectrogram?channel="), 400), "bad_parameter", "channel");
  expect_param(error_of(get(std::string(kRoute) + "&rows=0"), 400), "out_of_range", "rows");
  expect_param(error_of(get(std::string(kRoute) + "&rows=601"), 400), "out_of_range", "rows");
  expect_param(error_of(get(std::string(kRoute) + "&rows=ten"), 400), "bad_parameter", "rows");
  expect_param(error_of(get(std::string(kRoute) + "&points=1"), 400), "out_of_range", "points");
  expect_param(error_of(get(std::string(kRoute) + "&points=1025"), 400), "out_of_range", "points");
  expect_param(error_of(get(std::string(kRoute) + "&pionts=8"), 400), "unknown_parameter", "pionts");
  expect_param(error_of(get(std::string(kRoute) + "&since=yesterday"), 400), "bad_time", "since");
  expect_param(error_of(get(std::string(kRoute) + "&since=2026-13-02T00:00:00Z"), 400), "bad_time",
               "since");
  expect_param(error_of(get(std::string(kRoute) + "&channel=pump_de"), 400), "bad_parameter",
               "channel");
  // The provider is never asked for a refused request.
  EXPECT_EQ(fakes.live.last_max_rows, 0u);
}

TEST_F(SpectrogramRouteTest, UnconfiguredChannelIsABadParameterLikeOnTheOtherLiveRoutes) {
  const json e = error_of(get("/api/v1/spectrogram?channel=nope"), 400);
  EXPECT_EQ(e["code"], "unknown_channel");
  EXPECT_EQ(e["parameter"], "channel");
}

TEST_F(SpectrogramRouteTest, ChannelWithoutSpectrumYetIs503WithRetryAfter) {
  const auto r = get("/api/v1/spectrogram?channel=pump_de");
  const json e = error_of(r, 503);
  EXPECT_EQ(e["code"], "no_data");
  EXPECT_EQ(r->get_header_value("Retry-After"), "1");
}

}  // namespace
}  // namespace tonewarden::http::fixture
