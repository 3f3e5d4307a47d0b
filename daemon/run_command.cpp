// `tonewarden run --config FILE`: the daemon.
#include "commands.h"
#include "daemon.h"

namespace tonewarden::daemon {

CommandRunner register_run_command(CLI::App& app) {
  auto* cmd = app.add_subcommand("run", "Run the monitoring daemon on a configuration");
  static DaemonOptions opts;
  cmd->add_option("--config", opts.config_path, "TOML configuration file")->required();
  cmd->add_option("--listen", opts.listen_override, "HTTP listen address ADDR:PORT (overrides the config)");
  cmd->add_option("--data-dir", opts.data_dir_override, "Data directory (overrides the config)");
  return [] { return run_daemon(opts); };
}

}  // namespace tonewarden::daemon
