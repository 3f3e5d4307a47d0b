// Shared by the config tests that append a section to a smallest valid config and check the
// messages: kOneRig holds one synthetic rig on lines 1-13, so an appended "\n[section]\n"
// puts the header on line 15 and its first key on line 16.
#pragma once

#include <string>
#include <vector>

#include "tonewarden/config/loader.h"

namespace tonewarden::testing {

inline constexpr const char* kOneRig = R"([[rig]]
name = "r1"

[rig.source]
kind = "synthetic"

[[rig.channel]]
name = "ch0"
index = 0
sensitivity_v_per_unit = 0.1

[rig.speed]
rpm = 1500
)";

// Every issue as FILE:LINE:COL: KEY: MESSAGE (allowed: ...), in order.
inline std::vector<std::string> messages(const config::LoadedConfig& loaded) {
  std::vector<std::string> out;
  for (const auto& issue : loaded.issues) out.push_back(format_issue(issue));
  return out;
}

}  // namespace tonewarden::testing
