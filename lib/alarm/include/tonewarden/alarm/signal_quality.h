// Signal quality: per-channel checks that say whether a sensor can be trusted - clipping
// (samples near full scale, counted per period), flat line (zero variance or RMS below a
// floor), lost source, ring overflow - published as readings, plus ready-made rules on them
// (and on the speed range) with the signal-quality role, so that while one is active the
// channel's tone alarms are held instead of storming.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "tonewarden/alarm/rule.h"
#include "tonewarden/base/result.h"
#include "tonewarden/track/reading_set.h"

namespace tonewarden::alarm {

struct SignalQualityConfig {
  std::string channel;            // prefixes the readings
  double full_scale = 1.0;        // > 0: |x| at which the converter saturates, signal units
  double clip_fraction = 0.999;   // (0, 1]: |x| >= this × full_scale counts as clipped
  double flat_rms_floor = 0.0;    // >= 0: period RMS below this reads as flat (0: only a
                                  // constant signal, zero variance, is flat)
};

// Reading names: "<ch>.clipped_samples" (count per period), "<ch>.flat_line" (0/1),
// "<ch>.source_lost" (0/1), "<ch>.ring_overflows" (count per period).
// process() runs on raw sample blocks; publish() ends a period. Allocation-free after create.
class SignalQuality {
 public:
  static base::Result<SignalQuality> create(const SignalQualityConfig& config,
                                            track::ReadingSet& readings);

  void process(std::span<const float> samples) noexcept;
  void note_ring_overflows(uint64_t count) noexcept { overflows_ += count; }
  void set_source_lost(bool lost) noexcept { source_lost_ = lost; }
  // Writes the period's readings into `out` and starts a new period.
  void publish(track::ReadingSet& out) noexcept;

  uint64_t num_clipped_total() const noexcept { return clipped_total_; }

 private:
  explicit SignalQuality(const SignalQualityConfig& c) : config_(c) {}
  SignalQualityConfig config_;
  double clip_level_ = 1.0;
  uint64_t clipped_ = 0, clipped_total_ = 0, overflows_ = 0, count_ = 0;
  double sum_ = 0.0, sum_sq_ = 0.0;
  float min_ = 0.0f, max_ = 0.0f;
  bool source_lost_ = false;
  size_t idx_clipped_ = 0, idx_flat_ = 0, idx_lost_ = 0, idx_overflow_ = 0;
};

struct SignalQualityRuleConfig {
  std::string channel;
  double clipped_samples_warning = 1.0;  // clipped samples per period that raise the alarm
  double flat_for_s = 10.0;              // flat this long -> dead-sensor alarm
  double source_lost_after_s = 0.0;      // lost this long -> alarm
  double off_delay_s = 5.0;              // all: must be good this long to clear
};

// Rules "<ch>.clipping", "<ch>.flat_line", "<ch>.source_lost", "<ch>.ring_overflow".
std::vector<RuleConfig> signal_quality_rules(const SignalQualityRuleConfig& config);

// Rig-wide rules on "speed_rpm": "speed.below_range" (also raised while the speed is
// unknown) and "speed.above_range". They hold every tone rule while active.
std::vector<RuleConfig> speed_range_rules(double min_rpm, double max_rpm, double on_delay_s);

}  // namespace tonewarden::alarm
