// AlarmEngine: evaluates rules on each period's readings, runs the ISA-18.2 state machine per
// rule, learns baselines, lets signal-quality rules suppress tone rules on their channel, and
// reports every state or severity change as an event.
//
// Threads: evaluate(), status(), set_baseline() belong to the analysis thread that owns the
// engine. acknowledge(), shelve() and unshelve() may be called from any thread: they only
// queue a command (see CommandQueue for its overflow policy), which the next evaluate()
// applies before it looks at the readings. All times are reading time (WallTimeMs).
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/alarm/alarm_state.h"
#include "tonewarden/alarm/baseline.h"
#include "tonewarden/alarm/command_queue.h"
#include "tonewarden/alarm/event.h"
#include "tonewarden/alarm/rule.h"
#include "tonewarden/base/result.h"
#include "tonewarden/track/reading_set.h"

namespace tonewarden::alarm {

struct AlarmEngineConfig {
  std::vector<RuleConfig> rules;
  size_t command_queue_capacity = 64;  // >= 1
};

// What the dashboard and status endpoint show for one rule.
struct RuleStatus {
  std::string_view name;
  std::string_view reading;
  std::string_view channel;
  AlarmState state = AlarmState::kNormal;
  Severity severity = Severity::kNone;  // of the condition (after hysteresis and delays)
  bool suppressed = false;              // a signal-quality alarm on its channel holds it
  bool learning = false;                // baseline not learnt yet; the rule is idle
  double value = 0.0;                   // last reading (NaN when invalid)
  double warning_threshold = 0.0;       // absolute levels in force (NaN when unset/unknown)
  double critical_threshold = 0.0;
  double baseline_median = 0.0;
  double baseline_spread = 0.0;
  base::WallTimeMs state_since{};
  base::WallTimeMs shelved_until{};     // meaningful while shelved
  FixedText<kMaxUserBytes> ack_user;    // last acknowledgement
  FixedText<kMaxCommentBytes> ack_comment;
  base::WallTimeMs ack_time{};
};

class AlarmEngine {
 public:
  static base::Result<std::unique_ptr<AlarmEngine>> create(const AlarmEngineConfig& config);

  // Applies queued commands, expires shelves, then evaluates every rule against `readings`
  // at time `t`, appending one event per change to `events`. Allocation-free, noexcept.
  void evaluate(const track::ReadingSet& readings, base::WallTimeMs t,
                EventBuffer& events) noexcept;

  // Any thread. Errors: unknown rule, bad duration, or the command queue is full.
  base::Status acknowledge(std::string_view rule, std::string_view user,
                           std::string_view comment, base::WallTimeMs t);
  base::Status shelve(std::string_view rule, int64_t duration_ms, std::string_view user,
                      std::string_view comment, base::WallTimeMs t);
  base::Status unshelve(std::string_view rule, std::string_view user, base::WallTimeMs t);

  // Analysis thread, before the first evaluate(): continues from `previous` (the engine this
  // one replaces on a reload). A rule of the same name on the same reading keeps its ISA-18.2
  // state, condition, pending delays, shelf and acknowledgement, and its baseline when the
  // threshold mode and learning period are unchanged; its new levels apply from the next
  // evaluate(). Other rules start normal. Commands still queued to `previous` (its producers
  // must have moved to this engine) are queued here, for rules that exist here. Returns how
  // many rules continued.
  size_t carry_over(AlarmEngine& previous);

  // Analysis thread: installs a stored baseline for a baseline-relative rule.
  base::Status set_baseline(std::string_view rule, double median, double spread);

  std::span<const RuleStatus> status() const noexcept { return status_; }
  std::optional<size_t> rule_index(std::string_view name) const noexcept;
  size_t num_rules() const noexcept { return rules_.size(); }
  uint64_t num_commands_rejected() const noexcept { return queue_->num_rejected(); }
  uint64_t num_missing_readings() const noexcept { return missing_readings_; }
  std::string describe() const;

 private:
  struct Rule {
    RuleConfig config;
    std::string channel;
    std::vector<uint32_t> suppressors;  // quality rules that suppress this tone rule
    std::optional<Baseline> baseline;
    size_t reading_index = SIZE_MAX;    // cached position in the ReadingSet
    Severity condition = Severity::kNone;
    Severity candidate = Severity::kNone;
    int64_t candidate_since_ms = 0;
    bool candidate_pending = false;
  };
  AlarmEngine() = default;
  base::Status enqueue(AlarmCommand command);
  void apply_command(const AlarmCommand& c, EventBuffer& events) noexcept;
  void evaluate_rule(uint32_t index, const track::ReadingSet& readings, base::WallTimeMs t,
                     EventBuffer& events) noexcept;
  double threshold(const Rule& r, double level) const noexcept;
  Severity raw_severity(const Rule& r, double value) const noexcept;
  void emit(uint32_t index, AlarmState previous_state, Severity previous_severity,
            EventCause cause, base::WallTimeMs t, double threshold, EventBuffer& events,
            const AlarmCommand* command) noexcept;

  std::vector<Rule> rules_;
  std::vector<RuleStatus> status_;
  std::vector<uint32_t> order_;           // quality rules first, then tone rules
  std::unique_ptr<CommandQueue> queue_;
  std::vector<AlarmCommand> drained_;
  uint64_t missing_readings_ = 0;
};

}  // namespace tonewarden::alarm
