// Severity presets: velocity-RMS zone boundaries for ISO 10816-3 machine classes, offered as
// starting points for rules. The numbers are from memory; check the current standard
// (ISO 20816-3 supersedes ISO 10816-3) before relying on them.
#pragma once

#include <optional>
#include <span>
#include <string_view>

namespace tonewarden::alarm {

struct ZonePreset {
  const char* name;         // "iso10816-3:group1-rigid" ...
  const char* description;  // machine class in words
  double ab_mm_s;           // zone A/B boundary, velocity RMS mm/s (10–1000 Hz)
  double bc_mm_s;           // B/C: the usual warning level
  double cd_mm_s;           // C/D: the usual critical level
  const char* provenance;   // always "from memory; check the current standard"
};

// The four ISO 10816-3 presets (group 1/2 × rigid/flexible support).
std::span<const ZonePreset> iso10816_3_presets() noexcept;
std::optional<ZonePreset> find_zone_preset(std::string_view name) noexcept;

}  // namespace tonewarden::alarm
