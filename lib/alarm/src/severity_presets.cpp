// ISO 10816-3 zone presets as data. Values from memory; check the current standard.
#include "tonewarden/alarm/severity_presets.h"

namespace tonewarden::alarm {
namespace {

constexpr const char* kProvenance = "from memory; check the current standard";

// ISO 10816-3 (superseded by ISO 20816-3), machines above 15 kW, 120–15000 r/min,
// velocity RMS 10–1000 Hz. From memory; check the current standard.
constexpr ZonePreset kPresets[] = {
    {"iso10816-3:group1-rigid", "group 1 (300 kW-50 MW), rigid support", 2.3, 4.5, 7.1, kProvenance},
    {"iso10816-3:group1-flexible", "group 1 (300 kW-50 MW), flexible support", 3.5, 7.1, 11.0,
     kProvenance},
    {"iso10816-3:group2-rigid", "group 2 (15-300 kW), rigid support", 1.4, 2.8, 4.5, kProvenance},
    {"iso10816-3:group2-flexible", "group 2 (15-300 kW), flexible support", 2.3, 4.5, 7.1,
     kProvenance},
};

}  // namespace

std::span<const ZonePreset> iso10816_3_presets() noexcept { return kPresets; }

std::optional<ZonePreset> find_zone_preset(std::string_view name) noexcept {
  for (const ZonePreset& p : kPresets) {
    if (name == p.name) return p;
  }
  return std::nullopt;
}

}  // namespace tonewarden::alarm
