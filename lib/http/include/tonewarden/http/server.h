// The HTTP server: JSON API under /api/v1, OpenAPI document, Server-Sent Events, /metrics
// (OpenMetrics), /healthz and the embedded dashboard. See src/server.cpp for the design note.
//
// Threads: start() runs the listener on its own thread and requests on a pool of
// kRequestWorkerThreads + max_event_streams threads (each open event stream holds one).
// stop() returns promptly even with streams open. events() may be used from any thread.
// Security: mutating routes (POST) need the bearer token; on a non-loopback address every
// route does, and start() refuses to run without a token.
#pragma once

#include <memory>
#include <string>

#include "tonewarden/base/result.h"
#include "tonewarden/http/event_hub.h"
#include "tonewarden/http/limits.h"
#include "tonewarden/http/openmetrics.h"
#include "tonewarden/http/providers.h"
#include "tonewarden/http/static_assets.h"

namespace tonewarden::http {

struct ServerConfig {
  std::string bind_address = "127.0.0.1";
  int port = kDefaultPort;  // 0..65535; 0 picks a free port (tests), see Server::port()
  std::string token;        // bearer token; empty: none (allowed on loopback only, read-only)
  bool token_on_every_route = false;  // forced on for non-loopback addresses
  size_t max_event_streams = kDefaultMaxEventStreams;  // 1..kMaxMaxEventStreams
  std::string version;      // reported by status and build_info
  std::string evidence_dir; // DATA_DIR/evidence: raw clips served read-only; empty: none
};

// Checks ranges and the security rule (non-loopback address needs a valid token).
base::Status validate(const ServerConfig& config);

class Server {
 public:
  // Validates `config`; builds the routes. Providers must outlive the Server.
  static base::Result<std::unique_ptr<Server>> create(const ServerConfig& config,
                                                      const Providers& providers,
                                                      AssetMap assets = {});
  ~Server();  // stops
  Server(const Server&) = delete;
  Server& operator=(const Server&) = delete;

  // Re-validates the config, binds, starts listening and returns once the server accepts
  // connections (or kStartTimeoutMs passed). Errors: bad config, no token on a non-loopback
  // address, bind failure (address in use...). Call once.
  base::Status start();
  // Ends event streams, stops listening and joins every thread. Idempotent.
  void stop();

  bool is_running() const;
  int port() const;  // the bound port (useful with port 0); 0 before start()
  EventHub& events();
  HttpStats stats() const;
  std::string describe() const;  // one line for the startup log

  struct Impl;

 private:
  explicit Server(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::http
