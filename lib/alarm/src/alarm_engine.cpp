// AlarmEngine: rule detection (levels, hysteresis, delays, baselines), suppression by
// signal-quality rules, the ISA-18.2 state machine per rule, and operator commands.
#include "tonewarden/alarm/alarm_engine.h"

#include <cmath>
#include <limits>

namespace tonewarden::alarm {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

base::Error invalid(const std::string& m) {
  return base::make_error(base::ErrorCode::kInvalidArgument, m);
}

}  // namespace

const char* event_cause_name(EventCause cause) noexcept {
  switch (cause) {
    case EventCause::kCondition: return "condition";
    case EventCause::kAcknowledge: return "acknowledge";
    case EventCause::kShelve: return "shelve";
    case EventCause::kUnshelve: return "unshelve";
    case EventCause::kShelfExpired: return "shelf-expired";
  }
  return "?";
}

base::Result<std::unique_ptr<AlarmEngine>> AlarmEngine::create(const AlarmEngineConfig& config) {
  if (config.command_queue_capacity < 1 || config.command_queue_capacity > 65536) {
    return invalid("alarm engine: command_queue_capacity = " +
                   std::to_string(config.command_queue_capacity) + ", must be in [1, 65536]");
  }
  std::unique_ptr<AlarmEngine> e(new AlarmEngine());
  e->rules_.reserve(config.rules.size());
  for (size_t i = 0; i < config.rules.size(); ++i) {
    const RuleConfig& rc = config.rules[i];
    if (auto st = validate_rule(rc); !st) return std::move(st).error();
    for (size_t j = 0; j < i; ++j) {
      if (config.rules[j].name == rc.name) return invalid("rule '" + rc.name + "' is defined twice");
    }
    Rule r;
    r.config = rc;
    r.channel = rule_channel(rc);
    if (rc.mode != ThresholdMode::kAbsolute) {
      r.baseline.emplace(static_cast<int64_t>(std::llround(rc.learn_s * 1000.0)),
                         rc.learn_max_samples);
    }
    e->rules_.push_back(std::move(r));
  }
  // Suppression lists: every quality rule of the same channel, or rig-wide.
  for (uint32_t i = 0; i < e->rules_.size(); ++i) {
    Rule& r = e->rules_[i];
    if (r.config.role != RuleRole::kTone) continue;
    for (uint32_t q = 0; q < e->rules_.size(); ++q) {
      const Rule& qr = e->rules_[q];
      if (qr.config.role == RuleRole::kSignalQuality && (qr.channel.empty() || qr.channel == r.channel)) {
        r.suppressors.push_back(q);
      }
    }
  }
  for (uint32_t pass = 0; pass < 2; ++pass) {
    const RuleRole role = pass == 0 ? RuleRole::kSignalQuality : RuleRole::kTone;
    for (uint32_t i = 0; i < e->rules_.size(); ++i) {
      if (e->rules_[i].config.role == role) e->order_.push_back(i);
    }
  }
  e->status_.resize(e->rules_.size());
  for (size_t i = 0; i < e->rules_.size(); ++i) {
    RuleStatus& s = e->status_[i];
    const Rule& r = e->rules_[i];
    s.name = r.config.name;
    s.reading = r.config.reading;
    s.channel = r.channel;
    s.value = kNaN;
    s.warning_threshold = s.critical_threshold = kNaN;
    s.learning = r.baseline.has_value();
  }
  e->queue_ = std::make_unique<CommandQueue>(config.command_queue_capacity);
  e->drained_.resize(config.command_queue_capacity);
  return e;
}

size_t AlarmEngine::carry_over(AlarmEngine& previous) {
  size_t continued = 0;
  for (size_t i = 0; i < rules_.size(); ++i) {
    Rule& r = rules_[i];
    const auto p = previous.rule_index(r.config.name);
    if (!p) continue;
    const Rule& old = previous.rules_[*p];
    if (old.config.reading != r.config.reading) continue;  // another quantity: start afresh
    r.condition = old.condition;
    r.candidate = old.candidate;
    r.candidate_since_ms = old.candidate_since_ms;
    r.candidate_pending = old.candidate_pending;
    r.reading_index = old.reading_index;
    if (r.baseline && old.baseline && old.config.mode == r.config.mode &&
        old.config.learn_s == r.config.learn_s && old.config.learn_max_samples == r.config.learn_max_samples) {
      r.baseline = old.baseline;
    }
    RuleStatus& s = status_[i];
    const RuleStatus& o = previous.status_[*p];
    s.state = o.state;
    s.severity = o.severity;
    s.suppressed = o.suppressed;
    s.value = o.value;
    s.state_since = o.state_since;
    s.shelved_until = o.shelved_until;
    s.ack_user = o.ack_user;
    s.ack_comment = o.ack_comment;
    s.ack_time = o.ack_time;
    s.learning = r.baseline.has_value() && !r.baseline->learned();
    if (r.baseline && r.baseline->learned()) {
      s.baseline_median = r.baseline->median();
      s.baseline_spread = r.baseline->spread();
    }
    ++continued;
  }
  // An acknowledgement sent just before the reload is not lost with the old engine.
  const size_t n = previous.queue_->drain_waiting(previous.drained_);
  for (size_t k = 0; k < n; ++k) {
    AlarmCommand c = previous.drained_[k];
    const auto index = rule_index(previous.rules_[c.rule_index].config.name);
    if (!index) continue;  // the rule is gone
    c.rule_index = static_cast<uint32_t>(*index);
    if (!queue_->push(c)) break;  // full: counted as rejected, like any other push
  }
  return continued;
}

std::optional<size_t> AlarmEngine::rule_index(std::string_view name) const noexcept {
  for (size_t i = 0; i < rules_.size(); ++i) {
    if (rules_[i].config.name == name) return i;
  }
  return std::nullopt;
}

base::Status AlarmEngine::enqueue(AlarmCommand command) {
  if (!queue_->push(command)) {
    return base::make_error(base::ErrorCode::kUnavailable,
                            "alarm command queue is full (" + std::to_string(queue_->capacity()) +
                                " pending); retry shortly");
  }
  return base::Status::success();
}

base::Status AlarmEngine::acknowledge(std::string_view rule, std::string_view user,
                                      std::string_view comment, base::WallTimeMs t) {
  const auto index = rule_index(rule);
  if (!index) return base::make_error(base::ErrorCode::kNotFound, "acknowledge: no rule '" + std::string(rule) + "'");
  if (user.empty()) return invalid("acknowledge '" + std::string(rule) + "': user is empty");
  AlarmCommand c;
  c.kind = CommandKind::kAcknowledge;
  c.rule_index = static_cast<uint32_t>(*index);
  c.t = t;
  c.user.assign(user);
  c.comment.assign(comment);
  return enqueue(c);
}

base::Status AlarmEngine::shelve(std::string_view rule, int64_t duration_ms, std::string_view user,
                                 std::string_view comment, base::WallTimeMs t) {
  const auto index = rule_index(rule);
  if (!index) return base::make_error(base::ErrorCode::kNotFound, "shelve: no rule '" + std::string(rule) + "'");
  // A shelf must end: at most 30 days, so that no alarm is silenced and forgotten.
  constexpr int64_t kMaxShelfMs = 30LL * 24 * 3600 * 1000;
  if (duration_ms <= 0 || duration_ms > kMaxShelfMs) {
    return invalid("shelve '" + std::string(rule) + "': duration_ms = " +
                   std::to_string(duration_ms) + ", must be in [1, " + std::to_string(kMaxShelfMs) + "]");
  }
  AlarmCommand c;
  c.kind = CommandKind::kShelve;
  c.rule_index = static_cast<uint32_t>(*index);
  c.t = t;
  c.duration_ms = duration_ms;
  c.user.assign(user);
  c.comment.assign(comment);
  return enqueue(c);
}

base::Status AlarmEngine::unshelve(std::string_view rule, std::string_view user, base::WallTimeMs t) {
  const auto index = rule_index(rule);
  if (!index) return base::make_error(base::ErrorCode::kNotFound, "unshelve: no rule '" + std::string(rule) + "'");
  AlarmCommand c;
  c.kind = CommandKind::kUnshelve;
  c.rule_index = static_cast<uint32_t>(*index);
  c.t = t;
  c.user.assign(user);
  return enqueue(c);
}

base::Status AlarmEngine::set_baseline(std::string_view rule, double median, double spread) {
  const auto index = rule_index(rule);
  if (!index) return base::make_error(base::ErrorCode::kNotFound, "set_baseline: no rule '" + std::string(rule) + "'");
  Rule& r = rules_[*index];
  if (!r.baseline) return invalid("set_baseline: rule '" + std::string(rule) + "' uses absolute levels");
  if (!std::isfinite(median) || !(spread >= 0.0)) {
    return invalid("set_baseline '" + std::string(rule) + "': median must be finite and spread >= 0");
  }
  r.baseline->set(median, spread);
  status_[*index].learning = false;
  status_[*index].baseline_median = median;
  status_[*index].baseline_spread = spread;
  return base::Status::success();
}

double AlarmEngine::threshold(const Rule& r, double level) const noexcept {
  switch (r.config.mode) {
    case ThresholdMode::kAbsolute: return level;
    case ThresholdMode::kBaselineDb: return r.baseline->median() * std::pow(10.0, level / 20.0);
    case ThresholdMode::kBaselineSpread: {
      const double spread = std::max(r.baseline->spread(), r.config.min_spread);
      return r.baseline->median() + level * spread;
    }
  }
  return kNaN;
}

Severity AlarmEngine::raw_severity(const Rule& r, double v) const noexcept {
  const bool above = r.config.direction == Direction::kAbove;
  const double h = r.config.hysteresis;
  // A level already in force is left only past the hysteresis band; a new one is entered
  // at the level itself.
  auto at = [&](const std::optional<double>& level, Severity severity) {
    if (!level) return false;
    const bool in = r.condition >= severity;
    if (above) return in ? v > threshold(r, *level - h) : v >= threshold(r, *level);
    return in ? v < threshold(r, *level + h) : v <= threshold(r, *level);
  };
  if (at(r.config.critical, Severity::kCritical)) return Severity::kCritical;
  if (at(r.config.warning, Severity::kWarning)) return Severity::kWarning;
  return Severity::kNone;
}

void AlarmEngine::emit(uint32_t index, AlarmState previous_state, Severity previous_severity,
                       EventCause cause, base::WallTimeMs t, double threshold_value,
                       EventBuffer& events, const AlarmCommand* command) noexcept {
  const Rule& r = rules_[index];
  RuleStatus& s = status_[index];
  if (s.state != previous_state) s.state_since = t;
  AlarmEvent e;
  e.t = t;
  e.rule_index = index;
  e.rule = r.config.name;
  e.reading = r.config.reading;
  e.channel = r.channel;
  e.value = s.value;
  e.threshold = threshold_value;
  e.severity = r.condition;
  e.previous_severity = previous_severity;
  e.state = s.state;
  e.previous_state = previous_state;
  e.cause = cause;
  if (command != nullptr) {
    e.user = command->user;
    e.comment = command->comment;
  }
  events.push(e);
}

void AlarmEngine::apply_command(const AlarmCommand& c, EventBuffer& events) noexcept {
  if (c.rule_index >= rules_.size()) return;
  Rule& r = rules_[c.rule_index];
  RuleStatus& s = status_[c.rule_index];
  const AlarmState before = s.state;
  const bool active = r.condition != Severity::kNone;
  EventCause cause = EventCause::kAcknowledge;
  switch (c.kind) {
    case CommandKind::kAcknowledge:
      if (before == AlarmState::kShelved || before == AlarmState::kNormal) return;
      s.state = transition(before, AlarmTrigger::kAcknowledge, active, r.config.latching);
      s.ack_user = c.user;
      s.ack_comment = c.comment;
      s.ack_time = c.t;
      break;
    case CommandKind::kShelve:
      s.shelved_until = base::WallTimeMs{c.t.unix_ms + c.duration_ms};
      s.state = AlarmState::kShelved;
      cause = EventCause::kShelve;
      break;
    case CommandKind::kUnshelve:
      if (before != AlarmState::kShelved) return;
      s.state = transition(before, AlarmTrigger::kUnshelve, active, r.config.latching);
      cause = EventCause::kUnshelve;
      break;
  }
  if (s.state != before) emit(c.rule_index, before, r.condition, cause, c.t, kNaN, events, &c);
}

void AlarmEngine::evaluate(const track::ReadingSet& readings, base::WallTimeMs t,
                           EventBuffer& events) noexcept {
  const size_t n = queue_->drain(drained_);
  for (size_t i = 0; i < n; ++i) apply_command(drained_[i], events);
  for (uint32_t i = 0; i < rules_.size(); ++i) {
    RuleStatus& s = status_[i];
    if (s.state == AlarmState::kShelved && t >= s.shelved_until) {
      s.state = transition(s.state, AlarmTrigger::kUnshelve, rules_[i].condition != Severity::kNone,
                           rules_[i].config.latching);
      emit(i, AlarmState::kShelved, rules_[i].condition, EventCause::kShelfExpired, t, kNaN,
           events, nullptr);
    }
  }
  for (uint32_t i : order_) evaluate_rule(i, readings, t, events);
}

void AlarmEngine::evaluate_rule(uint32_t index, const track::ReadingSet& readings,
                                base::WallTimeMs t, EventBuffer& events) noexcept {
  Rule& r = rules_[index];
  RuleStatus& s = status_[index];
  // Find the reading: the cached index is checked by name, so a changed layout still works.
  size_t ri = r.reading_index;
  if (ri >= readings.size() || readings[ri].name != r.config.reading) {
    const auto found = readings.find(r.config.reading);
    ri = found ? *found : SIZE_MAX;
    r.reading_index = ri;
    if (!found) ++missing_readings_;
  }
  const bool valid = ri != SIZE_MAX && readings[ri].valid && std::isfinite(readings[ri].value);
  const double v = valid ? readings[ri].value : kNaN;
  s.value = v;

  if (r.baseline && !r.baseline->learned()) {
    if (valid) r.baseline->add(v, t);
    if (!r.baseline->learned()) {
      s.learning = true;
      return;
    }
    s.learning = false;
    s.baseline_median = r.baseline->median();
    s.baseline_spread = r.baseline->spread();
  }
  // dB over a baseline needs a positive baseline; otherwise the rule cannot judge.
  if (r.config.mode == ThresholdMode::kBaselineDb && !(r.baseline->median() > 0.0)) return;
  s.warning_threshold = r.config.warning ? threshold(r, *r.config.warning) : kNaN;
  s.critical_threshold = r.config.critical ? threshold(r, *r.config.critical) : kNaN;

  bool suppressed = false;
  for (uint32_t q : r.suppressors) suppressed = suppressed || rules_[q].condition != Severity::kNone;
  s.suppressed = suppressed;
  if (suppressed) {
    // Hold the tone rule as it is; its delays start afresh once the signal is trusted again.
    r.candidate_pending = false;
    return;
  }

  Severity raw = Severity::kNone;
  if (valid) {
    raw = raw_severity(r, v);
  } else {
    switch (r.config.on_invalid) {
      case InvalidPolicy::kHold: return;
      case InvalidPolicy::kClear: raw = Severity::kNone; break;
      case InvalidPolicy::kWarning: raw = Severity::kWarning; break;
      case InvalidPolicy::kCritical: raw = Severity::kCritical; break;
    }
  }
  if (raw == r.condition) {
    r.candidate_pending = false;
    return;
  }
  if (!r.candidate_pending || r.candidate != raw) {
    r.candidate = raw;
    r.candidate_since_ms = t.unix_ms;
    r.candidate_pending = true;
  }
  const double delay_s = raw > r.condition ? r.config.on_delay_s : r.config.off_delay_s;
  if (static_cast<double>(t.unix_ms - r.candidate_since_ms) < delay_s * 1000.0) return;

  const Severity before = r.condition;
  r.condition = raw;
  r.candidate_pending = false;
  s.severity = raw;
  // The level that was crossed: entered at the new level, or left past the old one.
  const auto level_of = [&](Severity sev) {
    return sev == Severity::kCritical ? r.config.critical : r.config.warning;
  };
  double crossed = kNaN;
  if (raw > before) {
    if (auto l = level_of(raw)) crossed = threshold(r, *l);
  } else if (auto l = level_of(before)) {
    const double h = r.config.direction == Direction::kAbove ? -r.config.hysteresis : r.config.hysteresis;
    crossed = threshold(r, *l + h);
  }
  const AlarmState state_before = s.state;
  if (state_before == AlarmState::kShelved) return;  // shelved: tracked, but silent
  AlarmTrigger trigger;
  bool has_trigger = true;
  if (before == Severity::kNone) {
    trigger = AlarmTrigger::kRaise;
  } else if (raw == Severity::kNone) {
    trigger = AlarmTrigger::kClear;
  } else if (raw > before) {
    trigger = AlarmTrigger::kEscalate;
  } else {
    trigger = AlarmTrigger::kClear;
    has_trigger = false;  // critical -> warning: still active, severity-only event
  }
  if (has_trigger) s.state = transition(state_before, trigger, raw != Severity::kNone, r.config.latching);
  emit(index, state_before, before, EventCause::kCondition, t, crossed, events, nullptr);
}

std::string AlarmEngine::describe() const {
  size_t quality = 0, baseline = 0;
  for (const Rule& r : rules_) {
    quality += r.config.role == RuleRole::kSignalQuality;
    baseline += r.baseline.has_value();
  }
  return "alarm engine: " + std::to_string(rules_.size()) + " rules (" + std::to_string(quality) +
         " signal-quality, " + std::to_string(baseline) + " baseline-relative), command queue " +
         std::to_string(queue_->capacity());
}

}  // namespace tonewarden::alarm
