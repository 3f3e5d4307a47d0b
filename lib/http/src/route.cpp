// Route matching, parameter and body validation, and the JSON error shape (see route.h).
#include "route.h"

#include <charconv>

namespace tonewarden::http::detail {

HttpStats ServerState::stats() const {
  HttpStats s;
  for (size_t i = 0; i < 5; ++i) s.responses_by_class[i] = responses_by_class[i].load();
  s.event_streams_open = streams_open.load();
  s.events_dropped = hub.num_dropped();
  s.streams_refused = streams_refused.load();
  return s;
}

void set_error(httplib::Response& res, int status, const std::string& code,
               const std::string& message, const std::string& parameter) {
  Json err{{"code", code}, {"message", message}};
  if (!parameter.empty()) err["parameter"] = parameter;
  res.status = status;
  res.set_content(dump(Json{{"error", std::move(err)}}), "application/json");
}

void throw_provider_error(const base::Error& e, const std::string& what,
                          const std::string& parameter) {
  const std::string message = what + ": " + e.message;
  switch (e.code) {
    case base::ErrorCode::kNotFound:
      throw ApiError(404, "not_found", message, parameter);
    case base::ErrorCode::kInvalidArgument:
      throw ApiError(409, "conflict", message, parameter);
    case base::ErrorCode::kUnavailable:
    case base::ErrorCode::kIo:
      throw ApiError(503, "unavailable", message);
    default:
      throw ApiError(500, "internal", message);
  }
}

std::vector<std::string> split_path(const std::string& path) {
  std::vector<std::string> out;
  size_t start = 1;
  while (start <= path.size()) {
    size_t end = path.find('/', start);
    if (end == std::string::npos) end = path.size();
    out.push_back(path.substr(start, end - start));
    start = end + 1;
  }
  return out;
}

void finalize_routes(std::vector<Route>& routes) {
  for (auto& r : routes) {
    r.segments = split_path(r.path);
    auto add = [&](int status) {
      for (int s : r.errors)
        if (s == status) return;
      r.errors.push_back(status);
    };
    bool has_query = false;
    for (const auto& p : r.params) has_query |= !p.in_path;
    if (has_query || !r.body.empty() || r.path.find('{') != std::string::npos) add(400);
    add(401);  // mutating routes always; every route on a non-loopback address
    if (r.mutating) add(403);
    if (!r.body.empty()) {
      add(413);
      add(415);
    }
    add(405);
  }
}

bool match_route(const Route& route, const std::vector<std::string>& segments,
                 std::map<std::string, std::string>* params) {
  if (route.segments.size() != segments.size()) return false;
  for (size_t i = 0; i < segments.size(); ++i) {
    const std::string& pat = route.segments[i];
    if (pat.size() > 2 && pat.front() == '{' && pat.back() == '}') {
      if (segments[i].empty()) return false;
      if (params) (*params)[pat.substr(1, pat.size() - 2)] = segments[i];
    } else if (pat != segments[i]) {
      return false;
    }
  }
  return true;
}

const ParamSpec* Route::find_param(const std::string& name) const {
  for (const auto& p : params)
    if (p.name == name) return &p;
  return nullptr;
}

// ---------- Ctx: query parameters ----------

namespace {

const ParamSpec& spec_of(const Route& route, const std::string& name) {
  const ParamSpec* p = route.find_param(name);
  // A handler reading an undeclared parameter is a bug in the route table.
  if (p == nullptr) throw ApiError(500, "internal", "undeclared parameter " + name);
  return *p;
}

bool parse_i64(const std::string& s, int64_t* out) {
  if (s.empty()) return false;
  auto [ptr, ec] = std::from_chars(s.data(), s.data() + s.size(), *out);
  return ec == std::errc() && ptr == s.data() + s.size();
}

// base::parse_time, guarded: unix milliseconds beyond 16 digits (about 300 000 years) are
// refused here rather than handed on.
bool parse_wall_time(const std::string& s, WallTimeMs* out) {
  size_t digits = 0;
  for (char c : s) digits += (c >= '0' && c <= '9') ? 1 : 0;
  const bool numeric = digits == s.size() || (digits + 1 == s.size() && s[0] == '-');
  if (numeric && digits > 16) return false;
  return base::parse_time(s, out);
}

}  // namespace

std::optional<std::string> Ctx::text(const std::string& name) const {
  const ParamSpec& spec = spec_of(route, name);
  const size_t n = req.get_param_value_count(name);
  if (n == 0) {
    if (spec.required)
      throw ApiError(400, "missing_parameter", "query parameter '" + name + "' is required",
                     name);
    return std::nullopt;
  }
  if (n > 1 && !spec.repeated)
    throw ApiError(400, "bad_parameter", "query parameter '" + name + "' given " +
                                             std::to_string(n) + " times; expected once",
                   name);
  std::string v = req.get_param_value(name);
  if (v.empty())
    throw ApiError(400, "bad_parameter", "query parameter '" + name + "' is empty", name);
  return v;
}

int64_t Ctx::integer(const std::string& name, int64_t fallback) const {
  const ParamSpec& spec = spec_of(route, name);
  auto v = text(name);
  if (!v) return fallback;
  int64_t x = 0;
  if (!parse_i64(*v, &x))
    throw ApiError(400, "bad_parameter",
                   "query parameter '" + name + "' must be an integer, got '" + *v + "'", name);
  if (x < spec.min || x > spec.max)
    throw ApiError(400, "out_of_range",
                   "query parameter '" + name + "' must be in " + std::to_string(spec.min) +
                       ".." + std::to_string(spec.max) + ", got " + *v,
                   name);
  return x;
}

WallTimeMs Ctx::time(const std::string& name, WallTimeMs fallback) const {
  auto v = text(name);
  if (!v) return fallback;
  WallTimeMs t;
  if (!parse_wall_time(*v, &t))
    throw ApiError(400, "bad_time",
                   "query parameter '" + name +
                       "' must be RFC 3339 (2026-12-02T03:00:00Z) or unix milliseconds, got '" +
                       *v + "'",
                   name);
  return t;
}

std::string Ctx::choice(const std::string& name, const std::string& fallback) const {
  const ParamSpec& spec = spec_of(route, name);
  auto v = text(name);
  if (!v) return fallback;
  for (const auto& allowed : spec.values)
    if (*v == allowed) return *v;
  std::string all;
  for (const auto& allowed : spec.values) all += (all.empty() ? "" : ", ") + allowed;
  throw ApiError(400, "bad_parameter",
                 "query parameter '" + name + "' must be one of " + all + ", got '" + *v + "'",
                 name);
}

std::vector<std::string> Ctx::list(const std::string& name) const {
  (void)text(name);  // required/once/empty checks
  std::vector<std::string> out;
  const size_t n = req.get_param_value_count(name);
  for (size_t i = 0; i < n; ++i) {
    const std::string v = req.get_param_value(name, i);
    size_t start = 0;
    while (start <= v.size()) {
      size_t end = v.find(',', start);
      if (end == std::string::npos) end = v.size();
      if (end == start)
        throw ApiError(400, "bad_parameter",
                       "query parameter '" + name + "' has an empty item in '" + v + "'", name);
      out.push_back(v.substr(start, end - start));
      start = end + 1;
    }
  }
  return out;
}

const std::string& Ctx::path(const std::string& name) const {
  auto it = path_params.find(name);
  if (it == path_params.end()) throw ApiError(500, "internal", "no path parameter " + name);
  return it->second;
}

void Ctx::json(const Json& j, int status) const {
  res.status = status;
  res.set_content(dump(j), "application/json");
}

// ---------- Ctx: JSON body ----------

Json Ctx::body() const {
  const std::string type = req.get_header_value("Content-Type");
  if (!type.empty() && type.rfind("application/json", 0) != 0)
    throw ApiError(415, "unsupported_media_type",
                   "request body must be application/json, got '" + type + "'", "body");
  if (req.body.empty())
    throw ApiError(400, "missing_body", "request body is empty; expected a JSON object", "body");
  Json j;
  try {
    j = Json::parse(req.body);
  } catch (const Json::parse_error& e) {
    std::string what = e.what();
    const auto pos = what.find("] ");  // drop the library's "[json.exception...]" tag
    if (pos != std::string::npos) what = what.substr(pos + 2);
    throw ApiError(400, "bad_json", "request body is not valid JSON: " + what, "body");
  }
  if (!j.is_object())
    throw ApiError(400, "bad_json", "request body must be a JSON object", "body");
  for (const auto& [key, value] : j.items()) {
    const BodyField* field = nullptr;
    for (const auto& f : route.body)
      if (f.name == key) field = &f;
    if (field == nullptr)
      throw ApiError(400, "unknown_field", "request body has unknown field '" + key + "'", key);
    (void)value;
  }
  for (const auto& f : route.body) {
    auto it = j.find(f.name);
    if (it == j.end() || it->is_null()) {
      if (f.required)
        throw ApiError(400, "missing_field", "request body needs field '" + f.name + "'",
                       f.name);
      continue;
    }
    switch (f.type) {
      case FieldType::kString: {
        if (!it->is_string())
          throw ApiError(400, "bad_field", "field '" + f.name + "' must be a string", f.name);
        const auto& s = it->get_ref<const std::string&>();
        if ((f.required && s.empty()) || s.size() > f.max_chars)
          throw ApiError(400, "bad_field",
                         "field '" + f.name + "' must have " + (f.required ? "1" : "0") + ".." +
                             std::to_string(f.max_chars) + " characters, got " +
                             std::to_string(s.size()),
                         f.name);
        for (char c : s)
          if (static_cast<unsigned char>(c) < 0x20 && c != '\n' && c != '\t')
            throw ApiError(400, "bad_field", "field '" + f.name + "' has control characters",
                           f.name);
        break;
      }
      case FieldType::kInteger: {
        if (!it->is_number_integer())
          throw ApiError(400, "bad_field", "field '" + f.name + "' must be an integer",
                         f.name);
        const int64_t v = it->get<int64_t>();
        if (v < f.min || v > f.max)
          throw ApiError(400, "out_of_range",
                         "field '" + f.name + "' must be in " + std::to_string(f.min) + ".." +
                             std::to_string(f.max) + ", got " + std::to_string(v),
                         f.name);
        break;
      }
      case FieldType::kTime: {
        WallTimeMs t;
        const std::string text =
            it->is_number_integer() ? std::to_string(it->get<int64_t>())
            : it->is_string()       ? it->get<std::string>()
                                    : std::string();
        if (!parse_wall_time(text, &t))
          throw ApiError(400, "bad_time",
                         "field '" + f.name + "' must be RFC 3339 or unix milliseconds",
                         f.name);
        j[f.name] = t.unix_ms;  // normalised to unix ms for the handler
        break;
      }
    }
  }
  return j;
}

}  // namespace tonewarden::http::detail
