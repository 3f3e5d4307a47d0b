// Focus: the synthetic rig's scenario ground truth, determinism, scaling to volts, tach,
// defect onset, pacing and timestamps, and its config checks.
#include "tonewarden/source/synthetic_rig.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstring>
#include <thread>
#include <vector>

namespace tonewarden::source {
namespace {

std::unique_ptr<SyntheticRig> make_rig(const SyntheticRigConfig& config) {
  auto rig = SyntheticRig::create(config);
  EXPECT_TRUE(rig.ok()) << (rig.ok() ? "" : rig.error().message);
  return rig.ok() ? std::move(rig).value() : nullptr;
}

SyntheticRigConfig fast_config() {
  SyntheticRigConfig c;
  c.pace = Pace::kFast;
  return c;
}

// A config with every tone, noise and defect switched off.
SyntheticRigConfig silent_config() {
  SyntheticRigConfig c = fast_config();
  c.channels = {};
  c.speed_drift_rpm = 0.0;
  return c;
}

std::vector<float> read_all(SyntheticRig& rig, size_t frames, size_t block_frames) {
  const size_t nch = rig.num_channels();
  std::vector<float> out(frames * nch);
  size_t done = 0;
  while (done < frames) {
    const size_t n = std::min(block_frames, frames - done);
    BlockInfo info;
    auto got = rig.read(std::span<float>(out).subspan(done * nch, n * nch), &info);
    EXPECT_TRUE(got.ok());
    if (!got.ok() || *got == 0) break;
    done += *got;
  }
  out.resize(done * nch);
  return out;
}

TEST(SyntheticRigTest, BpfoOrderMatchesPublishedWorkedExample) {
  // n = 9, d = 7.94 mm, D = 39.04 mm, phi = 0: BPFO = 3.58478 x shaft speed
  // (REFERENCES.md worked example, Randall & Antoni 2011 Eq. (2), checked with numpy).
  auto rig = make_rig(fast_config());
  EXPECT_NEAR(rig->bpfo_order(), 3.58478, 5e-6);
  // At the nominal 2975 rpm (49.5833 Hz): 3.584785 * 49.58333 = 177.7456 Hz (same formula).
  EXPECT_NEAR(rig->bpfo_hz(), 177.7456, 1e-3);
  EXPECT_DOUBLE_EQ(rig->hum_hz(), 100.0);  // twice the 50 Hz mains (common practice)
}

TEST(SyntheticRigTest, SpeedDriftsByAFewRpmAroundNominal) {
  SyntheticRigConfig c = fast_config();
  c.speed_drift_rpm = 4.0;
  auto rig = make_rig(c);
  double lo = 1e9, hi = 0.0;
  for (double t = 0; t < 4 * c.speed_drift_period_s; t += 1.0) {
    lo = std::min(lo, rig->speed_hz_at(t) * 60.0);
    hi = std::max(hi, rig->speed_hz_at(t) * 60.0);
  }
  // The drift stays within the configured +-4 rpm and actually moves (> 2 rpm each way).
  EXPECT_LE(hi, 2975.0 + 4.0);
  EXPECT_GE(lo, 2975.0 - 4.0);
  EXPECT_GT(hi, 2975.0 + 2.0);
  EXPECT_LT(lo, 2975.0 - 2.0);
  EXPECT_DOUBLE_EQ(rig->vane_pass_hz_at(100.0), 6.0 * rig->speed_hz_at(100.0));
}

TEST(SyntheticRigTest, DefectGrowsFromOnsetToFullSize) {
  auto rig = make_rig(fast_config());
  const auto& c = rig->config();
  EXPECT_EQ(rig->defect_amplitude_g_at(c.defect_onset_s - 1.0), 0.0);
  EXPECT_EQ(rig->defect_amplitude_g_at(c.defect_onset_s), 0.0);
  // Smoothstep at half the growth time is exactly half the full size.
  EXPECT_DOUBLE_EQ(rig->defect_amplitude_g_at(c.defect_onset_s + c.defect_growth_s / 2),
                   c.defect_impact_g / 2);
  EXPECT_DOUBLE_EQ(rig->defect_amplitude_g_at(c.defect_onset_s + c.defect_growth_s),
                   c.defect_impact_g);
  EXPECT_DOUBLE_EQ(rig->defect_amplitude_g_at(1e7), c.defect_impact_g);
}

TEST(SyntheticRigTest, SameSeedGivesIdenticalBytesForAnyBlockSplit) {
  SyntheticRigConfig c = fast_config();
  c.tach_channel = true;
  c.story_start_s = c.defect_onset_s + 100.0;  // impacts and jitter draws included
  auto a = make_rig(c);
  auto b = make_rig(c);
  ASSERT_TRUE(a->start().ok());
  ASSERT_TRUE(b->start().ok());
  const auto xa = read_all(*a, 96000, 480);
  const auto xb = read_all(*b, 96000, 1037);  // block edges fall elsewhere
  ASSERT_EQ(xa.size(), 96000u * 3);
  ASSERT_EQ(xb.size(), xa.size());
  EXPECT_EQ(std::memcmp(xa.data(), xb.data(), xa.size() * sizeof(float)), 0);
  EXPECT_GT(a->num_impacts(), 0u);

  c.seed = 2;
  auto d = make_rig(c);
  ASSERT_TRUE(d->start().ok());
  const auto xd = read_all(*d, 96000, 480);
  EXPECT_NE(std::memcmp(xa.data(), xd.data(), xa.size() * sizeof(float)), 0);
}

TEST(SyntheticRigTest, OutputIsVoltsAtTheConfiguredSensitivity) {
  // Only 1x at 1 g peak on channel 0: at 100 mV/g the peak is 0.1 V (definition of
  // sensitivity); channel 1 stays silent.
  SyntheticRigConfig c = silent_config();
  c.channels[0].order_g = {1.0, 0.0, 0.0};
  auto rig = make_rig(c);
  std::vector<float> x(2 * 48000);
  rig->generate(x);
  float peak0 = 0, peak1 = 0;
  for (size_t i = 0; i < x.size(); i += 2) {
    peak0 = std::max(peak0, std::fabs(x[i]));
    peak1 = std::max(peak1, std::fabs(x[i + 1]));
  }
  // 48000 samples of a 49.58 Hz tone sample its crest to within 1 - cos(pi * 49.6/48000).
  EXPECT_NEAR(peak0, 0.1, 1e-5);
  EXPECT_EQ(peak1, 0.0f);
  EXPECT_EQ(rig->num_clipped(), 0u);
}

TEST(SyntheticRigTest, ClipsAtFullScaleAndCountsIt) {
  // 20 g peak at 100 mV/g is 2 V; full scale 1 V: samples are held at +-1.0 and counted.
  SyntheticRigConfig c = silent_config();
  c.channels[0].order_g = {20.0, 0.0, 0.0};
  auto rig = make_rig(c);
  std::vector<float> x(2 * 4800);
  rig->generate(x);
  float peak = 0;
  for (size_t i = 0; i < x.size(); i += 2) peak = std::max(peak, std::fabs(x[i]));
  EXPECT_EQ(peak, 1.0f);
  // |2 sin| > 1 for two thirds of each cycle (arcsin(1/2) = 30 degrees).
  EXPECT_NEAR(static_cast<double>(rig->num_clipped()) / 4800.0, 2.0 / 3.0, 0.02);
}

TEST(SyntheticRigTest, TachGivesOnePulsePerRevolution) {
  SyntheticRigConfig c = silent_config();
  c.tach_channel = true;
  auto rig = make_rig(c);
  ASSERT_EQ(rig->num_channels(), 3u);
  const size_t frames = 10 * 48000;
  std::vector<float> x(3 * frames);
  rig->generate(x);
  int rising = 0, high = 0;
  for (size_t i = 1; i < frames; ++i) {
    rising += x[3 * i + 2] > 0.25f && x[3 * (i - 1) + 2] <= 0.25f;
    high += x[3 * i + 2] == 0.5f;
  }
  // 2975 rpm for 10 s = 495.83 revolutions: 495 or 496 rising edges (frame 0 starts high).
  EXPECT_GE(rising, 495);
  EXPECT_LE(rising, 496);
  // The pulse is high 10 % of each revolution.
  EXPECT_NEAR(high / static_cast<double>(frames), 0.1, 0.002);
}

TEST(SyntheticRigTest, ImpactsStartAtOnsetAndComeAtBpfo) {
  SyntheticRigConfig c = fast_config();
  c.story_start_s = c.defect_onset_s - 2.0;  // 2 s healthy, then the defect
  c.story_speed = 1.0;
  auto rig = make_rig(c);
  std::vector<float> x(2 * 96000);
  rig->generate(x);  // story seconds [onset - 2, onset)
  EXPECT_EQ(rig->num_impacts(), 0u);
  std::vector<float> y(2 * 480000);
  rig->generate(y);  // 10 s after onset
  // Mean impact rate = BPFO (jitter averages out): 10 s x 177.75 Hz = 1777 impacts; the
  // first chunk after onset has a size of exactly 0 so one impact may be skipped.
  const double expected = 10.0 * rig->bpfo_hz_at(c.defect_onset_s + 5.0);
  EXPECT_NEAR(static_cast<double>(rig->num_impacts()), expected, 0.01 * expected);
}

TEST(SyntheticRigTest, FastReadsFollowTheSampleCountInTimestamps) {
  SyntheticRigConfig c = fast_config();
  c.start_time = base::WallTimeMs{1'700'000'000'000};
  c.duration_s = 1.0;
  auto rig = make_rig(c);
  ASSERT_TRUE(rig->start().ok());
  std::vector<float> block(2 * 4800);
  int64_t frame = 0;
  for (;;) {
    BlockInfo info;
    auto n = rig->read(block, &info);
    ASSERT_TRUE(n.ok());
    if (*n == 0) break;
    EXPECT_EQ(info.first_frame, frame);
    // 4800 frames at 48 kHz = 100 ms per block.
    EXPECT_EQ(info.t_first.unix_ms, 1'700'000'000'000 + frame / 48);
    frame += static_cast<int64_t>(*n);
  }
  EXPECT_EQ(frame, 48000);  // duration 1 s
  EXPECT_EQ(rig->num_pacing_sleeps(), 0u);  // a fast source never sleeps
  const SourceHealth h = rig->health();
  EXPECT_EQ(h.state, SourceState::kFinished);
  EXPECT_EQ(h.frames_delivered, 48000u);
}

TEST(SyntheticRigTest, RealTimeReadWaitsForTheBlockToBeDue) {
  SyntheticRigConfig c;  // real time
  c.sample_rate_hz = 8000.0;
  auto rig = make_rig(c);
  ASSERT_TRUE(rig->capabilities().paced);
  const base::MonoTime before = base::mono_now();
  ASSERT_TRUE(rig->start().ok());
  std::vector<float> block(2 * 80);  // 10 ms at 8 kHz
  for (int i = 0; i < 3; ++i) ASSERT_EQ(*rig->read(block, nullptr), 80u);
  EXPECT_GE(rig->num_pacing_sleeps(), 1u);
  // Three 10 ms blocks are released no earlier than 30 ms after start.
  EXPECT_GE(base::mono_now() - before, std::chrono::milliseconds(30));
}

TEST(SyntheticRigTest, StopUnblocksARealTimeRead) {
  SyntheticRigConfig c;  // real time
  auto rig = make_rig(c);
  ASSERT_TRUE(rig->start().ok());
  std::vector<float> block(2 * 48000 * 60);  // one minute: would block for 60 s
  std::thread stopper([&] {
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
    rig->stop();
  });
  auto n = rig->read(block, nullptr);
  stopper.join();
  ASSERT_TRUE(n.ok());
  EXPECT_EQ(*n, 0u);
  EXPECT_EQ(rig->health().state, SourceState::kFinished);
}

TEST(SyntheticRigTest, MisuseIsAnError) {
  auto rig = make_rig(fast_config());
  std::vector<float> block(2);
  auto early = rig->read(block, nullptr);
  ASSERT_FALSE(early.ok());
  EXPECT_NE(early.error().message.find("before start"), std::string::npos);
  ASSERT_TRUE(rig->start().ok());
  EXPECT_FALSE(rig->start().ok());
  std::vector<float> tiny(1);
  auto small = rig->read(tiny, nullptr);
  ASSERT_FALSE(small.ok());
  EXPECT_EQ(small.error().code, base::ErrorCode::kInvalidArgument);
}

TEST(SyntheticRigTest, RejectsOutOfRangeSettingsWithTheirName) {
  struct Case {
    void (*edit)(SyntheticRigConfig&);
    const char* name;
  };
  const Case cases[] = {
      {[](SyntheticRigConfig& c) { c.sample_rate_hz = 100.0; }, "sample_rate_hz"},
      {[](SyntheticRigConfig& c) { c.story_speed = 0.0; }, "story_speed"},
      {[](SyntheticRigConfig& c) { c.story_start_s = -1.0; }, "story_start_s"},
      {[](SyntheticRigConfig& c) { c.pitch_diameter_mm = 5.0; }, "pitch_diameter_mm"},
      {[](SyntheticRigConfig& c) { c.bearing_balls = 2; }, "bearing_balls"},
      {[](SyntheticRigConfig& c) { c.resonance_hz = 30000.0; }, "resonance_hz"},
      {[](SyntheticRigConfig& c) { c.defect_jitter = 0.5; }, "defect_jitter"},
      {[](SyntheticRigConfig& c) { c.tach_duty = 1.0; }, "tach_duty"},
      {[](SyntheticRigConfig& c) { c.speed_drift_rpm = 1000.0; }, "speed_drift_rpm"},
      {[](SyntheticRigConfig& c) { c.channels[1].noise_g_rms = NAN; }, "channel 1"},
  };
  for (const Case& k : cases) {
    SyntheticRigConfig c;
    k.edit(c);
    auto rig = SyntheticRig::create(c);
    ASSERT_FALSE(rig.ok()) << k.name;
    EXPECT_EQ(rig.error().code, base::ErrorCode::kInvalidArgument);
    EXPECT_NE(rig.error().message.find(k.name), std::string::npos) << rig.error().message;
    EXPECT_EQ(rig.error().message.find('\n'), std::string::npos);
  }
}

TEST(SyntheticRigTest, DescribeNamesTheScenario) {
  auto rig = make_rig(fast_config());
  const std::string d = rig->describe();
  EXPECT_NE(d.find("2975 rpm"), std::string::npos) << d;
  EXPECT_NE(d.find("48000 Hz"), std::string::npos) << d;
  EXPECT_NE(d.find("177.75 Hz"), std::string::npos) << d;
}

}  // namespace
}  // namespace tonewarden::source
