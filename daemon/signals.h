// Process signals for the daemon. Handlers only set flags; the main loop polls them.
#pragma once

namespace tonewarden::daemon {

struct SignalFlags {
  bool stop = false;    // SIGTERM or SIGINT seen
  bool reload = false;  // SIGHUP seen
};

// Installs flag-only handlers for SIGTERM, SIGINT and SIGHUP, and ignores SIGPIPE.
void install_signal_handlers();
// Returns and clears the flags raised since the last call. Async-signal-safe handlers, so
// this is the only place that reads them.
SignalFlags take_signal_flags();
// Sleeps up to `timeout_ms`, returning early when a signal arrives.
void wait_for_signal(int timeout_ms);

}  // namespace tonewarden::daemon
