// Focus: signal-quality readings (clipping, flat line, lost source, ring overflow), their
// suppression of tone alarms on the same channel, speed-range rules, and zone presets.
#include "tonewarden/alarm/signal_quality.h"

#include <gtest/gtest.h>

#include <cmath>

#include "tonewarden/alarm/alarm_engine.h"
#include "tonewarden/alarm/severity_presets.h"

namespace tonewarden::alarm {
namespace {

using base::WallTimeMs;
constexpr int64_t kT0 = 1'700'000'000'000;

TEST(SignalQualityTest, CountsClippedSamplesAndDetectsFlatLine) {
  track::ReadingSet set;
  SignalQualityConfig config;
  config.channel = "de";
  config.full_scale = 1.0;
  config.clip_fraction = 0.99;
  auto q = SignalQuality::create(config, set);
  ASSERT_TRUE(q.ok());
  // Three samples at or beyond 0.99 of full scale, by construction.
  const float block[] = {0.1f, -0.995f, 0.5f, 1.0f, -1.0f, 0.98f};
  q->process(block);
  q->note_ring_overflows(2);
  q->publish(set);
  EXPECT_EQ(set[*set.find("de.clipped_samples")].value, 3.0);
  EXPECT_EQ(set[*set.find("de.ring_overflows")].value, 2.0);
  EXPECT_EQ(set[*set.find("de.flat_line")].value, 0.0);
  EXPECT_EQ(set[*set.find("de.source_lost")].value, 0.0);
  // A stuck converter: a constant value has zero variance.
  const float stuck[] = {0.25f, 0.25f, 0.25f, 0.25f};
  q->process(stuck);
  q->set_source_lost(true);
  q->publish(set);
  EXPECT_EQ(set[*set.find("de.clipped_samples")].value, 0.0);  // new period
  EXPECT_EQ(set[*set.find("de.flat_line")].value, 1.0);
  EXPECT_EQ(set[*set.find("de.source_lost")].value, 1.0);
  q->publish(set);  // no samples at all: flat line cannot be judged
  EXPECT_FALSE(set[*set.find("de.flat_line")].valid);
}

TEST(SignalQualityTest, RejectsBadConfig) {
  track::ReadingSet set;
  SignalQualityConfig config;
  config.channel = "de";
  config.full_scale = 0.0;
  auto q = SignalQuality::create(config, set);
  ASSERT_FALSE(q.ok());
  EXPECT_NE(q.error().message.find("full_scale"), std::string::npos);
}

// Two channels with a tone rule each and the quality rules of channel "de".
struct TwoChannelRig {
  track::ReadingSet set;
  size_t de_tone = 0, nde_tone = 0;
  std::unique_ptr<SignalQuality> de_quality;
  std::unique_ptr<AlarmEngine> engine;
  EventBuffer events{128};

  TwoChannelRig() {
    de_tone = *set.add("de.bpfo.amplitude", "g", "de");
    nde_tone = *set.add("nde.bpfo.amplitude", "g", "nde");
    SignalQualityConfig qc;
    qc.channel = "de";
    de_quality = std::make_unique<SignalQuality>(std::move(*SignalQuality::create(qc, set)));
    AlarmEngineConfig config;
    SignalQualityRuleConfig rc;
    rc.channel = "de";
    rc.off_delay_s = 0.0;
    config.rules = signal_quality_rules(rc);
    for (const char* ch : {"de", "nde"}) {
      RuleConfig tone;
      tone.name = std::string(ch) + ".bpfo";
      tone.reading = std::string(ch) + ".bpfo.amplitude";
      tone.warning = 0.1;
      config.rules.push_back(tone);
    }
    engine = AlarmEngine::create(config).value();
  }
  size_t count(std::string_view rule) const {
    size_t n = 0;
    for (const auto& e : events.events()) n += e.rule == rule;
    return n;
  }
};

TEST(SignalQualityTest, ClippingSuppressesToneAlarmsOnItsChannelOnly) {
  TwoChannelRig rig;
  // A clipping sensor produces a broadband mess: every tone reads high. Over ten periods the
  // tone rule on the clipping channel must stay quiet while the other channel alarms.
  std::vector<float> clipped(256, 1.0f);
  for (size_t i = 0; i < clipped.size(); i += 2) clipped[i] = -1.0f;
  for (int period = 0; period < 10; ++period) {
    rig.de_quality->process(clipped);
    rig.de_quality->publish(rig.set);
    rig.set.set(rig.de_tone, 5.0);
    rig.set.set(rig.nde_tone, 5.0);
    rig.engine->evaluate(rig.set, WallTimeMs{kT0 + period * 1000}, rig.events);
  }
  EXPECT_EQ(rig.count("de.clipping"), 1u);
  EXPECT_EQ(rig.count("de.bpfo"), 0u);
  EXPECT_EQ(rig.count("nde.bpfo"), 1u);
  const auto de_index = *rig.engine->rule_index("de.bpfo");
  EXPECT_TRUE(rig.engine->status()[de_index].suppressed);
  // The sensor recovers: the tone alarm on "de" may now speak.
  rig.events.clear();
  std::vector<float> clean(256, 0.0f);
  for (size_t i = 0; i < clean.size(); ++i) clean[i] = 0.3f * std::sin(0.1f * float(i));
  rig.de_quality->process(clean);
  rig.de_quality->publish(rig.set);
  rig.engine->evaluate(rig.set, WallTimeMs{kT0 + 10'000}, rig.events);
  EXPECT_EQ(rig.count("de.clipping"), 1u);  // returned-unacknowledged
  EXPECT_EQ(rig.count("de.bpfo"), 1u);
  EXPECT_FALSE(rig.engine->status()[de_index].suppressed);
}

TEST(SignalQualityTest, UnknownSpeedRaisesRigWideQualityAlarm) {
  track::ReadingSet set;
  const size_t speed = *set.add("speed_rpm", "rpm", "");
  const size_t tone = *set.add("de.order1.amplitude", "g", "de");
  AlarmEngineConfig config;
  config.rules = speed_range_rules(1000.0, 3600.0, 0.0);
  RuleConfig order;
  order.name = "de.order1";
  order.reading = "de.order1.amplitude";
  order.warning = 1.0;
  config.rules.push_back(order);
  auto engine = AlarmEngine::create(config).value();
  EventBuffer events(16);
  set.invalidate(speed);  // speed unknown
  set.set(tone, 3.0);
  engine->evaluate(set, WallTimeMs{kT0}, events);
  ASSERT_EQ(events.size(), 1u);
  EXPECT_EQ(events.events()[0].rule, "speed.below_range");
  EXPECT_EQ(events.events()[0].severity, Severity::kWarning);
  events.clear();
  set.set(speed, 2975.0);  // speed known and in range: the order alarm is free to fire
  engine->evaluate(set, WallTimeMs{kT0 + 1000}, events);
  ASSERT_EQ(events.size(), 2u);
  EXPECT_EQ(events.events()[1].rule, "de.order1");
}

TEST(SeverityPresetsTest, CarriesZoneBoundariesMarkedFromMemory) {
  // ISO 10816-3 zone boundaries, velocity RMS mm/s. From memory; check the current standard
  // (the table in REFERENCES.md is tagged [M] as well).
  const auto presets = iso10816_3_presets();
  ASSERT_EQ(presets.size(), 4u);
  const auto g2r = find_zone_preset("iso10816-3:group2-rigid");
  ASSERT_TRUE(g2r.has_value());
  EXPECT_DOUBLE_EQ(g2r->ab_mm_s, 1.4);
  EXPECT_DOUBLE_EQ(g2r->bc_mm_s, 2.8);
  EXPECT_DOUBLE_EQ(g2r->cd_mm_s, 4.5);
  const auto g1f = find_zone_preset("iso10816-3:group1-flexible");
  ASSERT_TRUE(g1f.has_value());
  EXPECT_DOUBLE_EQ(g1f->cd_mm_s, 11.0);
  for (const auto& p : presets) {
    EXPECT_LT(p.ab_mm_s, p.bc_mm_s);
    EXPECT_LT(p.bc_mm_s, p.cd_mm_s);
    EXPECT_STREQ(p.provenance, "from memory; check the current standard");
  }
  EXPECT_FALSE(find_zone_preset("iso10816-3:group3").has_value());
}

}  // namespace
}  // namespace tonewarden::alarm
