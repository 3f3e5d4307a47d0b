// Internal: the route table that drives dispatch, parameter validation and the OpenAPI
// document alike, so a route cannot exist without being documented (and vice versa).
#pragma once

#include <httplib.h>

#include <atomic>
#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include "json_codec.h"
#include "tonewarden/http/event_hub.h"
#include "tonewarden/http/providers.h"
#include "tonewarden/http/server.h"

namespace tonewarden::http::detail {

// Thrown by validators and handlers; the dispatcher turns it into the JSON error shape
// {"error":{"code","message","parameter"}}. Never escapes the server.
struct ApiError : std::runtime_error {
  ApiError(int status, std::string code, std::string message, std::string parameter = {})
      : std::runtime_error(message),
        status(status),
        code(std::move(code)),
        parameter(std::move(parameter)) {}
  int status;
  std::string code;
  std::string parameter;
};

enum class ParamType { kString, kInteger, kTime, kEnum };

struct ParamSpec {
  std::string name;
  bool in_path = false;
  ParamType type = ParamType::kString;
  bool required = false;
  bool repeated = false;  // may appear several times (or comma-separated)
  std::string description;
  int64_t min = 0, max = 0;         // kInteger bounds, inclusive
  std::vector<std::string> values;  // kEnum choices
  std::string default_text;         // for the document
};

enum class FieldType { kString, kInteger, kTime };

struct BodyField {
  std::string name;
  FieldType type = FieldType::kString;
  bool required = false;
  std::string description;
  size_t max_chars = 0;      // kString: 1..max_chars when required, 0..max_chars otherwise
  int64_t min = 0, max = 0;  // kInteger bounds, inclusive
};

// Shared state the handlers read: providers, the event hub, counters, config.
struct ServerState {
  ServerConfig config;
  Providers providers;
  AssetMap assets;
  EventHub hub;
  std::atomic<uint64_t> responses_by_class[5] = {};
  std::atomic<uint64_t> streams_open{0};
  std::atomic<uint64_t> streams_refused{0};
  std::string openapi_json;  // built once after the routes
  HttpStats stats() const;
};

struct Route;

// One request in flight.
struct Ctx {
  const httplib::Request& req;
  httplib::Response& res;
  const Route& route;
  ServerState& state;
  std::map<std::string, std::string> path_params;

  // Query parameter readers; each checks the route declares the parameter, that it appears
  // at most once (unless repeated) and its type and range; they throw ApiError(400).
  std::optional<std::string> text(const std::string& name) const;
  int64_t integer(const std::string& name, int64_t fallback) const;
  WallTimeMs time(const std::string& name, WallTimeMs fallback) const;
  std::string choice(const std::string& name, const std::string& fallback) const;
  std::vector<std::string> list(const std::string& name) const;  // repeated or a,b,c
  const std::string& path(const std::string& name) const;

  // The JSON object body, checked against route.body (types, lengths, required, unknown).
  Json body() const;

  void json(const Json& j, int status = 200) const;
};

using Handler = std::function<void(Ctx&)>;

struct Route {
  std::string method;  // GET or POST
  std::string path;    // "/api/v1/alarms/{alarm}/acknowledge"
  std::string tag;     // OpenAPI grouping
  std::string summary;
  std::vector<ParamSpec> params;
  std::vector<BodyField> body;
  bool mutating = false;          // needs the bearer token even on loopback
  std::vector<int> errors;        // error statuses this route may answer (documented)
  int success_status = 200;
  std::string success_schema;     // components/schemas name, "" for text bodies
  std::string success_type = "application/json";
  std::string success_description;
  Handler handler;

  std::vector<std::string> segments;  // filled by finalize_routes
  const ParamSpec* find_param(const std::string& name) const;
};

// Builders for the common parameter kinds.
inline ParamSpec time_param(const std::string& name, const std::string& what) {
  ParamSpec p{name};
  p.type = ParamType::kTime;
  p.description = what + " (RFC 3339 or unix milliseconds)";
  return p;
}

inline ParamSpec int_param(const std::string& name, int64_t min, int64_t max, int64_t def,
                    const std::string& what) {
  ParamSpec p{name};
  p.type = ParamType::kInteger;
  p.min = min;
  p.max = max;
  p.default_text = std::to_string(def);
  p.description = what;
  return p;
}

inline ParamSpec string_param(const std::string& name, const std::string& what, bool required = false) {
  ParamSpec p{name};
  p.required = required;
  p.description = what;
  return p;
}

void add_api_routes(std::vector<Route>& routes);      // status, config, live, trends
void add_history_routes(std::vector<Route>& routes);  // alarms, snapshots, annotations, reload
void add_system_routes(std::vector<Route>& routes);   // stream, metrics, healthz, openapi
void add_evidence_routes(std::vector<Route>& routes); // raw clips around alarms

// Splits paths, adds the standard error statuses. Call once after adding routes.
void finalize_routes(std::vector<Route>& routes);
// Matches `path` against a pattern; fills path params. Segments are already decoded.
bool match_route(const Route& route, const std::vector<std::string>& segments,
                 std::map<std::string, std::string>* params);
std::vector<std::string> split_path(const std::string& path);

// {"error":{...}} bodies and the OpenAPI document.
void set_error(httplib::Response& res, int status, const std::string& code,
               const std::string& message, const std::string& parameter = {});
std::string build_openapi(const std::vector<Route>& routes, const std::string& version);

// Maps a provider Error to an ApiError: kNotFound -> 404, kInvalidArgument -> 409,
// kUnavailable -> 503, else 500. `what` prefixes the message.
[[noreturn]] void throw_provider_error(const base::Error& e, const std::string& what,
                                       const std::string& parameter = {});
// Throws 503 "unavailable" when a provider is not wired in.
template <typename P>
P& need(P* provider, const char* name) {
  if (provider == nullptr)
    throw ApiError(503, "unavailable", std::string(name) + " provider is not available");
  return *provider;
}

}  // namespace tonewarden::http::detail
