// The HTTP server: wiring of cpp-httplib, request dispatch, auth and response headers.
//
// DESIGN. One route table (route.h) drives dispatch, parameter checks and the OpenAPI
// document. Every request first meets the pre-routing hook, which does all that needs no body:
// path safety, route lookup (404), method check (405 + Allow), the bearer token (401),
// unknown query parameters (400), and then runs GET handlers right there. Requests that carry
// a body (POST) are handed back to the library, which reads the body within kMaxPayloadBytes
// (413 beyond) and calls one catch-all handler that dispatches again by the same table.
// The post-routing hook counts responses by status class and adds the security headers; the
// error hook gives library-made errors (413, 400 for a malformed request line...) the JSON
// error shape. Threads: the listener thread accepts; a pool of kRequestWorkerThreads plus
// max_event_streams threads serves connections (a keep-alive connection or an event stream
// holds its thread). stop() closes the event hub first so streams end, then the socket.
#include "tonewarden/http/server.h"

#include <cctype>
#include <chrono>
#include <mutex>
#include <thread>

#include "route.h"
#include "tonewarden/http/auth.h"

namespace tonewarden::http {

using detail::ApiError;
using detail::Ctx;
using detail::Route;

namespace {

// 'self' only; no inline script; charts draw into canvas; data: for small inline images.
constexpr const char* kContentSecurityPolicy =
    "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; "
    "connect-src 'self'; font-src 'self'; object-src 'none'; base-uri 'none'; "
    "form-action 'self'; frame-ancestors 'none'";

bool has_body_semantics(const std::string& method) {
  return method == "POST" || method == "PUT" || method == "PATCH" || method == "DELETE";
}

std::string raw_path_of(const httplib::Request& req) {
  const auto q = req.target.find('?');
  return q == std::string::npos ? req.target : req.target.substr(0, q);
}

// The system's library compresses with brotli at its slowest setting whenever a client offers
// it: 230 ms for one 1 s spectrum poll, 1.46 s for a 690 KB spectrogram, against 10 and 68 ms
// with gzip. Take "br" out of Accept-Encoding so it picks gzip. The request is the library's
// own non-const object, handed to the pre-routing handler as const.
void offer_gzip_only(const httplib::Request& req) {
  auto& headers = const_cast<httplib::Headers&>(req.headers);
  const auto [first, last] = headers.equal_range("Accept-Encoding");  // case-insensitive keys
  for (auto it = first; it != last; ++it) {
    std::string kept;
    size_t start = 0;
    while (start <= it->second.size()) {
      size_t end = it->second.find(',', start);
      if (end == std::string::npos) end = it->second.size();
      std::string token = it->second.substr(start, end - start);
      const size_t a = token.find_first_not_of(" \t");
      token = a == std::string::npos ? "" : token.substr(a, token.find_last_not_of(" \t") - a + 1);
      std::string name = token.substr(0, token.find(';'));
      name.erase(name.find_last_not_of(" \t") + 1);
      const bool brotli = name.size() == 2 && std::tolower(static_cast<unsigned char>(name[0])) == 'b' &&
                          std::tolower(static_cast<unsigned char>(name[1])) == 'r';
      if (!token.empty() && !brotli) kept += (kept.empty() ? "" : ", ") + token;
      start = end + 1;
    }
    it->second = kept;
  }
}

}  // namespace

base::Status validate(const ServerConfig& c) {
  using base::ErrorCode;
  if (c.bind_address.empty())
    return base::make_error(ErrorCode::kInvalidArgument, "http bind address is empty");
  if (c.port < 0 || c.port > 65535)
    return base::make_error(ErrorCode::kInvalidArgument,
                            "http port must be in 0..65535, got " + std::to_string(c.port));
  if (c.max_event_streams < 1 || c.max_event_streams > kMaxMaxEventStreams)
    return base::make_error(ErrorCode::kInvalidArgument,
                            "http max_event_streams must be in 1.." +
                                std::to_string(kMaxMaxEventStreams) + ", got " +
                                std::to_string(c.max_event_streams));
  if (!c.token.empty()) {
    auto st = validate_token(c.token);
    if (!st) return std::move(st).error().with_context("http token");
  }
  if (c.token_on_every_route && c.token.empty())
    return base::make_error(ErrorCode::kInvalidArgument,
                            "http: token_on_every_route needs a bearer token");
  if (!is_loopback_address(c.bind_address) && c.token.empty())
    return base::make_error(ErrorCode::kInvalidArgument,
                            "http: refusing to listen on non-loopback address " + c.bind_address +
                                " without a bearer token; set one or bind to 127.0.0.1");
  return base::Status::success();
}

struct Server::Impl {
  detail::ServerState state;
  std::vector<Route> routes;
  httplib::Server svr;
  std::thread listener;
  std::mutex life_mu;  // start/stop
  int bound_port = 0;
  bool started = false;
  bool stopped = false;
  bool token_everywhere = false;
  std::atomic<bool> listener_done{false};

  void install();
  httplib::Server::HandlerResponse pre_route(const httplib::Request& req, httplib::Response& res);
  void dispatch(const httplib::Request& req, httplib::Response& res);
  const Route* find(const httplib::Request& req, std::map<std::string, std::string>* params,
                    std::vector<const Route*>* same_path) const;
  bool authorized(const httplib::Request& req, httplib::Response& res, bool mutating) const;
  void run(const Route& route, const httplib::Request& req, httplib::Response& res,
           std::map<std::string, std::string> params);
  bool serve_asset(const httplib::Request& req, httplib::Response& res) const;
};

const Route* Server::Impl::find(const httplib::Request& req,
                                std::map<std::string, std::string>* params,
                                std::vector<const Route*>* same_path) const {
  const auto segments = detail::split_path(req.path);
  const std::string method = req.method == "HEAD" ? "GET" : req.method;
  const Route* hit = nullptr;
  for (const auto& r : routes) {
    std::map<std::string, std::string> p;
    if (!detail::match_route(r, segments, &p)) continue;
    if (same_path) same_path->push_back(&r);
    if (r.method == method && hit == nullptr) {
      hit = &r;
      if (params) *params = std::move(p);
    }
  }
  return hit;
}

bool Server::Impl::authorized(const httplib::Request& req, httplib::Response& res,
                              bool mutating) const {
  if (!mutating && !token_everywhere) return true;
  if (state.config.token.empty()) {  // loopback without a token: read-only server
    detail::set_error(res, 403, "changes_disabled",
                      "this server has no bearer token configured, so changes are disabled");
    return false;
  }
  const std::string header = req.get_header_value("Authorization");
  if (constant_time_equals(bearer_token(header), state.config.token)) return true;
  res.set_header("WWW-Authenticate", "Bearer realm=\"tonewarden\"");
  detail::set_error(res, 401, "unauthorized",
                    header.empty() ? "this request needs 'Authorization: Bearer <token>'"
                                   : "the bearer token is not valid");
  return false;
}

bool Server::Impl::serve_asset(const httplib::Request& req, httplib::Response& res) const {
  const std::string key = req.path == "/" ? "/index.html" : req.path;
  auto it = state.assets.find(key);
  if (it == state.assets.end()) return false;
  res.status = 200;
  res.set_header("Cache-Control", "no-cache");
  res.set_content(it->second.bytes, it->second.content_type);
  return true;
}

void Server::Impl::run(const Route& route, const httplib::Request& req, httplib::Response& res,
                       std::map<std::string, std::string> params) {
  Ctx ctx{req, res, route, state, std::move(params)};
  try {
    route.handler(ctx);
  } catch (const ApiError& e) {
    detail::set_error(res, e.status, e.code, e.what(), e.parameter);
  } catch (const std::exception& e) {
    detail::set_error(res, 500, "internal", "internal error while serving " + route.path);
    if (state.providers.on_internal_error)
      state.providers.on_internal_error(std::string("http ") + req.method + " " + req.path +
                                        ": " + e.what());
  }
}

httplib::Server::HandlerResponse Server::Impl::pre_route(const httplib::Request& req,
                                                         httplib::Response& res) {
  using HR = httplib::Server::HandlerResponse;
  offer_gzip_only(req);
  if (!is_safe_request_path(raw_path_of(req), req.path)) {
    detail::set_error(res, 400, "bad_path",
                      "request path is not allowed (dot segments, encoded dots or slashes, "
                      "backslashes or empty segments)",
                      "path");
    return HR::Handled;
  }
  std::map<std::string, std::string> params;
  std::vector<const Route*> same_path;
  const Route* route = find(req, &params, &same_path);
  if (same_path.empty()) {
    if (!authorized(req, res, false)) return HR::Handled;
    if ((req.method == "GET" || req.method == "HEAD") && serve_asset(req, res))
      return HR::Handled;
    detail::set_error(res, 404, "not_found", "no route " + req.method + " " + req.path);
    return HR::Handled;
  }
  if (route == nullptr) {
    std::string allow;
    for (const Route* r : same_path) {
      allow += (allow.empty() ? "" : ", ") + r->method;
      if (r->method == "GET") allow += ", HEAD";
    }
    allow += ", OPTIONS";
    res.set_header("Allow", allow);
    if (req.method == "OPTIONS") {  // no CORS: just the allowed methods
      res.status = 204;
      return HR::Handled;
    }
    detail::set_error(res, 405, "method_not_allowed",
                      req.method + " is not allowed on " + req.path + "; allowed: " + allow);
    return HR::Handled;
  }
  if (!authorized(req, res, route->mutating)) return HR::Handled;
  for (const auto& [name, value] : req.params) {
    const detail::ParamSpec* spec = route->find_param(name);
    if (spec == nullptr || spec->in_path) {
      detail::set_error(res, 400, "unknown_parameter",
                        "query parameter '" + name + "' is not known on " + route->path, name);
      return HR::Handled;
    }
  }
  // Body-carrying methods: let the library read the body (bounded), then dispatch().
  if (has_body_semantics(req.method)) return HR::Unhandled;
  run(*route, req, res, std::move(params));
  return HR::Handled;
}

void Server::Impl::dispatch(const httplib::Request& req, httplib::Response& res) {
  std::map<std::string, std::string> params;
  const Route* route = find(req, &params, nullptr);
  if (route == nullptr) {  // pre_route answered every other case already
    detail::set_error(res, 404, "not_found", "no route " + req.method + " " + req.path);
    return;
  }
  run(*route, req, res, std::move(params));
}

void Server::Impl::install() {
  const ServerConfig& c = state.config;
  const size_t threads = kRequestWorkerThreads + c.max_event_streams;
  svr.new_task_queue = [threads] { return new httplib::ThreadPool(threads); };
  svr.set_read_timeout(kReadTimeoutS, 0);
  svr.set_write_timeout(kWriteTimeoutS, 0);
  svr.set_keep_alive_timeout(kKeepAliveTimeoutS);
  svr.set_keep_alive_max_count(kKeepAliveMaxRequests);
  svr.set_payload_max_length(kMaxPayloadBytes);
  // Headers and body go out in separate writes; with Nagle's algorithm the body then waits
  // for the client's delayed ACK (about 40 ms per response on Linux). Measured: 356 req/s.
  svr.set_tcp_nodelay(true);
  svr.set_pre_routing_handler(
      [this](const httplib::Request& req, httplib::Response& res) { return pre_route(req, res); });
  auto body_handler = [this](const httplib::Request& req, httplib::Response& res) {
    dispatch(req, res);
  };
  svr.Post(".*", body_handler);
  svr.Put(".*", body_handler);
  svr.Patch(".*", body_handler);
  svr.Delete(".*", body_handler);
  svr.set_error_handler(httplib::Server::HandlerWithResponse(
      [](const httplib::Request&, httplib::Response& res) {
    using HR = httplib::Server::HandlerResponse;
    if (!res.body.empty()) return HR::Unhandled;  // our own JSON error already
    switch (res.status) {
      case 413:
        detail::set_error(res, 413, "payload_too_large",
                          "request body exceeds " + std::to_string(kMaxPayloadBytes) + " bytes",
                          "body");
        break;
      case 400:
        detail::set_error(res, 400, "bad_request", "malformed HTTP request");
        break;
      case 414:
        detail::set_error(res, 414, "uri_too_long", "request target too long");
        break;
      case 404:
        detail::set_error(res, 404, "not_found", "not found");
        break;
      default:
        detail::set_error(res, res.status, "error",
                          "HTTP status " + std::to_string(res.status));
        break;
    }
    return HR::Handled;
  }));
  svr.set_exception_handler(
      [this](const httplib::Request& req, httplib::Response& res, std::exception_ptr ep) {
        std::string what = "unknown exception";
        try {
          if (ep) std::rethrow_exception(ep);
        } catch (const std::exception& e) {
          what = e.what();
        } catch (...) {
        }
        detail::set_error(res, 500, "internal", "internal error");
        if (state.providers.on_internal_error)
          state.providers.on_internal_error("http " + req.method + " " + req.path + ": " + what);
      });
  svr.set_post_routing_handler([this](const httplib::Request&, httplib::Response& res) {
    const int cls = res.status / 100;
    if (cls >= 1 && cls <= 5) state.responses_by_class[cls - 1].fetch_add(1);
    res.set_header("X-Content-Type-Options", "nosniff");
    res.set_header("Content-Security-Policy", kContentSecurityPolicy);
    res.set_header("Referrer-Policy", "no-referrer");
    res.set_header("X-Frame-Options", "DENY");
    if (!res.has_header("Cache-Control"))
      res.set_header("Cache-Control", "no-store");
  });
}

// ---------- Server ----------

Server::Server(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

Server::~Server() { stop(); }

base::Result<std::unique_ptr<Server>> Server::create(const ServerConfig& config,
                                                     const Providers& providers,
                                                     AssetMap assets) {
  if (auto st = validate(config); !st) return std::move(st).error();
  auto impl = std::make_unique<Impl>();
  impl->state.config = config;
  impl->state.providers = providers;
  impl->state.assets = std::move(assets);
  impl->token_everywhere =
      config.token_on_every_route || !is_loopback_address(config.bind_address);
  detail::add_api_routes(impl->routes);
  detail::add_history_routes(impl->routes);
  detail::add_system_routes(impl->routes);
  detail::add_evidence_routes(impl->routes);
  detail::finalize_routes(impl->routes);
  impl->state.openapi_json = detail::build_openapi(impl->routes, config.version);
  impl->install();
  return std::unique_ptr<Server>(new Server(std::move(impl)));
}

base::Status Server::start() {
  using base::ErrorCode;
  Impl& m = *impl_;
  std::lock_guard<std::mutex> lock(m.life_mu);
  if (m.started)
    return base::make_error(ErrorCode::kInvalidArgument, "http server already started");
  if (auto st = validate(m.state.config); !st) return std::move(st).error();
  const ServerConfig& c = m.state.config;
  if (c.port == 0) {
    m.bound_port = m.svr.bind_to_any_port(c.bind_address);
    if (m.bound_port <= 0)
      return base::make_error(ErrorCode::kUnavailable,
                              "http: cannot bind " + c.bind_address + " on any port");
  } else {
    if (!m.svr.bind_to_port(c.bind_address, c.port))
      return base::make_error(ErrorCode::kUnavailable,
                              "http: cannot bind " + c.bind_address + ":" +
                                  std::to_string(c.port) + " (address in use or not local?)");
    m.bound_port = c.port;
  }
  m.started = true;
  m.listener = std::thread([&m] {
    m.svr.listen_after_bind();
    m.listener_done.store(true);
  });
  // The library has no readiness callback: poll is_running() until it flips, bounded.
  const auto deadline =
      std::chrono::steady_clock::now() + std::chrono::milliseconds(kStartTimeoutMs);
  while (!m.svr.is_running()) {
    if (std::chrono::steady_clock::now() > deadline)
      return base::make_error(ErrorCode::kUnavailable,
                              "http: listener did not start within " +
                                  std::to_string(kStartTimeoutMs) + " ms");
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
  }
  return base::Status::success();
}

void Server::stop() {
  if (!impl_) return;
  Impl& m = *impl_;
  std::lock_guard<std::mutex> lock(m.life_mu);
  if (!m.started || m.stopped) return;
  m.stopped = true;
  m.state.hub.close();  // event streams end, freeing their threads
  // The library's stop() does nothing until the listener flags itself running: wait for that
  // (or for the listener to have ended on its own).
  while (!m.listener_done.load() && !m.svr.is_running())
    std::this_thread::sleep_for(std::chrono::milliseconds(1));
  m.svr.stop();
  if (m.listener.joinable()) m.listener.join();
}

bool Server::is_running() const { return impl_->svr.is_running(); }
int Server::port() const { return impl_->bound_port; }
EventHub& Server::events() { return impl_->state.hub; }
HttpStats Server::stats() const { return impl_->state.stats(); }

std::string Server::describe() const {
  const ServerConfig& c = impl_->state.config;
  return "http on " + c.bind_address + ":" + std::to_string(impl_->bound_port) + ", " +
         std::to_string(impl_->routes.size()) + " routes, " +
         std::to_string(impl_->state.assets.size()) + " assets, token " +
         (c.token.empty() ? "none (read-only)"
                          : impl_->token_everywhere ? "required on every route"
                                                    : "required for changes") +
         ", up to " + std::to_string(c.max_event_streams) + " event streams";
}

}  // namespace tonewarden::http
