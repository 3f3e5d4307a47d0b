// Daemon: the long-running process behind `tonewarden run`. DESIGN: the main thread owns
// start-up, the signal loop and shutdown; each rig runs its own capture and analysis threads;
// the store has its writer thread; the HTTP server has its pool. Signal handlers only set
// flags, which the main loop turns into a reload or an orderly stop:
//   stop: capture -> drain analysis -> flush store (run record closed) -> stop serving.
#pragma once

#include <memory>
#include <string>

#include "tonewarden/base/log.h"
#include "tonewarden/base/result.h"
#include "tonewarden/config/config.h"

namespace tonewarden::daemon {

struct DaemonOptions {
  std::string config_path;
  std::string listen_override;    // "ADDR:PORT"; empty: from config
  std::string data_dir_override;  // empty: from config
};

// The config's log level as the logger's (critical folds into error).
base::LogLevel to_log_level(config::LogLevel level);

// The history database file: [store] db_file, relative to the data directory unless absolute.
std::string db_path(const config::Config& c);

// Runs until SIGTERM/SIGINT (or until every rig's source has finished, for finite sources).
// Returns the process exit code: 0 ok, 1 runtime failure, 2 config or usage error.
int run_daemon(const DaemonOptions& options);

}  // namespace tonewarden::daemon
