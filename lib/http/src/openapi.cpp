// The OpenAPI 3 document, built from the route table (paths, parameters, bodies, errors) plus
// the response schemas below, so every served route is documented by construction.
#include <algorithm>

#include "route.h"
#include "tonewarden/http/limits.h"

namespace tonewarden::http::detail {
namespace {

// Response schemas. Times are RFC 3339 UTC strings; numbers may be null (no value).
constexpr const char* kSchemas = R"json({
  "Error": {"type": "object", "required": ["error"], "properties": {"error": {
    "type": "object", "required": ["code", "message"], "properties": {
      "code": {"type": "string", "description": "machine-readable, e.g. bad_time, unknown_series"},
      "message": {"type": "string", "description": "one line for people"},
      "parameter": {"type": "string", "description": "the query parameter, path parameter or body field at fault"}}}}},
  "Time": {"type": "string", "format": "date-time", "nullable": true},
  "Number": {"type": "number", "nullable": true},
  "Source": {"type": "object", "properties": {
    "name": {"type": "string"}, "state": {"type": "string"}, "detail": {"type": "string"},
    "sample_rate_hz": {"$ref": "#/components/schemas/Number"},
    "frames": {"type": "integer"}, "overflows": {"type": "integer"}, "drops": {"type": "integer"},
    "last_frame": {"$ref": "#/components/schemas/Time"},
    "evidence": {"type": "object", "description": "raw clips around alarm activations since start", "properties": {
      "clips": {"type": "integer"}, "skipped": {"type": "integer"}, "failures": {"type": "integer"}}}}},
  "Status": {"type": "object", "properties": {
    "version": {"type": "string"}, "uptime_s": {"type": "number"}, "healthy": {"type": "boolean"},
    "unhealthy_reason": {"type": "string"},
    "sources": {"type": "array", "items": {"$ref": "#/components/schemas/Source"}},
    "storage": {"type": "object", "properties": {"state": {"type": "string"}, "detail": {"type": "string"},
      "rows_written": {"type": "integer"}, "write_errors": {"type": "integer"}}}}},
  "Config": {"type": "object", "properties": {
    "rigs": {"type": "array", "items": {"type": "object", "properties": {"id": {"type": "string"},
      "description": {"type": "string"}, "nominal_speed_rpm": {"$ref": "#/components/schemas/Number"}}}},
    "channels": {"type": "array", "items": {"type": "object", "properties": {"id": {"type": "string"},
      "rig": {"type": "string"}, "unit": {"type": "string"}, "sensitivity": {"$ref": "#/components/schemas/Number"},
      "sample_rate_hz": {"$ref": "#/components/schemas/Number"}}}},
    "targets": {"type": "array", "items": {"type": "object", "properties": {"id": {"type": "string"},
      "rig": {"type": "string"}, "channel": {"type": "string"}, "kind": {"type": "string"},
      "description": {"type": "string"}}}},
    "rules": {"type": "array", "items": {"type": "object", "properties": {"id": {"type": "string"},
      "rig": {"type": "string"}, "series": {"type": "string"}, "unit": {"type": "string"},
      "warning": {"$ref": "#/components/schemas/Number"}, "critical": {"$ref": "#/components/schemas/Number"},
      "hysteresis": {"$ref": "#/components/schemas/Number"}, "on_delay_s": {"type": "number"},
      "off_delay_s": {"type": "number"}}}}}},
  "Spectrum": {"type": "object", "properties": {
    "channel": {"type": "string"}, "t": {"$ref": "#/components/schemas/Time"}, "unit": {"type": "string"},
    "scaling": {"type": "string"}, "bin_hz": {"type": "number"}, "resolution_hz": {"type": "number"},
    "num_bins": {"type": "integer", "description": "bins before decimation"},
    "decimation": {"type": "string", "enum": ["max"]},
    "frequency_hz": {"type": "array", "items": {"type": "number"}, "description": "frequency of the bin holding each bucket's maximum"},
    "magnitude": {"type": "array", "items": {"$ref": "#/components/schemas/Number"}},
    "peaks": {"type": "array", "items": {"type": "object", "properties": {"frequency_hz": {"type": "number"}, "amplitude": {"type": "number"}}}},
    "markers": {"type": "array", "items": {"type": "object", "properties": {"target": {"type": "string"}, "frequency_hz": {"type": "number"}, "amplitude": {"$ref": "#/components/schemas/Number"}}}},
    "thresholds": {"type": "array", "items": {"type": "object", "properties": {"rule": {"type": "string"}, "severity": {"type": "string"}, "level": {"type": "number"}, "f_lo_hz": {"type": "number"}, "f_hi_hz": {"type": "number"}}}}}},
  "Spectrogram": {"type": "object", "properties": {
    "channel": {"type": "string"}, "unit": {"type": "string"},
    "level": {"type": "string", "description": "what the dB values are: dB re 1 unit RMS, i.e. 10*log10 of power in unit^2; -400 for no power"},
    "bin_hz": {"type": "number"}, "num_bins": {"type": "integer", "description": "bins before decimation"},
    "decimation": {"type": "string", "enum": ["max"]},
    "frequency_hz": {"type": "array", "items": {"type": "number"}, "description": "lowest frequency of each point's bucket; a bucket ends where the next begins, the last at max_frequency_hz"},
    "max_frequency_hz": {"type": "number"},
    "capacity": {"type": "integer", "description": "rows the daemon keeps per channel"},
    "order": {"type": "string", "enum": ["oldest_first"]},
    "rows": {"type": "array", "items": {"type": "object", "properties": {
      "t": {"$ref": "#/components/schemas/Time"},
      "db": {"type": "array", "items": {"$ref": "#/components/schemas/Number"}, "description": "bucket maxima, dB rounded to 0.1"}}}}}},
  "Reading": {"type": "object", "properties": {
    "series": {"type": "string"}, "rig": {"type": "string"}, "channel": {"type": "string"},
    "target": {"type": "string"}, "metric": {"type": "string"}, "unit": {"type": "string"},
    "value": {"$ref": "#/components/schemas/Number"}, "t": {"$ref": "#/components/schemas/Time"}}},
  "Readings": {"type": "object", "properties": {"readings": {"type": "array", "items": {"$ref": "#/components/schemas/Reading"}}}},
  "SeriesList": {"type": "object", "properties": {"series": {"type": "array", "items": {"type": "string"}}}},
  "Trends": {"type": "object", "properties": {
    "from": {"$ref": "#/components/schemas/Time"}, "to": {"$ref": "#/components/schemas/Time"},
    "max_points": {"type": "integer"},
    "series": {"type": "array", "items": {"type": "object", "properties": {
      "series": {"type": "string"}, "unit": {"type": "string"}, "resolution": {"type": "string"},
      "t": {"type": "array", "items": {"type": "string", "format": "date-time"}},
      "mean": {"type": "array", "items": {"$ref": "#/components/schemas/Number"}},
      "min": {"type": "array", "items": {"$ref": "#/components/schemas/Number"}},
      "max": {"type": "array", "items": {"$ref": "#/components/schemas/Number"}},
      "count": {"type": "array", "items": {"type": "integer"}}}}}}},
  "AlarmState": {"type": "object", "properties": {
    "id": {"type": "string"}, "rule": {"type": "string"}, "rig": {"type": "string"}, "series": {"type": "string"},
    "severity": {"type": "string", "enum": ["none", "warning", "critical"]},
    "state": {"type": "string", "enum": ["normal", "unacknowledged", "acknowledged", "returned_unacknowledged", "shelved"]},
    "value": {"$ref": "#/components/schemas/Number"}, "since": {"$ref": "#/components/schemas/Time"},
    "shelved_until": {"$ref": "#/components/schemas/Time"}, "acknowledged_by": {"type": "string"},
    "message": {"type": "string"}}},
  "AlarmStates": {"type": "object", "properties": {"alarms": {"type": "array", "items": {"$ref": "#/components/schemas/AlarmState"}}}},
  "AlarmStateReply": {"type": "object", "properties": {"alarm": {"$ref": "#/components/schemas/AlarmState"}}},
  "AlarmEvent": {"type": "object", "properties": {
    "id": {"type": "integer"}, "t": {"$ref": "#/components/schemas/Time"}, "alarm": {"type": "string"},
    "rule": {"type": "string"}, "severity": {"type": "string"}, "state": {"type": "string"},
    "value": {"$ref": "#/components/schemas/Number"}, "user": {"type": "string"},
    "comment": {"type": "string"}, "message": {"type": "string"},
    "evidence": {"type": "string", "nullable": true, "description": "URL of the raw FLAC clip around this activation (GET /api/v1/evidence/...); null when none"}}},
  "AlarmEvents": {"type": "object", "properties": {"events": {"type": "array", "items": {"$ref": "#/components/schemas/AlarmEvent"}}}},
  "SnapshotInfo": {"type": "object", "properties": {
    "id": {"type": "integer"}, "t": {"$ref": "#/components/schemas/Time"}, "rig": {"type": "string"},
    "channel": {"type": "string"}, "reason": {"type": "string"}, "alarm": {"type": "string"},
    "unit": {"type": "string"}, "window": {"type": "string"}, "bin_hz": {"type": "number"},
    "fft_length": {"type": "integer"}, "averages": {"type": "integer"}}},
  "Snapshots": {"type": "object", "properties": {"snapshots": {"type": "array", "items": {"$ref": "#/components/schemas/SnapshotInfo"}}}},
  "SnapshotReply": {"type": "object", "properties": {"snapshot": {"allOf": [
    {"$ref": "#/components/schemas/SnapshotInfo"},
    {"type": "object", "properties": {"num_bins": {"type": "integer"}, "decimation": {"type": "string"},
      "frequency_hz": {"type": "array", "items": {"type": "number"}},
      "magnitude": {"type": "array", "items": {"$ref": "#/components/schemas/Number"}}}}]}}},
  "Annotation": {"type": "object", "properties": {
    "id": {"type": "integer"}, "t": {"$ref": "#/components/schemas/Time"}, "rig": {"type": "string"},
    "user": {"type": "string"}, "text": {"type": "string"}}},
  "Annotations": {"type": "object", "properties": {"annotations": {"type": "array", "items": {"$ref": "#/components/schemas/Annotation"}}}},
  "AnnotationReply": {"type": "object", "properties": {"annotation": {"$ref": "#/components/schemas/Annotation"}}},
  "Accepted": {"type": "object", "properties": {"status": {"type": "string"}}}
})json";

const char* status_text(int status) {
  switch (status) {
    case 400: return "bad parameter, body field or path; error.parameter names it";
    case 401: return "missing or invalid bearer token (changes always need it; every route "
                     "does when the server listens on a non-loopback address)";
    case 403: return "no token is configured on this server, so changes are disabled";
    case 404: return "unknown id";
    case 405: return "method not allowed; the Allow header lists the allowed ones";
    case 409: return "the current state refuses the request";
    case 413: return "request body larger than the limit";
    case 415: return "request body is not application/json";
    case 503: return "provider unavailable, no data yet, or too many event streams";
    default: return "error";
  }
}

Json param_schema(const ParamSpec& p) {
  Json s;
  switch (p.type) {
    case ParamType::kString: s = {{"type", "string"}}; break;
    case ParamType::kInteger: s = {{"type", "integer"}, {"minimum", p.min}, {"maximum", p.max}}; break;
    case ParamType::kTime:
      s = {{"oneOf", {{{"type", "string"}, {"format", "date-time"}},
                      {{"type", "integer"}, {"description", "unix milliseconds"}}}}};
      break;
    case ParamType::kEnum: s = {{"type", "string"}, {"enum", p.values}}; break;
  }
  if (!p.default_text.empty()) {
    if (p.type == ParamType::kInteger) s["default"] = std::stoll(p.default_text);
    else s["default"] = p.default_text;
  }
  if (p.repeated) s = {{"type", "array"}, {"items", s}};
  return s;
}

Json body_schema(const std::vector<BodyField>& fields) {
  Json props = Json::object(), required = Json::array();
  for (const auto& f : fields) {
    Json s;
    switch (f.type) {
      case FieldType::kString:
        s = {{"type", "string"}, {"minLength", f.required ? 1 : 0}, {"maxLength", f.max_chars}};
        break;
      case FieldType::kInteger:
        s = {{"type", "integer"}, {"minimum", f.min}, {"maximum", f.max}};
        break;
      case FieldType::kTime:
        s = {{"oneOf", {{{"type", "string"}, {"format", "date-time"}}, {{"type", "integer"}}}}};
        break;
    }
    s["description"] = f.description;
    props[f.name] = s;
    if (f.required) required.push_back(f.name);
  }
  return {{"type", "object"},
          {"properties", props},
          {"required", required},
          {"additionalProperties", false}};
}

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

}  // namespace

std::string build_openapi(const std::vector<Route>& routes, const std::string& version) {
  Json paths = Json::object();
  for (const auto& r : routes) {
    Json op;
    op["summary"] = r.summary;
    op["tags"] = {r.tag};
    std::string id = lower(r.method);
    for (char ch : r.path) id.push_back(std::isalnum(static_cast<unsigned char>(ch)) ? ch : '_');
    op["operationId"] = id;
    Json params = Json::array();
    for (const auto& p : r.params) {
      Json j{{"name", p.name},
             {"in", p.in_path ? "path" : "query"},
             {"required", p.required || p.in_path},
             {"description", p.description},
             {"schema", param_schema(p)}};
      if (p.repeated) {
        j["style"] = "form";
        j["explode"] = true;
      }
      params.push_back(j);
    }
    if (!params.empty()) op["parameters"] = params;
    if (!r.body.empty())
      op["requestBody"] = {{"required", true},
                           {"content", {{"application/json", {{"schema", body_schema(r.body)}}}}}};
    Json responses = Json::object();
    Json ok{{"description", r.success_description.empty() ? "success" : r.success_description}};
    Json schema = r.success_schema.empty()
                      ? Json{{"type", "string"}}
                      : Json{{"$ref", "#/components/schemas/" + r.success_schema}};
    ok["content"][r.success_type] = {{"schema", schema}};
    if (r.path == "/api/v1/trends") ok["content"]["text/csv"] = {{"schema", {{"type", "string"}}}};
    responses[std::to_string(r.success_status)] = ok;
    std::vector<int> errors = r.errors;
    std::sort(errors.begin(), errors.end());
    for (int s : errors) {
      Json e{{"description", status_text(s)},
             {"content",
              {{"application/json", {{"schema", {{"$ref", "#/components/schemas/Error"}}}}}}}};
      if (s == 401) e["headers"]["WWW-Authenticate"] = {{"schema", {{"type", "string"}}}};
      if (s == 405) e["headers"]["Allow"] = {{"schema", {{"type", "string"}}}};
      responses[std::to_string(s)] = e;
    }
    op["responses"] = responses;
    op["security"] = r.mutating ? Json::array({{{"bearer", Json::array()}}})
                                : Json::array({Json::object(), {{"bearer", Json::array()}}});
    paths[r.path][lower(r.method)] = op;
  }
  Json doc{
      {"openapi", "3.0.3"},
      {"info",
       {{"title", "tonewarden HTTP API"},
        {"version", version.empty() ? "0" : version},
        {"description",
         "Times in responses are RFC 3339 UTC; time parameters accept RFC 3339 or unix "
         "milliseconds. Every error is {\"error\":{\"code\",\"message\",\"parameter\"}}. "
         "Unknown paths answer 404, unknown query parameters 400, bodies beyond " +
             std::to_string(kMaxPayloadBytes) +
             " bytes 413. Static dashboard files are served at / from memory."}}},
      {"paths", paths},
      {"components",
       {{"schemas", Json::parse(kSchemas)},
        {"securitySchemes", {{"bearer", {{"type", "http"}, {"scheme", "bearer"}}}}}}}};
  return doc.dump(1);
}

}  // namespace tonewarden::http::detail
