// Focus: every JSON API route answers its success case with the fakes' known contents,
// against a real server on 127.0.0.1 (port 0).
#include "http_fixture.h"

namespace tonewarden::http::fixture {
namespace {

using ApiTest = HttpServerTest;

// 2026-12-02T00:00:00.000Z is kT0Ms (checked with Python's datetime in http_fixture.h).
constexpr const char* kT0Text = "2026-12-02T00:00:00.000Z";

TEST_F(ApiTest, StatusReportsVersionUptimeSourcesAndStorage) {
  const json j = body_of(get("/api/v1/status"));
  EXPECT_EQ(j["version"], "9.8.7");
  EXPECT_EQ(j["uptime_s"], 42.5);
  ASSERT_EQ(j["sources"].size(), 1u);
  EXPECT_EQ(j["sources"][0]["name"], "usb_interface");
  EXPECT_EQ(j["sources"][0]["state"], "running");
  EXPECT_EQ(j["sources"][0]["frames"], 1200);
  EXPECT_EQ(j["sources"][0]["overflows"], 2);
  EXPECT_EQ(j["sources"][0]["drops"], 480);
  EXPECT_EQ(j["sources"][0]["last_frame"], kT0Text);
  EXPECT_EQ(j["storage"]["state"], "ok");
  EXPECT_EQ(j["storage"]["rows_written"], 999);
}

TEST_F(ApiTest, ConfigListsRigsChannelsTargetsRules) {
  const json j = body_of(get("/api/v1/config"));
  EXPECT_EQ(j["rigs"][0]["id"], "bay4");
  EXPECT_EQ(j["channels"].size(), 2u);
  EXPECT_EQ(j["channels"][1]["id"], "pump_de");
  EXPECT_EQ(j["targets"][0]["kind"], "bearing");
  EXPECT_EQ(j["rules"][0]["id"], "motor_bpfo_level");
  EXPECT_EQ(j["rules"][0]["warning"], 0.5);
  EXPECT_TRUE(j["rules"][0]["hysteresis"].is_null());  // NaN -> null
}

TEST_F(ApiTest, SpectrumIsDecimatedKeepingMaxima) {
  // Fake: 12 bins {1,3,2,0,4,9,1,2,5,6,7,0} at 0.5 Hz; 4 points -> buckets of 3 bins.
  // Maxima by hand: 3 @ bin 1, 9 @ bin 5, 5 @ bin 8, 7 @ bin 10.
  const json j = body_of(get("/api/v1/spectrum?channel=motor_de&points=4"));
  EXPECT_EQ(j["channel"], "motor_de");
  EXPECT_EQ(j["t"], kT0Text);
  EXPECT_EQ(j["num_bins"], 12);
  EXPECT_EQ(j["decimation"], "max");
  EXPECT_EQ(j["magnitude"], json({3, 9, 5, 7}));
  EXPECT_EQ(j["frequency_hz"], json({0.5, 2.5, 4.0, 5.0}));
  EXPECT_EQ(j["peaks"][0]["frequency_hz"], 2.5);
  EXPECT_EQ(j["markers"][0]["target"], "bpfo");
  EXPECT_EQ(j["thresholds"][0]["severity"], "warning");
  EXPECT_EQ(j["resolution_hz"], 0.75);
}

TEST_F(ApiTest, SpectrumDefaultPointsReturnsAllBinsOfSmallSpectrum) {
  const json j = body_of(get("/api/v1/spectrum?channel=motor_de"));
  EXPECT_EQ(j["magnitude"].size(), 12u);  // default 1024 points > 12 bins
}

TEST_F(ApiTest, SpectrumOfChannelWithoutDataIs503WithRetryAfter) {
  const auto r = get("/api/v1/spectrum?channel=pump_de");
  const json e = error_of(r, 503);
  EXPECT_EQ(e["code"], "no_data");
  EXPECT_EQ(r->get_header_value("Retry-After"), "1");
}

TEST_F(ApiTest, ReadingsAllAndFiltered) {
  EXPECT_EQ(body_of(get("/api/v1/readings"))["readings"].size(), 3u);
  const json j = body_of(get("/api/v1/readings?channel=pump_de"));
  ASSERT_EQ(j["readings"].size(), 1u);
  EXPECT_EQ(j["readings"][0]["metric"], "speed");
  EXPECT_EQ(j["readings"][0]["value"], 2975);
  EXPECT_EQ(body_of(get("/api/v1/readings?rig=bay4"))["readings"].size(), 3u);
}

TEST_F(ApiTest, SeriesLists) {
  const json j = body_of(get("/api/v1/series"));
  EXPECT_EQ(j["series"], json({kMotorSeries, kVelocitySeries}));
}

TEST_F(ApiTest, TrendsJsonPassesRangeAndPointsToProvider) {
  const json j = body_of(get(std::string("/api/v1/trends?series=") + kMotorSeries +
                             "&from=2026-12-01T23:00:00Z&to=" + std::to_string(kT0Ms) +
                             "&points=50"));
  EXPECT_EQ(fakes.trends.last.from.unix_ms, kT0Ms - 3600 * 1000);
  EXPECT_EQ(fakes.trends.last.to.unix_ms, kT0Ms);
  EXPECT_EQ(fakes.trends.last.max_points, 50u);
  ASSERT_EQ(j["series"].size(), 1u);
  EXPECT_EQ(j["series"][0]["t"][0], kT0Text);
  EXPECT_EQ(j["series"][0]["mean"], json({1.5, 2.5}));
  EXPECT_EQ(j["from"], "2026-12-01T23:00:00.000Z");
}

TEST_F(ApiTest, TrendsAcceptRepeatedAndCommaSeparatedSeries) {
  body_of(get(std::string("/api/v1/trends?series=") + kMotorSeries + "&series=" + kVelocitySeries));
  EXPECT_EQ(fakes.trends.last.series.size(), 2u);
  body_of(get(std::string("/api/v1/trends?series=") + kMotorSeries + "," + kVelocitySeries));
  EXPECT_EQ(fakes.trends.last.series.size(), 2u);
  // Defaults: to = now, from = to - 1 h, 1000 points.
  EXPECT_EQ(fakes.trends.last.to.unix_ms - fakes.trends.last.from.unix_ms, 3600 * 1000);
  EXPECT_EQ(fakes.trends.last.max_points, 1000u);
}

TEST_F(ApiTest, TrendsCsv) {
  const auto r = get(std::string("/api/v1/trends?format=csv&series=") + kMotorSeries);
  ASSERT_TRUE(r);
  EXPECT_EQ(r->status, 200);
  EXPECT_EQ(r->get_header_value("Content-Type"), "text/csv; charset=utf-8");
  EXPECT_EQ(r->body, std::string("series,t,mean,min,max,count\n") + kMotorSeries + "," +
                         kT0Text + ",1.5,1,2,3\n" + kMotorSeries +
                         ",2026-12-02T00:00:01.000Z,2.5,2,3,3\n");
}

TEST_F(ApiTest, AlarmStatesAndEvents) {
  const json states = body_of(get("/api/v1/alarms"));
  ASSERT_EQ(states["alarms"].size(), 2u);
  EXPECT_EQ(states["alarms"][0]["state"], "unacknowledged");
  EXPECT_TRUE(states["alarms"][0]["shelved_until"].is_null());
  const json ev = body_of(get(
      "/api/v1/alarms/events?from=0&to=2026-12-03T00:00:00Z&state=unacknowledged&rule="
      "motor_bpfo_level&limit=10"));
  EXPECT_EQ(ev["events"][0]["id"], 17);
  EXPECT_EQ(fakes.alarms.last.from.unix_ms, 0);
  EXPECT_EQ(fakes.alarms.last.to.unix_ms, kT0Ms + 86400 * 1000);
  EXPECT_EQ(fakes.alarms.last.state, "unacknowledged");
  EXPECT_EQ(fakes.alarms.last.rule, "motor_bpfo_level");
  EXPECT_EQ(fakes.alarms.last.limit, 10u);
}

TEST_F(ApiTest, AcknowledgeWithToken) {
  const json j = body_of(post("/api/v1/alarms/motor_bpfo_level@motor_de/acknowledge",
                              R"({"user":"night shift","comment":"bearing checked"})"));
  EXPECT_EQ(j["alarm"]["state"], "acknowledged");
  EXPECT_EQ(j["alarm"]["acknowledged_by"], "night shift");
  EXPECT_EQ(fakes.alarms.last_comment, "bearing checked");
}

TEST_F(ApiTest, ShelveWithToken) {
  const json j = body_of(post("/api/v1/alarms/motor_bpfo_level@motor_de/shelve",
                              R"({"user":"ops","duration_s":3600})"));
  EXPECT_EQ(j["alarm"]["state"], "shelved");
  EXPECT_EQ(j["alarm"]["shelved_until"], "2026-12-02T01:00:00.000Z");  // kT0 + 3600 s
}

TEST_F(ApiTest, AcknowledgeOfNormalAlarmIsConflict) {
  const json e = error_of(post("/api/v1/alarms/quiet@pump_de/acknowledge", R"({"user":"ops"})"),
                          409);
  EXPECT_EQ(e["code"], "conflict");
}

TEST_F(ApiTest, SnapshotsListAndOne) {
  const json list = body_of(get("/api/v1/snapshots?channel=motor_de&limit=5"));
  EXPECT_EQ(list["snapshots"][0]["id"], 7);
  EXPECT_EQ(fakes.snapshots.last.channel, "motor_de");
  EXPECT_EQ(fakes.snapshots.last.limit, 5u);
  // Fake snapshot: 6 bins {0,8,1,1,2,3} at 2 Hz; 2 points -> maxima 8 @ 2 Hz, 3 @ 10 Hz.
  const json one = body_of(get("/api/v1/snapshots/7?points=2"));
  EXPECT_EQ(one["snapshot"]["window"], "hann");
  EXPECT_EQ(one["snapshot"]["magnitude"], json({8, 3}));
  EXPECT_EQ(one["snapshot"]["frequency_hz"], json({2.0, 10.0}));
}

TEST_F(ApiTest, AnnotationsAddAndList) {
  const auto r = post("/api/v1/annotations",
                      R"({"text":"replaced coupling","user":"ops","rig":"bay4","t":"2026-12-02T00:00:00Z"})");
  const json added = body_of(r, 201);
  EXPECT_EQ(added["annotation"]["id"], 1);
  EXPECT_EQ(added["annotation"]["t"], kT0Text);
  EXPECT_FALSE(r->get_header_value("Location").empty());
  // Unix milliseconds are accepted for t as well.
  body_of(post("/api/v1/annotations",
               R"({"text":"second","user":"ops","t":)" + std::to_string(kT0Ms + 5) + "}"),
          201);
  const json list = body_of(get("/api/v1/annotations?from=" + std::to_string(kT0Ms) + "&to=" +
                                std::to_string(kT0Ms + 10)));
  ASSERT_EQ(list["annotations"].size(), 2u);
  EXPECT_EQ(list["annotations"][0]["text"], "replaced coupling");
  EXPECT_EQ(list["annotations"][1]["t"], "2026-12-02T00:00:00.005Z");
}

TEST_F(ApiTest, ReloadIsAccepted) {
  const json j = body_of(post("/api/v1/reload", ""), 202);
  EXPECT_EQ(j["status"], "reload requested");
  EXPECT_EQ(fakes.status.reloads, 1);
}

TEST_F(ApiTest, HealthzOkThenUnhealthyWithReason) {
  auto r = get("/healthz");
  ASSERT_TRUE(r);
  EXPECT_EQ(r->status, 200);
  EXPECT_EQ(r->body, "ok\n");
  {
    std::lock_guard<std::mutex> lock(fakes.status.mu);
    fakes.status.info.healthy = false;
    fakes.status.info.unhealthy_reason = "source usb_interface lost";
  }
  r = get("/healthz");
  ASSERT_TRUE(r);
  EXPECT_EQ(r->status, 503);
  EXPECT_EQ(r->body, "unhealthy: source usb_interface lost\n");
}

TEST_F(ApiTest, MetricsServedAsOpenMetrics) {
  get("/api/v1/status");
  get("/nope");
  const auto r = get("/metrics");
  ASSERT_TRUE(r);
  EXPECT_EQ(r->status, 200);
  EXPECT_EQ(r->get_header_value("Content-Type"),
            "application/openmetrics-text; version=1.0.0; charset=utf-8");
  EXPECT_EQ(r->body.substr(r->body.size() - 6), "# EOF\n");
  EXPECT_NE(r->body.find("tonewarden_source_frames_total{source=\"usb_interface\"} 1200\n"),
            std::string::npos);
  EXPECT_NE(r->body.find("tonewarden_reading{rig=\"bay4\",channel=\"motor_de\",target=\"bpfo\","
                         "metric=\"amplitude\",unit=\"g\"} 0.25\n"),
            std::string::npos);
  // The status request (2xx) and the 404 were counted before this scrape.
  EXPECT_NE(r->body.find("tonewarden_http_requests_total{class=\"2xx\"} 1\n"), std::string::npos)
      << r->body;
  EXPECT_NE(r->body.find("tonewarden_http_requests_total{class=\"4xx\"} 1\n"), std::string::npos);
}

TEST_F(ApiTest, HeadOnGetRouteHasNoBody) {
  const auto r = client->Head("/api/v1/status");
  ASSERT_TRUE(r);
  EXPECT_EQ(r->status, 200);
  EXPECT_TRUE(r->body.empty());
}

}  // namespace
}  // namespace tonewarden::http::fixture

namespace tonewarden::http::fixture {
namespace {

// A browser offers "gzip, deflate, br"; the answer comes gzip-compressed (brotli is taken out:
// the library's brotli setting costs tens of times gzip's CPU per poll).
TEST_F(HttpServerTest, BrowsersGetGzipEvenWhenTheyOfferBrotli) {
  client->set_decompress(false);
  for (const char* offer : {"gzip, deflate, br", "br;q=1.0, gzip;q=0.8", "Br , gzip"}) {
    auto r = client->Get("/api/v1/openapi.json", {{"Accept-Encoding", offer}});
    ASSERT_TRUE(r) << offer;
    EXPECT_EQ(r->status, 200) << offer;
    EXPECT_EQ(r->get_header_value("Content-Encoding"), "gzip") << offer;
    ASSERT_GE(r->body.size(), 2u);
    EXPECT_EQ(static_cast<unsigned char>(r->body[0]), 0x1f) << offer;  // gzip ID1 ID2 (RFC 1952, from memory)
    EXPECT_EQ(static_cast<unsigned char>(r->body[1]), 0x8b) << offer;
  }
  // Brotli alone: sent as it is, not compressed.
  auto plain = client->Get("/api/v1/openapi.json", {{"Accept-Encoding", "br"}});
  ASSERT_TRUE(plain);
  EXPECT_EQ(plain->get_header_value("Content-Encoding"), "");
  EXPECT_EQ(plain->body.front(), '{');
}

}  // namespace
}  // namespace tonewarden::http::fixture
