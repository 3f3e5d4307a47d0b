// Bearing defect orders from geometry (Randall & Antoni 2011, Eqs. (1)–(4)).
#include "tonewarden/track/bearing.h"

#include <cmath>
#include <numbers>
#include <string>

namespace tonewarden::track {

base::Result<BearingOrders> bearing_orders(const BearingGeometry& g) {
  auto bad = [](const std::string& what) {
    return base::make_error(base::ErrorCode::kInvalidArgument, "bearing geometry: " + what);
  };
  if (g.num_elements < 1) {
    return bad("num_elements = " + std::to_string(g.num_elements) + ", must be >= 1");
  }
  if (!(g.element_diameter > 0.0) || !std::isfinite(g.element_diameter)) {
    return bad("element_diameter = " + std::to_string(g.element_diameter) + ", must be > 0");
  }
  if (!(g.pitch_diameter > g.element_diameter) || !std::isfinite(g.pitch_diameter)) {
    return bad("pitch_diameter = " + std::to_string(g.pitch_diameter) +
               ", must exceed element_diameter = " + std::to_string(g.element_diameter));
  }
  if (!(g.contact_angle_deg >= 0.0 && g.contact_angle_deg < 90.0)) {
    return bad("contact_angle_deg = " + std::to_string(g.contact_angle_deg) +
               ", must be in [0, 90)");
  }
  const double ratio =
      g.element_diameter / g.pitch_diameter * std::cos(g.contact_angle_deg * std::numbers::pi / 180.0);
  const double n = g.num_elements;
  BearingOrders o;
  o.ftf = 0.5 * (1.0 - ratio);
  o.bpfo = n * o.ftf;
  o.bpfi = 0.5 * n * (1.0 + ratio);
  o.bsf = g.pitch_diameter / (2.0 * g.element_diameter) * (1.0 - ratio * ratio);
  o.two_bsf = 2.0 * o.bsf;
  return o;
}

double bearing_tone_order(const BearingOrders& o, BearingTone tone) noexcept {
  switch (tone) {
    case BearingTone::kFtf: return o.ftf;
    case BearingTone::kBpfo: return o.bpfo;
    case BearingTone::kBpfi: return o.bpfi;
    case BearingTone::kBsf: return o.bsf;
    case BearingTone::kTwoBsf: return o.two_bsf;
  }
  return 0.0;
}

const char* bearing_tone_name(BearingTone tone) noexcept {
  switch (tone) {
    case BearingTone::kFtf: return "ftf";
    case BearingTone::kBpfo: return "bpfo";
    case BearingTone::kBpfi: return "bpfi";
    case BearingTone::kBsf: return "bsf";
    case BearingTone::kTwoBsf: return "2bsf";
  }
  return "?";
}

}  // namespace tonewarden::track
