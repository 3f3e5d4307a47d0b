// tonewarden entry point: builds the command-line interface and dispatches subcommands.
#include <CLI/CLI.hpp>

#include <cstdio>

#include "commands.h"

int main(int argc, char** argv) {
  CLI::App app{"tonewarden: watches rotating machines by their sound and vibration"};
  app.set_version_flag("--version", TONEWARDEN_VERSION);
  app.require_subcommand(1);
  tonewarden::daemon::register_commands(app);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int rc = app.exit(e);
    return rc == 0 ? 0 : 2;  // usage errors exit 2
  }
  return tonewarden::daemon::run_selected_command(app);
}
