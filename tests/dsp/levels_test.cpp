// Focus: band RMS edges and ENBW correction, and time statistics (Pearson kurtosis, crest).
#include "tonewarden/dsp/levels.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

#include "support/signals.h"

namespace tonewarden::dsp {
namespace {

TEST(LevelsTest, BandRmsIncludesBinsWhoseCentresAreInside) {
  // Bins every 0.5 Hz; [1.0, 2.0] holds centres 1.0, 1.5, 2.0 (k = 2, 3, 4).
  const std::vector<float> p{100, 100, 1, 2, 3, 100, 100};
  EXPECT_NEAR(band_rms(p, 0.5, 1.0, 1.0, 2.0), std::sqrt(6.0), 1e-9);
  // ENBW 1.5 bins: Σ P / 1.5.
  EXPECT_NEAR(band_rms(p, 0.5, 1.5, 1.0, 2.0), std::sqrt(4.0), 1e-9);
  // A band between two centres holds nothing.
  EXPECT_EQ(band_rms(p, 0.5, 1.0, 1.1, 1.4), 0.0);
  // A band past the end is clamped.
  EXPECT_NEAR(band_rms(p, 0.5, 1.0, 2.5, 100.0), std::sqrt(200.0), 1e-9);
  // Bad arguments give 0.
  EXPECT_EQ(band_rms(p, 0.0, 1.0, 0, 1), 0.0);
  EXPECT_EQ(band_rms(p, 0.5, 1.0, 2.0, 1.0), 0.0);
}

TEST(LevelsTest, SineStatistics) {
  // Sine over whole periods: RMS A/√2, crest √2, Pearson kurtosis 1.5 (E[sin⁴]/E[sin²]² = (3/8)/(1/4)).
  auto x = testing::make_sine(4800, 48000, 1000, 2.0);
  for (float& v : x) v += 0.25f;
  const auto s = time_stats(x);
  EXPECT_NEAR(s.mean, 0.25, 1e-6);
  EXPECT_NEAR(s.rms, 2.0 / std::sqrt(2.0), 1e-5);
  EXPECT_NEAR(s.peak, 2.0, 1e-5);
  EXPECT_NEAR(s.crest_factor, std::sqrt(2.0), 1e-5);
  EXPECT_NEAR(s.kurtosis, 1.5, 1e-5);
}

TEST(LevelsTest, GaussianKurtosisIsThree) {
  // Pearson (not excess) kurtosis of Gaussian noise is 3; sampling spread for n = 200000 is
  // about sqrt(24/n) = 0.011.
  std::vector<float> x(200000, 0.0f);
  testing::add_gaussian_noise(x, 1.5, 42);
  const auto s = time_stats(x);
  EXPECT_NEAR(s.kurtosis, 3.0, 0.06);
  EXPECT_NEAR(s.rms, 1.5, 0.01);
}

TEST(LevelsTest, ConstantAndEmptyInputs) {
  const std::vector<float> c(10, 4.0f);
  const auto s = time_stats(c);
  EXPECT_EQ(s.mean, 4.0);
  EXPECT_EQ(s.rms, 0.0);
  EXPECT_EQ(s.kurtosis, 0.0);
  EXPECT_EQ(s.crest_factor, 0.0);
  const auto e = time_stats({});
  EXPECT_EQ(e.rms, 0.0);
}

}  // namespace
}  // namespace tonewarden::dsp
