// WebServer: plugs the running rigs and the store into the HTTP server's provider interfaces,
// and feeds its live event stream. DESIGN: HTTP worker threads read LiveState snapshots
// (never blocking analysis) and the database through read-only connections; a small
// publisher thread turns new snapshots and queued alarm events into stream events, so the
// analysis threads only enqueue.
#pragma once

#include <atomic>
#include <memory>
#include <shared_mutex>
#include <string>
#include <vector>

#include "rig_factory.h"
#include "tonewarden/base/result.h"
#include "tonewarden/config/config.h"
#include "tonewarden/pipeline/rig_monitor.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::daemon {

class WebServer {
 public:
  WebServer(const config::Config& cfg, store::StoreWriter* store);
  ~WebServer();

  // Receives alarm events and readings from the rigs' analysis threads (bounded, non-blocking).
  pipeline::RigEventSink* event_sink();
  // The rigs the providers read; set once before start().
  void attach_rigs(std::vector<Rig>* rigs);
  // Held while a reload swaps a rig's parts; providers take the shared side.
  std::unique_lock<std::shared_mutex> lock_rigs_for_change();

  // Starts serving (a no-op when [http] enabled = false). Errors: bad address, port in use,
  // no token on a non-loopback address (kInvalidArgument).
  base::Status start();
  void stop();
  // True once (and then false again) after a client asked for a reload over HTTP.
  bool take_reload_request();
  std::string describe() const;

  struct Impl;

 private:
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::daemon
