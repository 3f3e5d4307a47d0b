// Rule validation and channel derivation.
#include "tonewarden/alarm/rule.h"

#include <cmath>

namespace tonewarden::alarm {

base::Status validate_rule(const RuleConfig& r) {
  auto bad = [&](const std::string& m) {
    return base::Status(
        base::make_error(base::ErrorCode::kInvalidArgument, "rule '" + r.name + "': " + m));
  };
  if (r.name.empty() || r.name.size() > 128) return bad("name must be 1-128 characters");
  for (char c : r.name) {
    const bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                    c == '_' || c == '-' || c == '.' || c == ':';
    if (!ok) return bad("name may hold only [A-Za-z0-9_.:-]");
  }
  if (r.reading.empty()) return bad("reading is empty");
  if (!r.warning && !r.critical) return bad("needs a warning or a critical level");
  if ((r.warning && !std::isfinite(*r.warning)) || (r.critical && !std::isfinite(*r.critical))) {
    return bad("levels must be finite");
  }
  if (r.warning && r.critical) {
    const bool ordered = r.direction == Direction::kAbove ? *r.warning < *r.critical
                                                          : *r.warning > *r.critical;
    if (!ordered) {
      return bad("warning = " + std::to_string(*r.warning) + ", critical = " +
                 std::to_string(*r.critical) +
                 (r.direction == Direction::kAbove ? "; an above-rule needs warning < critical"
                                                   : "; a below-rule needs warning > critical"));
    }
  }
  if (!(r.hysteresis >= 0.0) || !std::isfinite(r.hysteresis)) {
    return bad("hysteresis = " + std::to_string(r.hysteresis) + ", must be >= 0");
  }
  if (!(r.on_delay_s >= 0.0) || !(r.off_delay_s >= 0.0) || r.on_delay_s > 1e6 ||
      r.off_delay_s > 1e6) {
    return bad("on_delay_s = " + std::to_string(r.on_delay_s) + ", off_delay_s = " +
               std::to_string(r.off_delay_s) + "; each must be in [0, 1e6] s");
  }
  if (r.mode != ThresholdMode::kAbsolute) {
    if (!(r.learn_s > 0.0) || r.learn_s > 1e8) {
      return bad("learn_s = " + std::to_string(r.learn_s) + ", must be in (0, 1e8] s");
    }
    if (r.learn_max_samples < 3 || r.learn_max_samples > (1u << 24)) {
      return bad("learn_max_samples = " + std::to_string(r.learn_max_samples) +
                 ", must be in [3, 16777216]");
    }
    if (!(r.min_spread >= 0.0)) return bad("min_spread must be >= 0");
  }
  return base::Status::success();
}

std::string rule_channel(const RuleConfig& r) {
  if (!r.channel.empty()) return r.channel;
  const auto dot = r.reading.find('.');
  return dot == std::string::npos ? std::string() : r.reading.substr(0, dot);
}

}  // namespace tonewarden::alarm
