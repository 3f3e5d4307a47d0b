// Velocity severity presets: zone boundaries of ISO 10816-3 for velocity RMS in mm/s.
// Values from memory; check the current standard (ISO 20816-3 replaces it) before relying on them.
#include "tonewarden/config/config.h"

namespace tonewarden::config {
namespace {

// warning = zone B/C boundary, critical = zone C/D boundary (from memory).
constexpr SeverityPreset kPresets[] = {
    {"iso10816-3-g1-rigid", 4.5, 7.1, "group 1 (300 kW..50 MW), rigid foundation"},
    {"iso10816-3-g1-flexible", 7.1, 11.0, "group 1 (300 kW..50 MW), flexible foundation"},
    {"iso10816-3-g2-rigid", 2.8, 4.5, "group 2 (15..300 kW), rigid foundation"},
    {"iso10816-3-g2-flexible", 4.5, 7.1, "group 2 (15..300 kW), flexible foundation"},
    {"iso10816-3-g3-rigid", 4.5, 7.1, "group 3 (pumps > 15 kW, separate driver), rigid foundation"},
    {"iso10816-3-g3-flexible", 7.1, 11.0, "group 3 (pumps > 15 kW, separate driver), flexible foundation"},
    {"iso10816-3-g4-rigid", 2.8, 4.5, "group 4 (pumps > 15 kW, integrated driver), rigid foundation"},
    {"iso10816-3-g4-flexible", 4.5, 7.1, "group 4 (pumps > 15 kW, integrated driver), flexible foundation"},
};

}  // namespace

std::span<const SeverityPreset> severity_presets() { return kPresets; }

const SeverityPreset* find_severity_preset(std::string_view name) {
  for (const auto& p : kPresets) {
    if (name == p.name) return &p;
  }
  return nullptr;
}

}  // namespace tonewarden::config
