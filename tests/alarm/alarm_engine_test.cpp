// Focus: AlarmEngine rules - levels, hysteresis and delays (no chatter), acknowledgement,
// RTN-unack, latching, shelving and its expiry, baseline learning, and command errors.
#include "tonewarden/alarm/alarm_engine.h"

#include <gtest/gtest.h>

#include <cmath>
#include <random>
#include <thread>

namespace tonewarden::alarm {
namespace {

using base::WallTimeMs;

constexpr int64_t kT0 = 1'700'000'000'000;  // an arbitrary reading-time origin, ms

// One reading "de.bpfo.amplitude" and one engine; step() feeds a value at a time in seconds.
class EngineHarness {
 public:
  explicit EngineHarness(std::vector<RuleConfig> rules) : events_(256) {
    index_ = *readings_.add("de.bpfo.amplitude", "g", "de");
    AlarmEngineConfig config;
    config.rules = std::move(rules);
    auto engine = AlarmEngine::create(config);
    EXPECT_TRUE(engine.ok()) << (engine.ok() ? "" : engine.error().message);
    engine_ = std::move(*engine);
  }
  // Returns the events of this step.
  std::vector<AlarmEvent> step(double value, double t_s, bool valid = true) {
    events_.clear();
    if (valid) readings_.set(index_, value); else readings_.invalidate(index_);
    engine_->evaluate(readings_, at(t_s), events_);
    return {events_.events().begin(), events_.events().end()};
  }
  static WallTimeMs at(double t_s) { return WallTimeMs{kT0 + std::llround(t_s * 1000.0)}; }
  AlarmEngine& engine() { return *engine_; }
  const RuleStatus& status(size_t i = 0) { return engine_->status()[i]; }

 private:
  track::ReadingSet readings_;
  size_t index_ = 0;
  std::unique_ptr<AlarmEngine> engine_;
  EventBuffer events_;
};

RuleConfig above_rule(double warning, double critical) {
  RuleConfig r;
  r.name = "de.bpfo";
  r.reading = "de.bpfo.amplitude";
  r.warning = warning;
  r.critical = critical;
  return r;
}

TEST(AlarmEngineTest, RaisesEscalatesAndReturnsUnacknowledged) {
  EngineHarness h({above_rule(1.0, 2.0)});
  EXPECT_TRUE(h.step(0.5, 0).empty());
  auto e = h.step(1.2, 1);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kUnacknowledged);
  EXPECT_EQ(e[0].previous_state, AlarmState::kNormal);
  EXPECT_EQ(e[0].severity, Severity::kWarning);
  EXPECT_DOUBLE_EQ(e[0].threshold, 1.0);
  EXPECT_DOUBLE_EQ(e[0].value, 1.2);
  EXPECT_EQ(e[0].rule, "de.bpfo");
  EXPECT_EQ(e[0].channel, "de");
  e = h.step(2.5, 2);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].severity, Severity::kCritical);
  EXPECT_EQ(e[0].previous_severity, Severity::kWarning);
  EXPECT_DOUBLE_EQ(e[0].threshold, 2.0);
  e = h.step(0.1, 3);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kReturnedUnacknowledged);
  EXPECT_EQ(e[0].severity, Severity::kNone);
  ASSERT_TRUE(h.engine().acknowledge("de.bpfo", "ana", "seen on the trend", h.at(4)).ok());
  e = h.step(0.1, 4);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kNormal);
  EXPECT_EQ(e[0].cause, EventCause::kAcknowledge);
}

TEST(AlarmEngineTest, AcknowledgementRecordsUserAndComment) {
  EngineHarness h({above_rule(1.0, 2.0)});
  h.step(1.5, 0);
  ASSERT_TRUE(h.engine().acknowledge("de.bpfo", "ana", "bearing ordered", h.at(1)).ok());
  auto e = h.step(1.5, 1);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kAcknowledged);
  EXPECT_EQ(e[0].previous_state, AlarmState::kUnacknowledged);
  EXPECT_EQ(e[0].user.view(), "ana");
  EXPECT_EQ(e[0].comment.view(), "bearing ordered");
  EXPECT_EQ(h.status().ack_user.view(), "ana");
  EXPECT_EQ(h.status().ack_time.unix_ms, h.at(1).unix_ms);
  e = h.step(0.5, 2);  // acknowledged and cleared: back to normal
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kNormal);
}

TEST(AlarmEngineTest, NoisyReadingAtThresholdDoesNotChatterWithHysteresisAndDelays) {
  // A reading hovering at its warning level: 1.0 + Gaussian noise (σ 0.05), one per second
  // for ten minutes. Without hysteresis or delays nearly every crossing is an event.
  std::vector<double> values;
  std::mt19937_64 rng(42);
  std::normal_distribution<double> noise(0.0, 0.05);
  for (int i = 0; i < 600; ++i) values.push_back(1.0 + noise(rng));
  auto count_events = [&](RuleConfig rule) {
    EngineHarness h({rule});
    size_t n = 0;
    for (size_t i = 0; i < values.size(); ++i) n += h.step(values[i], double(i)).size();
    return n;
  };
  RuleConfig bare = above_rule(1.0, 5.0);
  RuleConfig damped = bare;
  damped.hysteresis = 0.2;  // 4σ below the level to clear
  damped.on_delay_s = 5.0;
  damped.off_delay_s = 10.0;
  const size_t without = count_events(bare);
  const size_t with = count_events(damped);
  // Expected from construction: about half the steps change side without damping (~300
  // crossings); with a 4σ hysteresis band the alarm is raised once and stays.
  EXPECT_GT(without, 100u);
  EXPECT_EQ(with, 1u);
}

TEST(AlarmEngineTest, OnAndOffDelaysRunInReadingTime) {
  RuleConfig r = above_rule(1.0, 2.0);
  r.on_delay_s = 3.0;
  r.off_delay_s = 2.0;
  EngineHarness h({r});
  EXPECT_TRUE(h.step(1.5, 0).empty());
  EXPECT_TRUE(h.step(1.5, 2).empty());   // held 2 s < 3 s
  EXPECT_EQ(h.step(1.5, 3).size(), 1u);  // held 3 s
  EXPECT_TRUE(h.step(0.5, 4).empty());
  EXPECT_TRUE(h.step(1.5, 5).empty());   // back above: the off-delay restarts
  EXPECT_TRUE(h.step(0.5, 6).empty());
  EXPECT_TRUE(h.step(0.5, 7).empty());
  auto e = h.step(0.5, 8);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kReturnedUnacknowledged);
}

TEST(AlarmEngineTest, LatchingAlarmStaysUntilAcknowledged) {
  RuleConfig r = above_rule(1.0, 2.0);
  r.latching = true;
  EngineHarness h({r});
  h.step(1.5, 0);
  auto e = h.step(0.2, 1);  // condition clears; the alarm stays latched
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kUnacknowledged);
  EXPECT_EQ(e[0].severity, Severity::kNone);
  EXPECT_TRUE(h.step(0.2, 60).empty());
  EXPECT_EQ(h.status().state, AlarmState::kUnacknowledged);
  ASSERT_TRUE(h.engine().acknowledge("de.bpfo", "ana", "", h.at(61)).ok());
  e = h.step(0.2, 61);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kNormal);
}

TEST(AlarmEngineTest, ShelvedAlarmIsSilentAndReturnsWhenTheShelfExpires) {
  EngineHarness h({above_rule(1.0, 2.0)});
  h.step(1.5, 0);
  ASSERT_TRUE(h.engine().shelve("de.bpfo", 10'000, "ana", "pump on test", h.at(1)).ok());
  auto e = h.step(1.5, 1);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kShelved);
  EXPECT_EQ(e[0].cause, EventCause::kShelve);
  EXPECT_EQ(h.status().shelved_until.unix_ms, h.at(11).unix_ms);
  EXPECT_TRUE(h.step(2.5, 5).empty());   // escalates while shelved: silent
  EXPECT_TRUE(h.step(2.5, 10.9).empty());
  e = h.step(2.5, 11);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].cause, EventCause::kShelfExpired);
  EXPECT_EQ(e[0].state, AlarmState::kUnacknowledged);  // still active: announced again
  EXPECT_EQ(e[0].severity, Severity::kCritical);
}

TEST(AlarmEngineTest, UnshelveOfAClearedAlarmReturnsToNormal) {
  EngineHarness h({above_rule(1.0, 2.0)});
  ASSERT_TRUE(h.engine().shelve("de.bpfo", 60'000, "ana", "", h.at(0)).ok());
  h.step(1.5, 0);
  h.step(0.5, 1);
  ASSERT_TRUE(h.engine().unshelve("de.bpfo", "ana", h.at(2)).ok());
  auto e = h.step(0.5, 2);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].cause, EventCause::kUnshelve);
  EXPECT_EQ(e[0].state, AlarmState::kNormal);
}

TEST(AlarmEngineTest, LearnsBaselineMedianAndSpreadThenAlarmsOnSpreads) {
  RuleConfig r = above_rule(3.0, 6.0);
  r.mode = ThresholdMode::kBaselineSpread;
  r.learn_s = 60.0;
  EngineHarness h({r});
  // 0.9, 1.0, 1.1 repeated: median 1.0, MAD 0.1, spread 1.4826·0.1 (σ-consistent MAD
  // scale 1/Φ⁻¹(3/4); standard robust-statistics identity).
  const double cycle[] = {0.9, 1.0, 1.1};
  for (int i = 0; i <= 60; ++i) {
    EXPECT_TRUE(h.step(cycle[i % 3], i).empty());
    EXPECT_EQ(h.status().learning, i < 60) << i;
  }
  EXPECT_NEAR(h.status().baseline_median, 1.0, 1e-12);
  EXPECT_NEAR(h.status().baseline_spread, 0.14826022, 1e-8);
  // Warning at median + 3·spread = 1.444781, critical at + 6·spread = 1.889561.
  EXPECT_NEAR(h.status().warning_threshold, 1.4447807, 1e-6);
  EXPECT_TRUE(h.step(1.40, 61).empty());
  auto e = h.step(1.50, 62);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].severity, Severity::kWarning);
}

TEST(AlarmEngineTest, BaselineDecibelLevelsScaleTheMedian) {
  RuleConfig r = above_rule(6.0, 12.0);
  r.mode = ThresholdMode::kBaselineDb;
  EngineHarness h({r});
  ASSERT_TRUE(h.engine().set_baseline("de.bpfo", 0.5, 0.01).ok());
  // +6 dB over 0.5 is 0.5·10^(6/20) = 0.997631 (amplitude dB: 20·log10).
  EXPECT_TRUE(h.step(0.99, 0).empty());
  auto e = h.step(1.0, 1);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_NEAR(e[0].threshold, 0.9976312, 1e-6);
}

TEST(AlarmEngineTest, BelowRuleUsesHysteresisAbove) {
  RuleConfig r = above_rule(10.0, 5.0);
  r.direction = Direction::kBelow;
  r.hysteresis = 1.0;
  EngineHarness h({r});
  EXPECT_EQ(h.step(9.5, 0).size(), 1u);
  EXPECT_TRUE(h.step(10.5, 1).empty());  // inside the hysteresis band (clears above 11)
  EXPECT_EQ(h.step(11.5, 2).size(), 1u);
}

TEST(AlarmEngineTest, InvalidReadingFollowsPolicy) {
  RuleConfig hold = above_rule(1.0, 2.0);
  RuleConfig unknown = hold;
  unknown.name = "unknown";
  unknown.on_invalid = InvalidPolicy::kWarning;
  EngineHarness h({hold, unknown});
  EXPECT_TRUE(h.step(0.5, 0).empty());
  auto e = h.step(0.0, 1, /*valid=*/false);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].rule, "unknown");
  EXPECT_TRUE(std::isnan(e[0].value));
}

TEST(AlarmEngineTest, RejectsBadRulesAndCommandsWithClearErrors) {
  AlarmEngineConfig config;
  config.rules = {above_rule(2.0, 1.0)};
  auto bad = AlarmEngine::create(config);
  ASSERT_FALSE(bad.ok());
  EXPECT_NE(bad.error().message.find("warning < critical"), std::string::npos)
      << bad.error().message;
  config.rules = {above_rule(1.0, 2.0), above_rule(1.0, 2.0)};
  ASSERT_FALSE(AlarmEngine::create(config).ok());
  config.rules = {above_rule(1.0, 2.0)};
  config.rules[0].on_delay_s = -1;
  ASSERT_FALSE(AlarmEngine::create(config).ok());

  config.rules = {above_rule(1.0, 2.0)};
  config.command_queue_capacity = 2;
  auto engine = AlarmEngine::create(config);
  ASSERT_TRUE(engine.ok());
  auto& e = **engine;
  auto missing = e.acknowledge("nope", "ana", "", WallTimeMs{kT0});
  ASSERT_FALSE(missing.ok());
  EXPECT_EQ(missing.error().code, base::ErrorCode::kNotFound);
  EXPECT_FALSE(e.shelve("de.bpfo", 0, "ana", "", WallTimeMs{kT0}).ok());
  EXPECT_FALSE(e.acknowledge("de.bpfo", "", "", WallTimeMs{kT0}).ok());
  // Overflow policy reject-newest: the third command is refused, the first two kept.
  EXPECT_TRUE(e.acknowledge("de.bpfo", "a", "", WallTimeMs{kT0}).ok());
  EXPECT_TRUE(e.acknowledge("de.bpfo", "b", "", WallTimeMs{kT0}).ok());
  auto full = e.acknowledge("de.bpfo", "c", "", WallTimeMs{kT0});
  ASSERT_FALSE(full.ok());
  EXPECT_EQ(full.error().code, base::ErrorCode::kUnavailable);
  EXPECT_EQ(e.num_commands_rejected(), 1u);
}

TEST(AlarmEngineTest, EventBufferDropsNewestWhenFull) {
  EventBuffer buffer(1);
  AlarmEvent e;
  EXPECT_TRUE(buffer.push(e));
  EXPECT_FALSE(buffer.push(e));
  EXPECT_EQ(buffer.size(), 1u);
  EXPECT_EQ(buffer.num_dropped(), 1u);
}

TEST(AlarmEngineTest, CommandsFromAnotherThreadAreAppliedByEvaluate) {
  EngineHarness h({above_rule(1.0, 2.0)});
  h.step(1.5, 0);
  std::thread operator_thread([&] {
    EXPECT_TRUE(h.engine().acknowledge("de.bpfo", "ana", "from the dashboard", h.at(1)).ok());
  });
  operator_thread.join();
  auto e = h.step(1.5, 1);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].state, AlarmState::kAcknowledged);
}

}  // namespace
}  // namespace tonewarden::alarm

namespace tonewarden::alarm {
namespace {

// A reload replaces the engine. In the ISA-18.2 state model (from memory) an acknowledged alarm
// whose condition still holds stays acknowledged; only a change of condition makes an event.
TEST(AlarmEngineCarryOverTest, AcknowledgedAlarmStaysAcknowledgedUnderNewLevels) {
  EngineHarness before({above_rule(1.0, 2.0)});
  ASSERT_EQ(before.step(1.5, 0).size(), 1u);  // normal -> unacknowledged (warning)
  ASSERT_TRUE(before.engine().acknowledge("de.bpfo", "ana", "bearing on order", before.at(1)).ok());
  ASSERT_EQ(before.step(1.5, 1).size(), 1u);  // -> acknowledged
  ASSERT_EQ(before.status().state, AlarmState::kAcknowledged);

  // New levels for the same rule: warning 1.2 still holds at 1.5.
  EngineHarness after({above_rule(1.2, 3.0)});
  EXPECT_EQ(after.engine().carry_over(before.engine()), 1u);
  EXPECT_EQ(after.status().state, AlarmState::kAcknowledged);
  EXPECT_EQ(after.status().ack_user.view(), "ana");
  EXPECT_EQ(after.status().ack_comment.view(), "bearing on order");
  EXPECT_EQ(after.status().state_since, before.status().state_since);
  EXPECT_TRUE(after.step(1.5, 2).empty()) << "no new activation for an alarm already acknowledged";
  // Below the new warning level it clears: acknowledged -> normal, one event.
  const auto e = after.step(1.0, 3);
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].previous_state, AlarmState::kAcknowledged);
  EXPECT_EQ(e[0].state, AlarmState::kNormal);
}

TEST(AlarmEngineCarryOverTest, RaisedLevelsTurnAnActiveAlarmIntoReturnedUnacknowledged) {
  EngineHarness before({above_rule(1.0, 2.0)});
  ASSERT_EQ(before.step(1.5, 0).size(), 1u);  // unacknowledged
  EngineHarness after({above_rule(1.8, 3.0)});
  ASSERT_EQ(after.engine().carry_over(before.engine()), 1u);
  const auto e = after.step(1.5, 1);  // 1.5 is under the new warning level
  ASSERT_EQ(e.size(), 1u);
  EXPECT_EQ(e[0].previous_state, AlarmState::kUnacknowledged);
  EXPECT_EQ(e[0].state, AlarmState::kReturnedUnacknowledged);
}

TEST(AlarmEngineCarryOverTest, AnAcknowledgementQueuedBeforeTheReloadIsAppliedAfterIt) {
  EngineHarness before({above_rule(1.0, 2.0), [] {
                          RuleConfig gone = above_rule(5.0, 6.0);
                          gone.name = "de.removed";
                          return gone;
                        }()});
  ASSERT_EQ(before.step(1.5, 0).size(), 1u);  // de.bpfo: unacknowledged
  // Queued, not yet applied (the next evaluate would apply it), then the reload happens.
  ASSERT_TRUE(before.engine().acknowledge("de.bpfo", "ana", "seen", before.at(0.5)).ok());
  ASSERT_TRUE(before.engine().acknowledge("de.removed", "ana", "", before.at(0.5)).ok());
  EngineHarness after({above_rule(1.0, 2.0)});
  ASSERT_EQ(after.engine().carry_over(before.engine()), 1u);
  const auto e = after.step(1.5, 1);
  ASSERT_EQ(e.size(), 1u);  // the acknowledgement, once; the removed rule's command is dropped
  EXPECT_EQ(e[0].state, AlarmState::kAcknowledged);
  EXPECT_EQ(e[0].user.view(), "ana");
  EXPECT_EQ(after.engine().num_commands_rejected(), 0u);
}

TEST(AlarmEngineCarryOverTest, ARuleOnAnotherReadingOrANewNameStartsNormal) {
  EngineHarness before({above_rule(1.0, 2.0)});
  ASSERT_EQ(before.step(1.5, 0).size(), 1u);
  RuleConfig moved = above_rule(1.0, 2.0);
  moved.reading = "de.bpfo.snr_db";
  RuleConfig renamed = above_rule(1.0, 2.0);
  renamed.name = "de.bpfo-2";
  for (const RuleConfig& r : {moved, renamed}) {
    EngineHarness after({r});
    EXPECT_EQ(after.engine().carry_over(before.engine()), 0u) << r.name << " " << r.reading;
    EXPECT_EQ(after.status().state, AlarmState::kNormal);
  }
}

}  // namespace
}  // namespace tonewarden::alarm
