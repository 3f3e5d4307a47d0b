// Target validation and expected frequencies.
#include "tonewarden/track/target.h"

#include <cmath>

namespace tonewarden::track {
namespace {

bool valid_name(const std::string& s) {
  if (s.empty() || s.size() > 64) return false;
  for (char c : s) {
    const bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                    c == '_' || c == '-';
    if (!ok) return false;
  }
  return true;
}

}  // namespace

base::Status validate_target(const TargetConfig& t, const std::string& what) {
  auto bad = [&](const std::string& m) {
    return base::Status(base::make_error(base::ErrorCode::kInvalidArgument, what + ": " + m));
  };
  if (!valid_name(t.name)) {
    return bad("name '" + t.name + "' must be 1-64 characters of [A-Za-z0-9_-]");
  }
  switch (t.kind) {
    case TargetKind::kFixedHz:
      if (!(t.frequency_hz > 0.0) || !std::isfinite(t.frequency_hz)) {
        return bad("frequency_hz = " + std::to_string(t.frequency_hz) + ", must be > 0");
      }
      break;
    case TargetKind::kOrder:
      if (!(t.order > 0.0) || !std::isfinite(t.order)) {
        return bad("order = " + std::to_string(t.order) + ", must be > 0");
      }
      break;
    case TargetKind::kMesh:
      if (t.teeth < 1) return bad("teeth = " + std::to_string(t.teeth) + ", must be >= 1");
      break;
    case TargetKind::kHum:
      if (!(t.mains_hz > 0.0)) return bad("mains_hz = " + std::to_string(t.mains_hz) + ", must be > 0");
      if (t.hum_multiple != 1 && t.hum_multiple != 2) {
        return bad("hum_multiple = " + std::to_string(t.hum_multiple) + ", must be 1 or 2");
      }
      break;
    case TargetKind::kBearing: {
      auto orders = bearing_orders(t.bearing);
      if (!orders) return bad(orders.error().message);
      break;
    }
  }
  if (!(t.tolerance_hz >= 0.0) || !(t.tolerance_percent >= 0.0) ||
      !(t.tolerance_percent <= 50.0)) {
    return bad("tolerance_hz must be >= 0 and tolerance_percent in [0, 50]");
  }
  if (t.harmonics < 1 || t.harmonics > 16) {
    return bad("harmonics = " + std::to_string(t.harmonics) + ", must be in [1, 16]");
  }
  return base::Status::success();
}

bool target_needs_speed(const TargetConfig& t) noexcept {
  return t.kind == TargetKind::kOrder || t.kind == TargetKind::kBearing ||
         t.kind == TargetKind::kMesh;
}

double target_expected_hz(const TargetConfig& t, const BearingOrders& orders,
                          SpeedEstimate speed) noexcept {
  if (target_needs_speed(t) && !speed.valid) return 0.0;
  switch (t.kind) {
    case TargetKind::kFixedHz: return t.frequency_hz;
    case TargetKind::kOrder: return t.order * speed.hz();
    case TargetKind::kMesh: return t.teeth * speed.hz();
    case TargetKind::kHum: return t.mains_hz * t.hum_multiple;
    case TargetKind::kBearing: return bearing_tone_order(orders, t.bearing_tone) * speed.hz();
  }
  return 0.0;
}

}  // namespace tonewarden::track
