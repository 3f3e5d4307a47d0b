// Signal-quality readings and the rules on them.
#include "tonewarden/alarm/signal_quality.h"

#include <algorithm>
#include <cmath>

namespace tonewarden::alarm {

base::Result<SignalQuality> SignalQuality::create(const SignalQualityConfig& config,
                                                  track::ReadingSet& readings) {
  const std::string& ch = config.channel;
  if (ch.empty()) {
    return base::make_error(base::ErrorCode::kInvalidArgument, "signal quality: channel is empty");
  }
  if (!(config.full_scale > 0.0) || !(config.clip_fraction > 0.0 && config.clip_fraction <= 1.0) ||
      !(config.flat_rms_floor >= 0.0)) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "signal quality " + ch + ": need full_scale > 0 (got " +
                                std::to_string(config.full_scale) + "), clip_fraction in (0, 1] (got " +
                                std::to_string(config.clip_fraction) + "), flat_rms_floor >= 0");
  }
  SignalQuality q(config);
  q.clip_level_ = config.full_scale * config.clip_fraction;
  struct Item { size_t* index; const char* suffix; const char* unit; };
  const Item items[] = {{&q.idx_clipped_, "clipped_samples", "samples"},
                        {&q.idx_flat_, "flat_line", ""},
                        {&q.idx_lost_, "source_lost", ""},
                        {&q.idx_overflow_, "ring_overflows", "count"}};
  for (const Item& it : items) {
    auto r = readings.add(ch + "." + it.suffix, it.unit, ch);
    if (!r) return std::move(r).error().with_context("signal quality");
    *it.index = *r;
  }
  return q;
}

void SignalQuality::process(std::span<const float> samples) noexcept {
  for (const float x : samples) {
    if (std::fabs(x) >= clip_level_) ++clipped_;
    if (count_ == 0) min_ = max_ = x;
    min_ = std::min(min_, x);
    max_ = std::max(max_, x);
    sum_ += x;
    sum_sq_ += static_cast<double>(x) * x;
    ++count_;
  }
}

void SignalQuality::publish(track::ReadingSet& out) noexcept {
  out.set(idx_clipped_, static_cast<double>(clipped_));
  out.set(idx_lost_, source_lost_ ? 1.0 : 0.0);
  out.set(idx_overflow_, static_cast<double>(overflows_));
  if (count_ > 0) {
    const double mean = sum_ / static_cast<double>(count_);
    const double var = std::max(0.0, sum_sq_ / static_cast<double>(count_) - mean * mean);
    const bool flat = max_ == min_ || std::sqrt(var) < config_.flat_rms_floor;
    out.set(idx_flat_, flat ? 1.0 : 0.0);
  } else {
    out.invalidate(idx_flat_);  // no samples: the lost-source check speaks for this period
  }
  clipped_total_ += clipped_;
  clipped_ = overflows_ = count_ = 0;
  sum_ = sum_sq_ = 0.0;
}

std::vector<RuleConfig> signal_quality_rules(const SignalQualityRuleConfig& c) {
  auto make = [&](const char* what, const char* reading, double level, bool critical,
                  double on_delay_s) {
    RuleConfig r;
    r.name = c.channel + "." + what;
    r.reading = c.channel + "." + reading;
    r.channel = c.channel;
    r.role = RuleRole::kSignalQuality;
    r.direction = Direction::kAbove;
    if (critical) r.critical = level; else r.warning = level;
    r.on_delay_s = on_delay_s;
    r.off_delay_s = c.off_delay_s;
    return r;
  };
  return {make("clipping", "clipped_samples", c.clipped_samples_warning, false, 0.0),
          make("flat_line", "flat_line", 0.5, false, c.flat_for_s),
          make("source_lost", "source_lost", 0.5, true, c.source_lost_after_s),
          make("ring_overflow", "ring_overflows", 0.5, false, 0.0)};
}

std::vector<RuleConfig> speed_range_rules(double min_rpm, double max_rpm, double on_delay_s) {
  RuleConfig low;
  low.name = "speed.below_range";
  low.reading = "speed_rpm";
  low.role = RuleRole::kSignalQuality;
  low.direction = Direction::kBelow;
  low.warning = min_rpm;
  low.on_delay_s = on_delay_s;
  low.on_invalid = InvalidPolicy::kWarning;  // speed unknown: order targets cannot be trusted
  RuleConfig high = low;
  high.name = "speed.above_range";
  high.direction = Direction::kAbove;
  high.warning = max_rpm;
  high.on_invalid = InvalidPolicy::kHold;
  return {low, high};
}

}  // namespace tonewarden::alarm
