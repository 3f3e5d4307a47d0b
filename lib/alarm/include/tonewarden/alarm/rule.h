// RuleConfig: an alarm condition on one reading - direction, warning and critical levels,
// hysteresis, on/off delays, latching, and thresholds that are absolute or relative to a
// baseline learnt from the machine.
#pragma once

#include <optional>
#include <string>

#include "tonewarden/alarm/alarm_state.h"
#include "tonewarden/base/result.h"

namespace tonewarden::alarm {

enum class Direction { kAbove, kBelow };

enum class ThresholdMode {
  kAbsolute,        // levels are reading values
  kBaselineDb,      // levels are dB over the baseline median: median·10^(L/20) (amplitude dB)
  kBaselineSpread,  // levels are multiples of the baseline spread: median + L·spread
};

// What an invalid (unmeasured) reading means to the rule.
enum class InvalidPolicy {
  kHold,      // keep the current condition; delays keep running on the last valid state
  kClear,     // treat as normal
  kWarning,   // treat as a warning (e.g. "speed unknown" as an alarm of its own)
  kCritical,  // treat as critical
};

// Signal-quality rules (clipping, flat line, lost source, ring overflow, speed range) suppress
// the tone rules of their channel while their condition is active; a rig-wide quality rule
// (channel "") suppresses every tone rule.
enum class RuleRole { kTone, kSignalQuality };

struct RuleConfig {
  std::string name;                // unique, [A-Za-z0-9_.:-]+
  std::string reading;             // reading name, e.g. "de.bpfo.amplitude"
  std::string channel;             // "": the reading's prefix before the first '.', or rig-wide
  RuleRole role = RuleRole::kTone;
  Direction direction = Direction::kAbove;
  std::optional<double> warning;   // at least one level; above: warning < critical
  std::optional<double> critical;  // below: warning > critical
  double hysteresis = 0.0;         // >= 0, in the levels' units (value, dB or spreads)
  double on_delay_s = 0.0;         // >= 0: a level must hold this long before it is raised
  double off_delay_s = 0.0;        // >= 0: a lower level must hold this long before it drops
  bool latching = false;           // stays in alarm after the condition clears until acked
  InvalidPolicy on_invalid = InvalidPolicy::kHold;
  ThresholdMode mode = ThresholdMode::kAbsolute;
  double learn_s = 600.0;          // baseline modes: learning period, reading time, > 0
  size_t learn_max_samples = 4096; // baseline modes: buffer size (learning ends when full)
  double min_spread = 0.0;         // kBaselineSpread: floor under the learnt spread, >= 0
};

// One-line error naming the rule, the field, the value and the allowed range.
base::Status validate_rule(const RuleConfig& rule);

// The channel a rule belongs to: rule.channel, or the reading name's prefix before the first
// '.', or "" (rig-wide) when the reading name has no '.'.
std::string rule_channel(const RuleConfig& rule);

}  // namespace tonewarden::alarm
