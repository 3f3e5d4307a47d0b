// Physical constants and engineering-unit helpers.
#pragma once

#include <optional>
#include <string_view>

namespace tonewarden::base {

// Standard acceleration of gravity, exact by definition (3rd CGPM, 1901).
inline constexpr double kStandardGravityMps2 = 9.80665;
// One inch in millimetres, exact by definition (international yard and pound, 1959).
inline constexpr double kMmPerInch = 25.4;

enum class AccelUnit { kG, kMps2 };

// Recognises acceleration units by name: "g", "m/s2", "m/s^2", "m/s²". Else nullopt.
std::optional<AccelUnit> parse_accel_unit(std::string_view name);

// Metres per second squared in one of `unit`.
double accel_unit_in_mps2(AccelUnit unit) noexcept;

}  // namespace tonewarden::base
