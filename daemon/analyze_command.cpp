// `tonewarden analyze FILE`: one-shot spectral analysis of a recording (placeholder).
#include <cstdio>

#include "commands.h"

namespace tonewarden::daemon {

CommandRunner register_analyze_command(CLI::App& app) {
  auto* cmd = app.add_subcommand("analyze", "Analyse a recording once and print its spectrum summary");
  static std::string file;
  cmd->add_option("FILE", file, "WAV or FLAC recording")->required();
  return [] {
    std::fprintf(stderr, "tonewarden analyze: not built yet\n");
    return kExitRuntimeFailure;
  };
}

}  // namespace tonewarden::daemon
