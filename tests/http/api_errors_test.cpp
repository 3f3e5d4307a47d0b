// Focus: every 4xx path of the JSON API answers the error shape
// {"error":{"code","message","parameter"}} naming the parameter at fault.
#include "http_fixture.h"

namespace tonewarden::http::fixture {
namespace {

using ApiErrorTest = HttpServerTest;

void expect_param(const json& e, const std::string& code, const std::string& parameter) {
  EXPECT_EQ(e.value("code", ""), code) << e.dump();
  EXPECT_EQ(e.value("parameter", ""), parameter) << e.dump();
  EXPECT_FALSE(e.value("message", "").empty());
}

const std::string kTrends = std::string("/api/v1/trends?series=") + kMotorSeries;

TEST_F(ApiErrorTest, BadTimeNamesParameter) {
  expect_param(error_of(get(kTrends + "&from=yesterday"), 400), "bad_time", "from");
  expect_param(error_of(get(kTrends + "&to=2026-13-01T00:00:00Z"), 400), "bad_time", "to");
  expect_param(error_of(get(kTrends + "&to=2026-12-01T00:00:00"), 400), "bad_time", "to");
  // 20 digits of milliseconds: refused before it could overflow.
  expect_param(error_of(get(kTrends + "&to=99999999999999999999"), 400), "bad_time", "to");
  expect_param(error_of(get("/api/v1/alarms/events?from=x"), 400), "bad_time", "from");
  expect_param(error_of(get("/api/v1/snapshots?to=x"), 400), "bad_time", "to");
  expect_param(error_of(get("/api/v1/annotations?from=1e9"), 400), "bad_time", "from");
}

TEST_F(ApiErrorTest, FromAfterToNamesFrom) {
  const json e = error_of(get(kTrends + "&from=2000&to=1000"), 400);
  expect_param(e, "bad_range", "from");
  EXPECT_NE(e["message"].get<std::string>().find("after"), std::string::npos);
  expect_param(error_of(get("/api/v1/alarms/events?from=2000&to=1000"), 400), "bad_range", "from");
  expect_param(error_of(get("/api/v1/snapshots?from=2000&to=1000"), 400), "bad_range", "from");
  expect_param(error_of(get("/api/v1/annotations?from=2000&to=1000"), 400), "bad_range", "from");
}

TEST_F(ApiErrorTest, PointsOutOfRangeOrNotAnInteger) {
  // Trends: 2..10000 (kMinTrendPoints..kMaxTrendPoints); spectrum: 2..65536.
  expect_param(error_of(get(kTrends + "&points=1"), 400), "out_of_range", "points");
  expect_param(error_of(get(kTrends + "&points=10001"), 400), "out_of_range", "points");
  expect_param(error_of(get(kTrends + "&points=12abc"), 400), "bad_parameter", "points");
  expect_param(error_of(get(kTrends + "&points=-5"), 400), "out_of_range", "points");
  expect_param(error_of(get("/api/v1/spectrum?channel=motor_de&points=1"), 400), "out_of_range",
               "points");
  expect_param(error_of(get("/api/v1/spectrum?channel=motor_de&points=65537"), 400),
               "out_of_range", "points");
  expect_param(error_of(get("/api/v1/snapshots/7?points=0"), 400), "out_of_range", "points");
  expect_param(error_of(get("/api/v1/alarms/events?limit=0"), 400), "out_of_range", "limit");
  expect_param(error_of(get("/api/v1/snapshots?limit=10001"), 400), "out_of_range", "limit");
}

TEST_F(ApiErrorTest, UnknownChannelSeriesRuleRigState) {
  expect_param(error_of(get("/api/v1/spectrum?channel=nope"), 400), "unknown_channel", "channel");
  expect_param(error_of(get("/api/v1/readings?channel=nope"), 400), "unknown_channel", "channel");
  expect_param(error_of(get("/api/v1/readings?rig=nope"), 400), "unknown_rig", "rig");
  expect_param(error_of(get("/api/v1/snapshots?channel=nope"), 400), "unknown_channel", "channel");
  expect_param(error_of(get("/api/v1/trends?series=nope"), 400), "unknown_series", "series");
  expect_param(error_of(get(kTrends + "&series=nope"), 400), "unknown_series", "series");
  expect_param(error_of(get("/api/v1/alarms/events?rule=nope"), 400), "unknown_rule", "rule");
  expect_param(error_of(get("/api/v1/alarms/events?state=panic"), 400), "bad_parameter", "state");
  expect_param(error_of(get(kTrends + "&format=xml"), 400), "bad_parameter", "format");
}

TEST_F(ApiErrorTest, MissingRepeatedEmptyAndUnknownParameters) {
  expect_param(error_of(get("/api/v1/spectrum"), 400), "missing_parameter", "channel");
  expect_param(error_of(get("/api/v1/trends"), 400), "missing_parameter", "series");
  expect_param(error_of(get("/api/v1/spectrum?channel="), 400), "bad_parameter", "channel");
  expect_param(error_of(get("/api/v1/spectrum?channel=motor_de&channel=pump_de"), 400),
               "bad_parameter", "channel");
  // The same series twice. (Identical "key=value" pairs are merged by the HTTP library before
  // we see them, which is harmless; a repeat inside a comma list is ours to refuse.)
  expect_param(error_of(get(kTrends + "," + kMotorSeries), 400), "bad_parameter", "series");
  expect_param(error_of(get(kTrends + ",,"), 400), "bad_parameter", "series");
  expect_param(error_of(get("/api/v1/status?verbose=1"), 400), "unknown_parameter", "verbose");
  expect_param(error_of(get(kTrends + "&pionts=5"), 400), "unknown_parameter", "pionts");
}

TEST_F(ApiErrorTest, TooManySeries) {
  std::string url = "/api/v1/trends?series=";
  for (int i = 0; i < 17; ++i) url += (i ? "," : "") + std::string("s") + std::to_string(i);
  expect_param(error_of(get(url), 400), "out_of_range", "series");  // kMaxTrendSeries = 16
}

TEST_F(ApiErrorTest, BadSnapshotIdAndUnknownOne) {
  expect_param(error_of(get("/api/v1/snapshots/abc"), 400), "bad_parameter", "id");
  expect_param(error_of(get("/api/v1/snapshots/-3"), 400), "bad_parameter", "id");
  expect_param(error_of(get("/api/v1/snapshots/8"), 404), "unknown_snapshot", "id");
}

TEST_F(ApiErrorTest, BadJsonBody) {
  const std::string ack = "/api/v1/alarms/motor_bpfo_level@motor_de/acknowledge";
  const json e = error_of(post(ack, "{\"user\": "), 400);
  expect_param(e, "bad_json", "body");
  EXPECT_NE(e["message"].get<std::string>().find("line 1"), std::string::npos) << e.dump();
  expect_param(error_of(post(ack, "[1,2]"), 400), "bad_json", "body");
  expect_param(error_of(post(ack, ""), 400), "missing_body", "body");
}

TEST_F(ApiErrorTest, MissingWrongAndUnknownFields) {
  const std::string ack = "/api/v1/alarms/motor_bpfo_level@motor_de/acknowledge";
  const std::string shelve = "/api/v1/alarms/motor_bpfo_level@motor_de/shelve";
  expect_param(error_of(post(ack, "{}"), 400), "missing_field", "user");
  expect_param(error_of(post(ack, R"({"user":""})"), 400), "bad_field", "user");
  expect_param(error_of(post(ack, R"({"user":7})"), 400), "bad_field", "user");
  expect_param(error_of(post(ack, "{\"user\":\"" + std::string(65, 'u') + "\"}"), 400),
               "bad_field", "user");  // kMaxUserChars = 64
  expect_param(error_of(post(ack, R"({"user":"a","comment":"x\u0001"})"), 400), "bad_field",
               "comment");
  expect_param(error_of(post(ack, R"({"user":"a","colour":"red"})"), 400), "unknown_field",
               "colour");
  expect_param(error_of(post(shelve, R"({"user":"a"})"), 400), "missing_field", "duration_s");
  expect_param(error_of(post(shelve, R"({"user":"a","duration_s":"1h"})"), 400), "bad_field",
               "duration_s");
  expect_param(error_of(post(shelve, R"({"user":"a","duration_s":59})"), 400), "out_of_range",
               "duration_s");  // kMinShelveS = 60
  expect_param(error_of(post(shelve, R"({"user":"a","duration_s":604801})"), 400),
               "out_of_range", "duration_s");  // kMaxShelveS = one week
  expect_param(error_of(post(shelve, R"({"user":"a","duration_s":60.5})"), 400), "bad_field",
               "duration_s");
  expect_param(error_of(post("/api/v1/annotations", R"({"user":"a"})"), 400), "missing_field",
               "text");
  expect_param(error_of(post("/api/v1/annotations", R"({"user":"a","text":"x","t":"noon"})"),
                        400),
               "bad_time", "t");
  expect_param(error_of(post("/api/v1/annotations", R"({"user":"a","text":"x","rig":"bay9"})"),
                        400),
               "unknown_rig", "rig");
}

TEST_F(ApiErrorTest, WrongContentTypeIs415) {
  const auto r = client->Post("/api/v1/annotations", auth(), R"({"user":"a","text":"x"})",
                              "text/plain");
  expect_param(error_of(r, 415), "unsupported_media_type", "body");
}

TEST_F(ApiErrorTest, UnknownAlarmIs404) {
  expect_param(error_of(post("/api/v1/alarms/nope/acknowledge", R"({"user":"a"})"), 404),
               "unknown_alarm", "alarm");
  expect_param(
      error_of(post("/api/v1/alarms/nope/shelve", R"({"user":"a","duration_s":600})"), 404),
      "unknown_alarm", "alarm");
}

TEST_F(ApiErrorTest, PayloadTooLargeIs413) {
  // kMaxPayloadBytes = 64 KiB; a 100 KiB comment exceeds it before any parsing.
  const std::string big = R"({"user":"a","comment":")" + std::string(100 * 1024, 'x') + "\"}";
  const json e =
      error_of(post("/api/v1/alarms/motor_bpfo_level@motor_de/acknowledge", big), 413);
  expect_param(e, "payload_too_large", "body");
}

TEST_F(ApiErrorTest, UnknownRouteIs404) {
  const json e = error_of(get("/api/v1/nothing"), 404);
  EXPECT_EQ(e["code"], "not_found");
  error_of(get("/api/v2/status"), 404);
  error_of(post("/api/v1/nothing", "{}"), 404);
  error_of(get("/missing.js"), 404);
}

TEST_F(ApiErrorTest, WrongMethodIs405WithAllow) {
  auto r = post("/api/v1/status", "{}");
  error_of(r, 405);
  EXPECT_EQ(r->get_header_value("Allow"), "GET, HEAD, OPTIONS");
  r = get("/api/v1/reload");
  error_of(r, 405);
  EXPECT_EQ(r->get_header_value("Allow"), "POST, OPTIONS");
  r = client->Delete("/api/v1/annotations", auth());
  error_of(r, 405);
  EXPECT_EQ(r->get_header_value("Allow"), "GET, HEAD, POST, OPTIONS");
  r = client->Put("/metrics", "x", "text/plain");
  error_of(r, 405);
  // OPTIONS answers the allowed methods with no CORS headers.
  r = client->Options("/api/v1/alarms");
  ASSERT_TRUE(r);
  EXPECT_EQ(r->status, 204);
  EXPECT_EQ(r->get_header_value("Allow"), "GET, HEAD, OPTIONS");
  EXPECT_FALSE(r->has_header("Access-Control-Allow-Origin"));
}

TEST_F(ApiErrorTest, MissingProviderIs503) {
  server->stop();
  Providers none;
  auto created = Server::create(config(), none, {});
  ASSERT_TRUE(created.ok());
  server = std::move(created).value();
  ASSERT_TRUE(server->start().ok());
  client = std::make_unique<httplib::Client>("127.0.0.1", server->port());
  EXPECT_EQ(error_of(get("/api/v1/status"), 503)["code"], "unavailable");
  EXPECT_EQ(error_of(get("/api/v1/alarms"), 503)["code"], "unavailable");
  const auto h = get("/healthz");
  ASSERT_TRUE(h);
  EXPECT_EQ(h->status, 503);
}

}  // namespace
}  // namespace tonewarden::http::fixture
