// Engineering-unit parsing.
#include "tonewarden/base/units.h"

namespace tonewarden::base {

std::optional<AccelUnit> parse_accel_unit(std::string_view name) {
  if (name == "g") return AccelUnit::kG;
  if (name == "m/s2" || name == "m/s^2" || name == "m/s\xC2\xB2") return AccelUnit::kMps2;
  return std::nullopt;
}

double accel_unit_in_mps2(AccelUnit unit) noexcept {
  return unit == AccelUnit::kG ? kStandardGravityMps2 : 1.0;
}

}  // namespace tonewarden::base
