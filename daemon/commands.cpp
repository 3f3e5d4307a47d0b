// Registers every subcommand and runs the one the user picked.
#include "commands.h"

#include <utility>
#include <vector>

namespace tonewarden::daemon {
namespace {
std::vector<std::pair<CLI::App*, CommandRunner>>& registry() {
  static std::vector<std::pair<CLI::App*, CommandRunner>> r;
  return r;
}
void add(CLI::App& app, CommandRunner (*reg)(CLI::App&)) {
  const size_t before = app.get_subcommands({}).size();
  CommandRunner runner = reg(app);
  auto subs = app.get_subcommands({});
  if (subs.size() > before) registry().emplace_back(subs.back(), std::move(runner));
}
}  // namespace

void register_commands(CLI::App& app) {
  add(app, register_run_command);
  add(app, register_analyze_command);
  add(app, register_devices_command);
  add(app, register_query_command);
  add(app, register_check_config_command);
}

int run_selected_command(CLI::App& /*app*/) {
  for (auto& [sub, runner] : registry()) {
    if (sub->parsed()) return runner();
  }
  return kExitUsage;
}

}  // namespace tonewarden::daemon
