// Focus: the OpenAPI document lists every route with its method, parameters and error shape,
// and every documented operation is really served (no 404/405 for it).
#include <regex>

#include "http_fixture.h"

namespace tonewarden::http::fixture {
namespace {

using OpenApiTest = HttpServerTest;

// The API as designed (the expected value): method and path of every route.
const std::vector<std::pair<std::string, std::string>> kRoutes = {
    {"get", "/api/v1/status"},          {"get", "/api/v1/config"},
    {"get", "/api/v1/spectrum"},        {"get", "/api/v1/spectrogram"},
    {"get", "/api/v1/readings"},
    {"get", "/api/v1/series"},          {"get", "/api/v1/trends"},
    {"get", "/api/v1/alarms"},          {"get", "/api/v1/alarms/events"},
    {"post", "/api/v1/alarms/{alarm}/acknowledge"},
    {"post", "/api/v1/alarms/{alarm}/shelve"},
    {"get", "/api/v1/snapshots"},       {"get", "/api/v1/snapshots/{id}"},
    {"get", "/api/v1/annotations"},     {"post", "/api/v1/annotations"},
    {"post", "/api/v1/reload"},         {"get", "/api/v1/stream"},
    {"get", "/api/v1/openapi.json"},    {"get", "/metrics"},
    {"get", "/healthz"},                {"get", "/api/v1/evidence/{rig}/{file}"}};

json fetch_doc(httplib::Client& client) {
  const auto r = client.Get("/api/v1/openapi.json");
  EXPECT_TRUE(r && r->status == 200);
  return r ? json::parse(r->body, nullptr, false) : json();
}

TEST_F(OpenApiTest, ListsEveryRouteAndNothingElse) {
  const json doc = fetch_doc(*client);
  ASSERT_TRUE(doc.is_object());
  EXPECT_EQ(doc["openapi"].get<std::string>().substr(0, 2), "3.");
  size_t operations = 0;
  for (const auto& [path, item] : doc["paths"].items()) operations += item.size();
  EXPECT_EQ(operations, kRoutes.size());
  for (const auto& [method, path] : kRoutes)
    EXPECT_TRUE(doc["paths"].contains(path) && doc["paths"][path].contains(method))
        << method << " " << path;
}

TEST_F(OpenApiTest, ParametersBodiesAndErrorsAreDocumented) {
  const json doc = fetch_doc(*client);
  auto names = [&](const std::string& path, const std::string& method) {
    std::set<std::string> out;
    for (const auto& p : doc["paths"][path][method]["parameters"]) out.insert(p["name"]);
    return out;
  };
  EXPECT_EQ(names("/api/v1/trends", "get"),
            (std::set<std::string>{"series", "from", "to", "points", "format"}));
  EXPECT_EQ(names("/api/v1/alarms/events", "get"),
            (std::set<std::string>{"from", "to", "limit", "state", "rule"}));
  EXPECT_EQ(names("/api/v1/spectrum", "get"), (std::set<std::string>{"channel", "points"}));
  EXPECT_EQ(names("/api/v1/spectrogram", "get"),
            (std::set<std::string>{"channel", "rows", "points", "since"}));
  for (const char* status : {"400", "503"})
    EXPECT_TRUE(doc["paths"]["/api/v1/spectrogram"]["get"]["responses"].contains(status)) << status;
  EXPECT_EQ(names("/api/v1/snapshots/{id}", "get"), (std::set<std::string>{"id", "points"}));
  const json& points = doc["paths"]["/api/v1/trends"]["get"]["parameters"][3]["schema"];
  EXPECT_EQ(points["minimum"], 2);
  EXPECT_EQ(points["maximum"], 10000);
  const json& shelve = doc["paths"]["/api/v1/alarms/{alarm}/shelve"]["post"];
  const json& body = shelve["requestBody"]["content"]["application/json"]["schema"];
  EXPECT_EQ(body["required"], json({"user", "duration_s"}));
  EXPECT_EQ(body["additionalProperties"], false);
  for (const char* status : {"400", "401", "403", "404", "405", "413", "415"})
    EXPECT_TRUE(shelve["responses"].contains(status)) << status;
  EXPECT_EQ(shelve["responses"]["400"]["content"]["application/json"]["schema"]["$ref"],
            "#/components/schemas/Error");
  const json& err = doc["components"]["schemas"]["Error"]["properties"]["error"]["properties"];
  EXPECT_TRUE(err.contains("code") && err.contains("message") && err.contains("parameter"));
  // Every operation documents 405 and the error shape for each error it lists.
  for (const auto& [path, item] : doc["paths"].items())
    for (const auto& [method, op] : item.items()) {
      EXPECT_TRUE(op["responses"].contains("405")) << method << " " << path;
      for (const auto& [status, resp] : op["responses"].items())
        if (status[0] == '4' || status[0] == '5') {
          EXPECT_EQ(resp["content"]["application/json"]["schema"]["$ref"],
                    "#/components/schemas/Error")
              << method << " " << path << " " << status;
        }
    }
}

TEST_F(OpenApiTest, EveryDocumentedOperationIsServed) {
  const json doc = fetch_doc(*client);
  for (const auto& [path, item] : doc["paths"].items()) {
    std::string url = std::regex_replace(path, std::regex(R"(\{alarm\})"), "no_such_alarm");
    url = std::regex_replace(url, std::regex(R"(\{id\})"), "7");
    for (const auto& [method, op] : item.items()) {
      if (url == "/api/v1/stream") continue;  // covered by stream_test
      httplib::Result r = method == "get" ? client->Get(url) : client->Post(url, "", "application/json");
      ASSERT_TRUE(r) << method << " " << url;
      // Without parameters or token the answer may be 200, 400, 401 or 404 (unknown alarm),
      // but never "no such route" or "method not allowed".
      EXPECT_NE(r->status, 405) << method << " " << url;
      if (r->status == 404) {
        EXPECT_NE(json::parse(r->body, nullptr, false)["error"]["code"], "not_found")
            << method << " " << url;
      }
    }
  }
}

}  // namespace
}  // namespace tonewarden::http::fixture
