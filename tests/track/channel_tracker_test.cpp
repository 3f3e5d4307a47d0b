// Focus: ChannelTracker readings - target search inside its tolerance window with the
// interpolated amplitude of a known tone, orders with harmonics and sidebands, speed-unknown
// handling, velocity RMS in the ISO 20816 band, and clear errors for bad configs.
#include "tonewarden/track/channel_tracker.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

#include "support/signals.h"
#include "track/analyzed_spectrum.h"

namespace tonewarden::track {
namespace {

double value(const ReadingSet& set, const std::string& name) {
  const auto i = set.find(name);
  EXPECT_TRUE(i.has_value()) << name;
  if (!i) return NAN;
  EXPECT_TRUE(set[*i].valid) << name;
  return set[*i].value;
}

TargetConfig fixed_target(const std::string& name, double hz, double tolerance_percent) {
  TargetConfig t;
  t.name = name;
  t.kind = TargetKind::kFixedHz;
  t.frequency_hz = hz;
  t.tolerance_percent = tolerance_percent;
  return t;
}

class ToneAmplitudeTest : public ::testing::TestWithParam<std::tuple<dsp::WindowKind, size_t>> {};

TEST_P(ToneAmplitudeTest, OffBinToneReadsItsConstructedPower) {
  const auto [window, pad] = GetParam();
  const double fs = 48000.0, f = 1234.567, a = 0.8;
  auto x = testing::make_sine(8192, fs, f, a);
  testing::add_sine(x, fs, 1300.0, 2.0);  // stronger, but outside the ±1 % window
  const AnalyzedSpectrum s = analyze(x, fs, 8192, pad, window);
  ChannelTrackConfig config;
  config.channel = "de";
  config.unit = "Pa";  // not an acceleration: no velocity reading
  config.spectrum = s.layout;
  config.targets = {fixed_target("probe", 1234.0, 1.0)};
  config.targets[0].scale = AmplitudeScale::kRms;
  ReadingSet set;
  auto tracker = ChannelTracker::create(config, set);
  ASSERT_TRUE(tracker.ok()) << tracker.error().message;
  tracker->process({s.power, {}, nullptr}, SpeedEstimate{}, set);
  // Expected from construction: a sine of amplitude A has power A²/2, RMS A/√2 = 0.565685.
  // The 1300 Hz tone's sidelobes leak a little into the window, hence 0.1 %.
  EXPECT_NEAR(value(set, "de.probe.amplitude"), a / std::sqrt(2.0), 1e-3 * a);
  EXPECT_NEAR(value(set, "de.probe.frequency_hz"), f, 0.01);
  EXPECT_GT(value(set, "de.probe.snr_db"), 20.0);
  EXPECT_FALSE(set.find("de.velocity_rms").has_value());
  EXPECT_EQ(set[*set.find("de.probe.amplitude")].unit, "Pa");
}

INSTANTIATE_TEST_SUITE_P(WindowsAndPadding, ToneAmplitudeTest,
                         ::testing::Values(std::make_tuple(dsp::WindowKind::kHann, size_t{1}),
                                           std::make_tuple(dsp::WindowKind::kHann, size_t{4}),
                                           std::make_tuple(dsp::WindowKind::kFlatTop, size_t{2}),
                                           std::make_tuple(dsp::WindowKind::kBlackmanHarris,
                                                           size_t{1})));

TEST(ChannelTrackerTest, MeshTargetReadsHarmonicsAndSpeedSidebands) {
  // 6 teeth at 1800 rpm: mesh at 180 Hz, its 2× at 360 Hz, sidebands at 180 ± 30 Hz.
  const double fs = 8192.0;
  auto x = testing::make_sine(16384, fs, 180.0, 1.0);
  testing::add_sine(x, fs, 360.0, 0.5);
  testing::add_sine(x, fs, 150.0, 0.2);
  testing::add_sine(x, fs, 210.0, 0.1);
  const AnalyzedSpectrum s = analyze(x, fs, 16384, 1);
  ChannelTrackConfig config;
  config.channel = "gear";
  config.unit = "m/s2";
  config.spectrum = s.layout;
  TargetConfig mesh;
  mesh.name = "mesh";
  mesh.kind = TargetKind::kMesh;
  mesh.teeth = 6;
  mesh.scale = AmplitudeScale::kPeak;
  mesh.harmonics = 2;
  mesh.sidebands = true;
  config.targets = {mesh, fixed_target("hum", 50.0, 2.0)};
  ReadingSet set;
  auto tracker = ChannelTracker::create(config, set);
  ASSERT_TRUE(tracker.ok()) << tracker.error().message;
  tracker->process({s.power, {}, nullptr}, SpeedEstimate::fixed(1800.0), set);
  // Peak amplitudes as constructed; 0.5 % allows for leakage between the close tones.
  EXPECT_NEAR(value(set, "gear.mesh.amplitude"), 1.0, 5e-3);
  EXPECT_NEAR(value(set, "gear.mesh.frequency_hz"), 180.0, 0.01);
  EXPECT_NEAR(value(set, "gear.mesh.h2.amplitude"), 0.5, 5e-3);
  EXPECT_NEAR(value(set, "gear.mesh.sideband_lower.amplitude"), 0.2, 2e-3);
  EXPECT_NEAR(value(set, "gear.mesh.sideband_upper.amplitude"), 0.1, 2e-3);

  // Speed unknown: the speed-bound target is invalid, the fixed one is still read.
  tracker->process({s.power, {}, nullptr}, SpeedEstimate{}, set);
  EXPECT_FALSE(set[*set.find("gear.mesh.amplitude")].valid);
  EXPECT_FALSE(set[*set.find("gear.mesh.sideband_lower.amplitude")].valid);
  EXPECT_TRUE(set[*set.find("gear.hum.amplitude")].valid);
}

TEST(ChannelTrackerTest, VelocityRmsOfOneGAtOneHundredHz) {
  // REFERENCES.md [V]: 1 g peak at 100 Hz -> 11.036359 mm/s RMS (9.80665/(2π·100)/√2 m/s).
  const double fs = 8192.0;
  const auto x = testing::make_sine(16384, fs, 100.0, 1.0);
  const AnalyzedSpectrum s = analyze(x, fs, 16384, 1);
  ChannelTrackConfig config;
  config.channel = "de";
  config.unit = "g";
  config.spectrum = s.layout;
  ReadingSet set;
  auto tracker = ChannelTracker::create(config, set);
  ASSERT_TRUE(tracker.ok()) << tracker.error().message;
  dsp::TimeStats stats;
  stats.rms = 0.7071;
  stats.peak = 1.0;
  stats.crest_factor = 1.4142;
  stats.kurtosis = 1.5;
  tracker->process({s.power, {}, &stats}, SpeedEstimate{}, set);
  EXPECT_NEAR(value(set, "de.velocity_rms"), 11.036359, 11.036359 * 1e-3);
  EXPECT_EQ(set[*set.find("de.velocity_rms")].unit, "mm/s");
  EXPECT_DOUBLE_EQ(value(set, "de.rms"), 0.7071);
  EXPECT_DOUBLE_EQ(value(set, "de.kurtosis"), 1.5);
  // A spectrum of the wrong size is counted and leaves the spectral readings invalid.
  tracker->process({std::span<const float>(s.power).first(10), {}, &stats}, SpeedEstimate{}, set);
  EXPECT_EQ(tracker->num_rejected(), 1u);
  EXPECT_FALSE(set[*set.find("de.velocity_rms")].valid);
}

TEST(ChannelTrackerTest, BearingTargetUsesGeometryOrders) {
  // BPFO of the worked example geometry (n 9, d 7.94, D 39.04, φ 0) is 3.58478× shaft speed
  // (REFERENCES.md [V]); at 1797 rpm that is 107.3643 Hz.
  const double fs = 8192.0;
  auto x = testing::make_sine(16384, fs, 107.3643 * 1.01, 0.3);  // 1 % slip
  const AnalyzedSpectrum s = analyze(x, fs, 16384, 2);
  ChannelTrackConfig config;
  config.channel = "de";
  config.unit = "g";
  config.velocity = false;
  config.spectrum = s.layout;
  TargetConfig bpfo;
  bpfo.name = "bpfo";
  bpfo.kind = TargetKind::kBearing;
  bpfo.bearing = {9, 7.94, 39.04, 0.0};
  bpfo.bearing_tone = BearingTone::kBpfo;
  bpfo.tolerance_percent = 2.0;
  config.targets = {bpfo};
  ReadingSet set;
  auto tracker = ChannelTracker::create(config, set);
  ASSERT_TRUE(tracker.ok());
  tracker->process({s.power, {}, nullptr}, SpeedEstimate::fixed(1797.0), set);
  EXPECT_NEAR(value(set, "de.bpfo.frequency_hz"), 107.3643 * 1.01, 0.01);
  EXPECT_NEAR(value(set, "de.bpfo.amplitude"), 0.3 / std::sqrt(2.0), 1e-3);
}

TEST(ChannelTrackerTest, RejectsBadConfigsWithContext) {
  ChannelTrackConfig config;
  config.channel = "de";
  config.spectrum = {48000.0, 8192, 8192, {}};
  TargetConfig env = fixed_target("bpfo", 100.0, 1.0);
  env.spectrum = SearchSpectrum::kEnvelope;
  config.targets = {env};
  ReadingSet set;
  auto r = ChannelTracker::create(config, set);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().message, "channel de target bpfo: searches the envelope spectrum but the channel has none");
  EXPECT_EQ(set.size(), 0u);  // nothing registered on failure

  config.targets = {fixed_target("a", 100.0, 1.0), fixed_target("a", 200.0, 1.0)};
  EXPECT_FALSE(ChannelTracker::create(config, set).ok());
  config.targets = {fixed_target("bad name", 100.0, 1.0)};
  EXPECT_FALSE(ChannelTracker::create(config, set).ok());
  config.targets = {fixed_target("neg", -5.0, 1.0)};
  r = ChannelTracker::create(config, set);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("frequency_hz"), std::string::npos);
  config.targets = {};
  config.channel = "";
  EXPECT_FALSE(ChannelTracker::create(config, set).ok());
  config.channel = "de";
  config.spectrum.fft_length = 100;  // shorter than the block
  EXPECT_FALSE(ChannelTracker::create(config, set).ok());
}

TEST(ReadingSetTest, RejectsDuplicatesAndCopiesValues) {
  ReadingSet a;
  ASSERT_TRUE(a.add("speed_rpm", "rpm", "").ok());
  EXPECT_FALSE(a.add("speed_rpm", "rpm", "").ok());
  EXPECT_FALSE(a.add("", "", "").ok());
  a.set(0, 1797.0);
  ReadingSet b = a;
  a.invalidate_all();
  EXPECT_TRUE(b[0].valid);
  EXPECT_EQ(b[0].value, 1797.0);
  EXPECT_FALSE(a[0].valid);
}

}  // namespace
}  // namespace tonewarden::track
