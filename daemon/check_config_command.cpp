// `tonewarden check-config FILE [--dump]`: validates a config and reports every problem as
// FILE:LINE:COL: key: message (allowed: ...). Exit 0 when valid, 2 otherwise.
#include <cstdio>
#include <string>

#include "commands.h"
#include "tonewarden/config/dump.h"
#include "tonewarden/config/loader.h"

namespace tonewarden::daemon {

CommandRunner register_check_config_command(CLI::App& app) {
  auto* cmd = app.add_subcommand("check-config", "Validate a config file and report every problem at once");
  static std::string file;
  static bool dump = false;
  cmd->add_option("FILE", file, "TOML config file")->required();
  cmd->add_flag("--dump", dump, "Print the effective configuration, defaults included, as TOML");
  return [] {
    const config::LoadedConfig loaded = config::load_config_file(file);
    if (!loaded.ok()) {
      for (const auto& issue : loaded.issues) std::fprintf(stderr, "%s\n", config::format_issue(issue).c_str());
      return kExitUsage;
    }
    std::printf("%s: ok\n", file.c_str());
    if (dump) {
      std::printf("# Effective configuration of %s (defaults included, secrets redacted).\n", file.c_str());
      std::printf("# config hash (FNV-1a 64 of the canonical dump): %s\n\n", config::config_hash(loaded.tree).c_str());
      std::fputs(config::dump_toml(loaded.tree).c_str(), stdout);
    }
    return kExitOk;
  };
}

}  // namespace tonewarden::daemon
