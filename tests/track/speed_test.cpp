// Focus: speed from a tach channel (interpolated edges, hysteresis, state across blocks,
// stopped shaft) and from the spectrum (strongest peak confirmed by its harmonics).
#include "tonewarden/track/speed.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "support/signals.h"
#include "track/analyzed_spectrum.h"

namespace tonewarden::track {
namespace {

// A tach signal: trapezoidal pulses (0 -> 1) at the given phases of each revolution, each
// `width_s` wide at half height with linear flanks `ramp_s` long. Linear flanks make the
// threshold crossing exactly recoverable by linear interpolation.
std::vector<float> tach_signal(double fs, double rpm, std::vector<double> phases, double width_s,
                               double ramp_s, size_t count) {
  const double fr = rpm / 60.0;
  std::vector<float> x(count);
  for (size_t n = 0; n < count; ++n) {
    const double p = std::fmod(double(n) / fs * fr, 1.0);
    double v = 0.0;
    for (double c : phases) {
      double d = std::fabs(p - c);
      d = std::min(d, 1.0 - d) / fr;  // distance to the pulse centre, seconds
      v = std::max(v, std::clamp((width_s / 2 - d) / ramp_s + 0.5, 0.0, 1.0));
    }
    x[n] = static_cast<float>(v);
  }
  return x;
}

void feed_in_blocks(SpeedFromTach& tach, const std::vector<float>& x, size_t block) {
  for (size_t i = 0; i < x.size(); i += block) {
    tach.process(std::span<const float>(x).subspan(i, std::min(block, x.size() - i)));
  }
}

TEST(SpeedFromTachTest, PulseTrainReadsKnownRpmWithinOneHundredthPercent) {
  const double fs = 48000.0, rpm = 1797.0;  // 801.336 samples per pulse at 2 pulses/rev
  TachConfig config;
  config.sample_rate_hz = fs;
  config.pulses_per_rev = 2;
  auto tach = SpeedFromTach::create(config);
  ASSERT_TRUE(tach.ok());
  const auto x = tach_signal(fs, rpm, {0.1, 0.6}, 2e-3, 1.5e-4, 48000);
  feed_in_blocks(*tach, x, 1000);  // block edges fall anywhere within pulses
  const SpeedEstimate s = tach->current();
  ASSERT_TRUE(s.valid);
  // Expected: the rpm the signal was built with; 0.01 % tolerance.
  EXPECT_NEAR(s.rpm, rpm, rpm * 1e-4);
  EXPECT_EQ(tach->num_edges(), 60u);  // 1 s at 29.95 rev/s, 2 pulses each
}

TEST(SpeedFromTachTest, UnevenPulseWheelStillReadsTrueSpeed) {
  // Four pulses per revolution at uneven angles: any single interval is wrong, a whole
  // revolution is right.
  const double fs = 48000.0, rpm = 2975.0;
  TachConfig config;
  config.sample_rate_hz = fs;
  config.pulses_per_rev = 4;
  auto tach = SpeedFromTach::create(config);
  ASSERT_TRUE(tach.ok());
  feed_in_blocks(*tach, tach_signal(fs, rpm, {0.0, 0.2, 0.45, 0.7}, 1e-3, 1e-4, 24000), 4096);
  ASSERT_TRUE(tach->current().valid);
  EXPECT_NEAR(tach->current().rpm, rpm, rpm * 1e-4);
}

TEST(SpeedFromTachTest, HysteresisStopsNoisyEdgesFromDoubleCounting) {
  // Slow flanks (5 ms) with noise (σ 0.05): near the threshold the noise crosses it several
  // times per flank. With a hysteresis band of 0.3 each pulse counts once.
  const double fs = 48000.0, rpm = 1200.0;
  auto x = tach_signal(fs, rpm, {0.5}, 20e-3, 5e-3, 48000);
  testing::add_gaussian_noise(x, 0.05, 7);
  TachConfig config;
  config.sample_rate_hz = fs;
  config.hysteresis = 0.0;
  auto bare = SpeedFromTach::create(config);
  config.hysteresis = 0.3;
  auto damped = SpeedFromTach::create(config);
  ASSERT_TRUE(bare.ok() && damped.ok());
  feed_in_blocks(*bare, x, 512);
  feed_in_blocks(*damped, x, 512);
  EXPECT_EQ(damped->num_edges(), 20u);  // 1 s at 20 rev/s: one pulse each
  EXPECT_GT(bare->num_edges(), 20u);
  EXPECT_NEAR(damped->current().rpm, rpm, rpm * 2e-2);  // noise moves each edge by a few samples
}

TEST(SpeedFromTachTest, StoppedShaftMakesSpeedUnknown) {
  TachConfig config;
  config.sample_rate_hz = 48000.0;
  config.min_rpm = 100.0;  // no edge for 0.6 s -> unknown
  auto tach = SpeedFromTach::create(config);
  ASSERT_TRUE(tach.ok());
  feed_in_blocks(*tach, tach_signal(48000.0, 1500.0, {0.5}, 2e-3, 2e-4, 9600), 960);
  EXPECT_TRUE(tach->current().valid);
  feed_in_blocks(*tach, std::vector<float>(48000, 0.0f), 960);
  EXPECT_FALSE(tach->current().valid);
}

TEST(SpeedFromTachTest, RejectsBadConfig) {
  TachConfig config;
  config.pulses_per_rev = 0;
  auto t = SpeedFromTach::create(config);
  ASSERT_FALSE(t.ok());
  EXPECT_NE(t.error().message.find("pulses_per_rev"), std::string::npos);
  config.pulses_per_rev = 1;
  config.min_rpm = 5000.0;
  config.max_rpm = 100.0;
  EXPECT_FALSE(SpeedFromTach::create(config).ok());
}

TEST(SpeedFromSpectrumTest, PicksThePeakConfirmedByHarmonicsNotTheStrongest) {
  const double fs = 8192.0, f1 = 1797.0 / 60.0;
  auto x = testing::make_sine(16384, fs, f1, 1.0);
  testing::add_sine(x, fs, 2 * f1, 0.5);
  testing::add_sine(x, fs, 3 * f1, 0.3);
  testing::add_sine(x, fs, 45.0, 2.0);  // stronger, but alone: not a shaft speed
  testing::add_gaussian_noise(x, 0.01, 3);
  const AnalyzedSpectrum s = analyze(x, fs, 16384, 2);
  SpectralSpeedConfig config;
  config.min_rpm = 1200.0;
  config.max_rpm = 3600.0;
  auto est = SpeedFromSpectrum::create(config, s.layout);
  ASSERT_TRUE(est.ok()) << est.error().message;
  const SpeedEstimate speed = est->process(s.power);
  ASSERT_TRUE(speed.valid);
  // Expected: the 1797 rpm the signal was built with; the window-aware interpolator reads an
  // off-bin tone to far better than 0.01 % here.
  EXPECT_NEAR(speed.rpm, 1797.0, 1797.0 * 1e-4);
}

TEST(SpeedFromSpectrumTest, UnconfirmedPeakLeavesSpeedUnknown) {
  const double fs = 8192.0;
  auto x = testing::make_sine(16384, fs, 45.0, 2.0);
  testing::add_gaussian_noise(x, 0.01, 4);
  const AnalyzedSpectrum s = analyze(x, fs, 16384, 2);
  SpectralSpeedConfig config;
  config.min_rpm = 1200.0;
  config.max_rpm = 3600.0;
  auto est = SpeedFromSpectrum::create(config, s.layout);
  ASSERT_TRUE(est.ok());
  EXPECT_FALSE(est->process(s.power).valid);
  EXPECT_EQ(est->num_unconfirmed(), 1u);
  EXPECT_FALSE(est->process(std::vector<float>(10, 0.0f)).valid);  // wrong size: unknown
}

}  // namespace
}  // namespace tonewarden::track
