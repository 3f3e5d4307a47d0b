// Focus: the synthetic rig, run through the whole pipeline (capture and analysis threads,
// tach speed, trackers, signal quality, alarm engine) at a high story speed, raises the BPFO
// defect warning within the window its own ground truth predicts, and nothing before it.
// The run is fast-paced: the pipeline applies backpressure to non-live sources, so no block is lost.
#include <gtest/gtest.h>

#include <chrono>
#include <cmath>
#include <memory>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

#include "tonewarden/alarm/event.h"
#include "tonewarden/pipeline/rig_monitor.h"
#include "tonewarden/pipeline/rig_pipeline.h"
#include "tonewarden/source/synthetic_rig.h"

namespace tonewarden {
namespace {

using pipeline::ChannelSpec;
using source::SyntheticRig;
using source::SyntheticRigConfig;

constexpr double kFs = 48000.0;
constexpr int64_t kStartUnixMs = 1'800'000'000'000;  // fixed, so event times map to frames
constexpr double kOnsetS = 21600.0;                  // story time of the defect (01:30)
constexpr double kStoryStartS = kOnsetS - 1200.0;    // 20 story minutes before the onset
constexpr double kGrowthS = 1800.0;                   // the rig's default defect_growth_s
constexpr double kStoryEndS = kOnsetS + 2.0 * kGrowthS;  // full size, then as long again
constexpr double kStorySpeed = 60.0;                 // story seconds per signal second
constexpr double kWarning = 0.01;                    // g^2 (squared envelope): half the demo's level
constexpr double kCritical = 0.06;
constexpr double kOnDelayS = 1.0;                    // signal seconds = 60 story seconds
constexpr size_t kBlock = 16384, kPad = 2, kHop = 8192, kAverages = 4;

struct RecordedEvent {
  std::string rule;
  alarm::Severity severity;
  alarm::AlarmState state;
  double story_s;
};

// Keeps every alarm event with its story time (event times are signal time: frames / fs).
class RecordingSink : public pipeline::RigEventSink {
 public:
  void on_alarm_event(const std::string&, const alarm::AlarmEvent& e, std::string_view) override {
    const double signal_s = static_cast<double>(e.t.unix_ms - kStartUnixMs) / 1000.0;
    std::lock_guard<std::mutex> lock(mutex_);
    events_.push_back({std::string(e.rule), e.severity, e.state,
                       kStoryStartS + kStorySpeed * signal_s});
  }
  void on_readings(const std::string&, const track::ReadingSet&) override {}
  std::vector<RecordedEvent> events() {
    std::lock_guard<std::mutex> lock(mutex_);
    return events_;
  }

 private:
  std::mutex mutex_;
  std::vector<RecordedEvent> events_;
};

track::TargetConfig bpfo_target(const SyntheticRigConfig& rc) {
  track::TargetConfig t;
  t.name = "bpfo";
  t.kind = track::TargetKind::kBearing;
  t.bearing.num_elements = rc.bearing_balls;
  t.bearing.element_diameter = rc.ball_diameter_mm;
  t.bearing.pitch_diameter = rc.pitch_diameter_mm;
  t.bearing.contact_angle_deg = rc.contact_angle_deg;
  t.bearing_tone = track::BearingTone::kBpfo;
  t.spectrum = track::SearchSpectrum::kEnvelope;
  t.harmonics = 3;
  return t;
}

TEST(SyntheticRigAlarmTest, BpfoWarningRisesInsidePredictedWindowAndNothingBefore) {
  SyntheticRigConfig rc;
  rc.sample_rate_hz = kFs;
  rc.tach_channel = true;
  rc.pace = source::Pace::kFast;
  rc.story_speed = kStorySpeed;
  rc.story_start_s = kStoryStartS;
  rc.defect_onset_s = kOnsetS;
  rc.duration_s = (kStoryEndS - kStoryStartS) / kStorySpeed;
  rc.seed = 4;
  rc.start_time = base::WallTimeMs{kStartUnixMs};
  auto made = SyntheticRig::create(rc);
  ASSERT_TRUE(made.ok()) << made.error().message;
  // A second rig with the same config answers ground-truth questions (the first one is moved
  // into the pipeline and runs on its threads).
  auto truth = SyntheticRig::create(rc);
  ASSERT_TRUE(truth.ok());

  pipeline::RigPipelineConfig pc;
  pc.rig = "bay4-pump";
  pc.channels = {
      ChannelSpec{"motor-de", 0, 0.1, "g", 1.0, false},
      ChannelSpec{"pump-nde", 1, 0.1, "g", 1.0, false},
      ChannelSpec{"tach", 2, 1.0, "V", 1.0, true},
  };
  pc.chain.spectrum.sample_rate_hz = kFs;
  pc.chain.spectrum.block = kBlock;
  pc.chain.spectrum.pad_factor = kPad;
  pc.chain.spectrum.window = {dsp::WindowKind::kHann, 0};
  pc.chain.spectrum.planning = dsp::FftPlanning::kEstimate;
  pc.chain.hop = kHop;
  pc.chain.average.mode = dsp::AverageMode::kLinear;
  pc.chain.average.linear_frames = kAverages;
  pc.chain.peaks.min_frequency_hz = 2.0;
  pc.chain.envelope_band_hz = std::make_pair(2000.0, 8000.0);
  auto pipe = pipeline::RigPipeline::create(pc, std::move(made).value());
  ASSERT_TRUE(pipe.ok()) << pipe.error().message;

  pipeline::RigMonitorConfig mc;
  mc.rig = pc.rig;
  mc.channels = pc.channels;
  mc.speed_mode = pipeline::SpeedMode::kTach;
  mc.tach_channel = 2;
  mc.tach.sample_rate_hz = kFs;
  mc.tach.threshold = 0.25;  // the tach pulse is 0.5 V high
  mc.tach.hysteresis = 0.05;
  mc.tach.min_rpm = 2400;
  mc.tach.max_rpm = 6600;
  mc.min_rpm = 2400;
  mc.max_rpm = 3300;
  mc.snapshot_interval_s = 0;
  for (size_t c = 0; c < 2; ++c) {
    track::ChannelTrackConfig tc;
    tc.channel = pc.channels[c].name;
    tc.unit = "g";
    tc.spectrum.sample_rate_hz = kFs;
    tc.spectrum.block = kBlock;
    tc.spectrum.window = pc.chain.spectrum.window;
    tc.spectrum.fft_length = (*pipe)->chain(c)->analyzer().fft_length();
    tc.has_envelope = true;
    tc.envelope = tc.spectrum;
    tc.envelope.fft_length = (*pipe)->chain(c)->envelope()->fft_length();
    if (c == 0) tc.targets.push_back(bpfo_target(rc));
    mc.trackers.push_back(tc);
  }
  alarm::RuleConfig rule;
  rule.name = "motor-de-bpfo";
  rule.reading = "motor-de.bpfo.amplitude";
  rule.warning = kWarning;
  rule.critical = kCritical;
  rule.on_delay_s = kOnDelayS;
  rule.off_delay_s = 30.0;
  mc.rules.push_back(rule);

  RecordingSink sink;
  auto mon = pipeline::RigMonitor::create(mc, **pipe, nullptr, &sink);
  ASSERT_TRUE(mon.ok()) << mon.error().message;
  (*pipe)->add_observer(mon->get());
  ASSERT_TRUE((*pipe)->start().ok());
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(120);
  while (!(*pipe)->finished() && std::chrono::steady_clock::now() < deadline) {
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  }
  const bool finished = (*pipe)->finished();
  (*pipe)->stop();
  ASSERT_TRUE(finished) << "the rig did not finish within 120 s";
  EXPECT_EQ((*pipe)->num_ring_overflows(), 0u);

  // Expected window, in story time, from the rig's ground-truth timeline: the defect does not
  // exist before the onset, so no tone alarm may come before it; it reaches full size at
  // onset + growth, where the envelope BPFO reading (a squared-envelope line, g^2) stands at
  // about 0.02 in the demo, twice this warning level; so the warning must be raised by then,
  // plus two averaging periods and the on-delay. (A closed-form model of the squared-envelope
  // line in terms of the impact size would tighten the lower bound; it is not built yet.)
  const double period_s = (kBlock + (kAverages - 1) * kHop) / kFs;
  const double earliest = kOnsetS + kOnDelayS * kStorySpeed;
  const double latest = kOnsetS + kGrowthS + (2.0 * period_s + kOnDelayS) * kStorySpeed;
  ASSERT_EQ((*truth)->config().defect_growth_s, kGrowthS);
  ASSERT_LT(latest, kStoryEndS) << "the window must lie inside the run";

  const std::vector<RecordedEvent> events = sink.events();
  double raised_at = NAN;
  for (const RecordedEvent& e : events) {
    // Only the defect rule may speak: no signal-quality or speed-range alarm at all.
    EXPECT_EQ(e.rule, "motor-de-bpfo") << "unexpected alarm at story time " << e.story_s;
    if (e.rule != "motor-de-bpfo") continue;
    EXPECT_GE(e.story_s, kOnsetS) << "tone alarm before the defect exists";
    if (std::isnan(raised_at) && e.severity == alarm::Severity::kWarning &&
        e.state == alarm::AlarmState::kUnacknowledged) {
      raised_at = e.story_s;
    }
  }
  ASSERT_FALSE(std::isnan(raised_at)) << "the BPFO warning was never raised";
  EXPECT_GE(raised_at, earliest);
  EXPECT_LE(raised_at, latest);
  std::printf("BPFO warning at story %.0f s (%.0f s after onset); window [%.0f, %.0f]\n",
              raised_at, raised_at - kOnsetS, earliest - kOnsetS, latest - kOnsetS);
}

}  // namespace
}  // namespace tonewarden
