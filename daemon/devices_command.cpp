// `tonewarden devices`: lists the audio inputs PortAudio can open, as a table or JSON.
#include <nlohmann/json.hpp>

#include <cstdio>
#include <iostream>

#include "commands.h"
#include "tonewarden/source/device_source.h"

namespace tonewarden::daemon {

CommandRunner register_devices_command(CLI::App& app) {
  auto* cmd = app.add_subcommand("devices", "List the audio input devices");
  static std::string format = "table";
  cmd->add_option("--format", format, "table or json")->check(CLI::IsMember({"table", "json"}));
  return [] {
    auto devices = source::list_input_devices();
    if (!devices) {
      std::fprintf(stderr, "tonewarden devices: %s\n", devices.error().message.c_str());
      return kExitRuntimeFailure;
    }
    if (format == "json") {
      nlohmann::json out = nlohmann::json::array();
      for (const auto& d : *devices) {
        out.push_back({{"index", d.index},
                       {"name", d.name},
                       {"host_api", d.host_api},
                       {"input_channels", d.max_input_channels},
                       {"default_sample_rate_hz", d.default_sample_rate_hz}});
      }
      std::cout << out.dump(2) << "\n";
      return kExitOk;
    }
    if (devices->empty()) {
      std::fprintf(stderr,
                   "tonewarden devices: no audio input devices found. Check that the interface is "
                   "plugged in and that this user may open it (group 'audio').\n");
      return kExitRuntimeFailure;
    }
    std::printf("%5s  %-40s  %-8s  %8s  %10s\n", "index", "name", "api", "inputs", "rate_hz");
    for (const auto& d : *devices) {
      std::printf("%5d  %-40.40s  %-8.8s  %8d  %10.0f\n", d.index, d.name.c_str(),
                  d.host_api.c_str(), d.max_input_channels, d.default_sample_rate_hz);
    }
    return kExitOk;
  };
}

}  // namespace tonewarden::daemon
