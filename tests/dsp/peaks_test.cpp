// Focus: PeakFinder detection: tones in noise, prominence, spacing, order, max_peaks,
// frequency limits, the noise-floor estimate, false alarms in pure noise, and bad input.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "support/signals.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {
namespace {

constexpr double kFs = 48000.0;
constexpr size_t kBlock = 4096;

// The analyzer's spectrum (windowed, end-padded, one-sided power, 'spectrum' scaling).
class Spectrum {
 public:
  Spectrum(WindowKind kind, size_t pad) : analyzer_(make(kind, pad)) {}
  std::vector<float> operator()(const std::vector<float>& x) {
    std::vector<float> p(analyzer_.num_bins());
    EXPECT_TRUE(analyzer_.process(x, p));
    return p;
  }
  const Window& window() const { return analyzer_.window(); }
  size_t fft_length() const { return analyzer_.fft_length(); }

 private:
  static SpectrumAnalyzer make(WindowKind kind, size_t pad) {
    SpectrumConfig config;
    config.sample_rate_hz = kFs;
    config.block = kBlock;
    config.pad_factor = pad;
    config.window = WindowSpec{kind, 0.0};
    config.planning = FftPlanning::kEstimate;
    auto analyzer = SpectrumAnalyzer::create(config);
    EXPECT_TRUE(analyzer.ok());
    return std::move(analyzer).value();
  }
  SpectrumAnalyzer analyzer_;
};

PeakFinder make_finder(const Spectrum& s, PeakConfig config = {}) {
  config.sample_rate_hz = kFs;
  config.fft_length = s.fft_length();
  auto finder = PeakFinder::create(config, s.window());
  EXPECT_TRUE(finder.ok()) << finder.error().message;
  return std::move(finder).value();
}

// Mean one-sided power per bin of white Gaussian noise of standard deviation σ:
// E|X[k]|² = σ²·Σw², and P = 2|X|²/(Σw)², so E[P] = 2σ²·Σw²/(Σw)² = 2σ²·ENBW_bins/N.
// (Derived from the scaling; padding does not change it.)
double white_noise_bin_power(double sigma, const Window& w) {
  return 2.0 * sigma * sigma * w.enbw_bins() / static_cast<double>(w.length());
}

TEST(PeakFinderTest, FindsTonesInNoiseStrongestFirstWithInterpolatedValues) {
  Spectrum spectrum(WindowKind::kHann, 2);
  PeakFinder finder = make_finder(spectrum);
  auto x = testing::make_sine(kBlock, kFs, 1000.3, 1.0);
  testing::add_sine(x, kFs, 7123.4, 0.1, 1.0);
  testing::add_sine(x, kFs, 3055.5, 0.3, 2.0);
  testing::add_gaussian_noise(x, 0.01, 11);
  std::vector<Peak> peaks(10);
  const size_t n = finder.find(spectrum(x), peaks);
  ASSERT_EQ(n, 3u);
  // Expected: the generator's frequencies and RMS² = A²/2; noise 60 dB below the strongest
  // tone moves them by far less than these bounds (0.01 bin = 0.12 Hz, 0.1 dB).
  const double want_hz[] = {1000.3, 3055.5, 7123.4};
  const double want_power[] = {0.5, 0.045, 0.005};
  for (size_t i = 0; i < 3; ++i) {
    EXPECT_NEAR(peaks[i].frequency_hz, want_hz[i], 0.12) << i;
    EXPECT_NEAR(10 * std::log10(peaks[i].power / want_power[i]), 0.0, 0.1) << i;
    EXPECT_GT(peaks[i].power, peaks[i].floor_power * 1e3) << i;
  }
}

TEST(PeakFinderTest, ProminenceDecidesWhetherAWeakToneCounts) {
  Spectrum spectrum(WindowKind::kHann, 1);
  const double floor = white_noise_bin_power(0.01, spectrum.window());
  // A tone 20 dB above the mean noise power per bin (A²/2 = 100·floor).
  const double amp = std::sqrt(2.0 * 100.0 * floor);
  auto x = testing::make_sine(kBlock, kFs, 5000.0, amp);
  testing::add_gaussian_noise(x, 0.01, 5);
  const auto p = spectrum(x);
  std::vector<Peak> peaks(10);
  PeakConfig loose;
  loose.min_prominence_db = 10.0;
  PeakFinder at10 = make_finder(spectrum, loose);
  ASSERT_GE(at10.find(p, peaks), 1u);
  EXPECT_NEAR(peaks[0].frequency_hz, 5000.0, 3.5);  // 0.3 bin: noise moves a 20 dB tone
  PeakConfig strict;
  strict.min_prominence_db = 30.0;
  PeakFinder at30 = make_finder(spectrum, strict);
  EXPECT_EQ(at30.find(p, peaks), 0u);
}

TEST(PeakFinderTest, MinSpacingKeepsOnlyTheStrongerOfCloseTones) {
  Spectrum spectrum(WindowKind::kHann, 4);
  // Two tones 4 bins (46.9 Hz) apart: two clear maxima for Hann (main lobe ±2 bins).
  auto x = testing::make_sine(kBlock, kFs, 6000.0, 1.0);
  testing::add_sine(x, kFs, 6000.0 + 4 * kFs / kBlock, 0.5);
  testing::add_gaussian_noise(x, 1e-4, 6);  // a floor to stand on (float rounding is not one)
  const auto p = spectrum(x);
  std::vector<Peak> peaks(10);
  // 20 dB prominence keeps noise maxima out (see PureNoiseRarelyYieldsPeaksAtTenDb).
  PeakConfig base;
  base.min_prominence_db = 20.0;
  PeakFinder by_default = make_finder(spectrum, base);  // spacing = 1.5 bins = 17.6 Hz
  ASSERT_EQ(by_default.find(p, peaks), 2u);
  EXPECT_NEAR(peaks[0].frequency_hz, 6000.0, 0.1);
  // The stronger tone's sidelobe (-31 dB, twice the amplitude) pulls the weaker by ~0.03
  // bin; this is interference, not interpolator bias, so the bound is 0.05 bin.
  EXPECT_NEAR(peaks[1].frequency_hz, 6000.0 + 4 * kFs / kBlock, 0.6);
  PeakConfig wide = base;
  wide.min_spacing_hz = 60.0;
  PeakFinder spaced = make_finder(spectrum, wide);
  ASSERT_EQ(spaced.find(p, peaks), 1u);
  EXPECT_NEAR(peaks[0].frequency_hz, 6000.0, 0.1);
}

TEST(PeakFinderTest, SidelobesOfAStrongToneAreNotReportedButATrueWeakToneIs) {
  // Rectangular window, tone half-way between bins: sidelobes fall only as 1/(π·Δ), e.g.
  // -13.5 dB at 1.5 bins and -42 dB at 40 bins (|sin(πν)/(πν)|, DFT algebra), far above a
  // noise floor at -100 dB: each is a local maximum, but none is a tone.
  Spectrum spectrum(WindowKind::kRectangular, 1);
  const double f0 = (1000.0 + 0.5) * kFs / kBlock;
  auto x = testing::make_sine(kBlock, kFs, f0, 1.0);
  testing::add_gaussian_noise(x, 1e-4, 8);
  std::vector<Peak> peaks(10);
  PeakFinder finder = make_finder(spectrum);
  ASSERT_EQ(finder.find(spectrum(x), peaks), 1u);
  EXPECT_NEAR(peaks[0].frequency_hz, f0, 0.05);
  // A real tone of -26 dB 40 bins away stands ~16 dB above the -42 dB leakage there.
  const double f1 = f0 + 40.0 * kFs / kBlock;
  testing::add_sine(x, kFs, f1, 0.05);
  ASSERT_EQ(finder.find(spectrum(x), peaks), 2u);
  EXPECT_NEAR(peaks[1].frequency_hz, f1, kFs / kBlock);
}

TEST(PeakFinderTest, FlatTopToneGivesOnePeakAtPadEight) {
  // A flat-top's |W| rises 0.0003 off centre, so one tone can show two maxima in a padded
  // spectrum; the default spacing (one resolution width) must merge them.
  Spectrum spectrum(WindowKind::kFlatTop, 8);
  const auto x = testing::make_sine(kBlock, kFs, 2000.0 + 0.5 * kFs / kBlock, 1.0);
  std::vector<Peak> peaks(10);
  PeakFinder finder = make_finder(spectrum);
  ASSERT_EQ(finder.find(spectrum(x), peaks), 1u);
  EXPECT_NEAR(peaks[0].frequency_hz, 2000.0 + 0.5 * kFs / kBlock, 0.012);
}

TEST(PeakFinderTest, FlatTopInNoiseStaysWithinATenthOfABinAtEveryPad) {
  // In noise, a flat-top's maximum padded bin can lie far from the tone (|W| stays within
  // 3 % of its top for ~1 bin), so the fit must search that wide. Expected: the generator's
  // frequency; bound 0.1 bin at 44 dB per-bin SNR (our measurement: 0.031 bin worst).
  for (size_t pad : {1, 4, 8}) {
    Spectrum spectrum(WindowKind::kFlatTop, pad);
    PeakFinder finder = make_finder(spectrum);
    double worst = 0;
    for (int t = 0; t < 40; ++t) {
      const double bin = 1000.0 - 0.5 + t / 40.0;
      auto x = testing::make_sine(kBlock, kFs, bin * kFs / kBlock, 1.0, t);
      testing::add_gaussian_noise(x, 0.1, 200 + t);
      const auto p = spectrum(x);
      const size_t m = static_cast<size_t>(std::max_element(p.begin(), p.end()) - p.begin());
      const Peak peak = finder.interpolate(p, m);
      worst = std::max(worst, std::fabs(peak.bin / static_cast<double>(pad) - bin));
    }
    EXPECT_LT(worst, 0.1) << "pad " << pad;
  }
}

TEST(PeakFinderTest, MaxPeaksReturnsTheStrongest) {
  Spectrum spectrum(WindowKind::kBlackmanHarris, 1);
  auto x = testing::make_sine(kBlock, kFs, 1000.0, 0.2);
  testing::add_sine(x, kFs, 2000.0, 1.0);
  testing::add_sine(x, kFs, 3000.0, 0.1);
  testing::add_sine(x, kFs, 4000.0, 0.5);
  testing::add_sine(x, kFs, 5000.0, 0.05);
  testing::add_gaussian_noise(x, 1e-3, 3);
  PeakConfig config;
  config.max_peaks = 3;
  PeakFinder finder = make_finder(spectrum, config);
  std::vector<Peak> peaks(10);
  ASSERT_EQ(finder.find(spectrum(x), peaks), 3u);
  EXPECT_NEAR(peaks[0].frequency_hz, 2000.0, 0.1);
  EXPECT_NEAR(peaks[1].frequency_hz, 4000.0, 0.1);
  EXPECT_NEAR(peaks[2].frequency_hz, 1000.0, 0.1);
  // A shorter output span caps the count as well.
  EXPECT_EQ(finder.find(spectrum(x), std::span<Peak>(peaks.data(), 2)), 2u);
}

TEST(PeakFinderTest, FrequencyLimitsExcludeTonesOutsideTheRange) {
  Spectrum spectrum(WindowKind::kHann, 1);
  auto x = testing::make_sine(kBlock, kFs, 500.0, 1.0);
  testing::add_sine(x, kFs, 5000.0, 1.0);
  testing::add_gaussian_noise(x, 1e-3, 4);
  const auto p = spectrum(x);
  std::vector<Peak> peaks(10);
  PeakConfig above;
  above.min_frequency_hz = 1000.0;
  PeakFinder high = make_finder(spectrum, above);
  ASSERT_EQ(high.find(p, peaks), 1u);
  EXPECT_NEAR(peaks[0].frequency_hz, 5000.0, 0.1);
  PeakConfig below;
  below.max_frequency_hz = 2000.0;
  PeakFinder low = make_finder(spectrum, below);
  ASSERT_EQ(low.find(p, peaks), 1u);
  EXPECT_NEAR(peaks[0].frequency_hz, 500.0, 0.1);
}

TEST(PeakFinderTest, FloorOfWhiteNoiseMatchesItsMeanBinPower) {
  for (size_t pad : {1, 4}) {
    Spectrum spectrum(WindowKind::kHann, pad);
    PeakFinder finder = make_finder(spectrum);
    const double expected = white_noise_bin_power(1.0, spectrum.window());  // 2·1.5/4096
    double sum = 0;
    size_t count = 0;
    std::vector<Peak> peaks(10);
    for (uint64_t seed = 1; seed <= 4; ++seed) {
      std::vector<float> x(kBlock, 0.0f);
      testing::add_gaussian_noise(x, 1.0, seed);
      finder.find(spectrum(x), peaks);
      for (size_t k = 1; k + 1 < finder.floor().size(); ++k) sum += finder.floor()[k];
      count += finder.floor().size() - 2;
    }
    // Median/ln 2 estimates the mean of exponentially distributed bin powers; 4 frames of
    // ~2000 bins leave a few % of scatter.
    EXPECT_NEAR(sum / count / expected, 1.0, 0.04) << "pad " << pad;
  }
}

TEST(PeakFinderTest, PureNoiseRarelyYieldsPeaksAtTenDb) {
  Spectrum spectrum(WindowKind::kHann, 1);
  PeakFinder finder = make_finder(spectrum);  // 10 dB prominence
  std::vector<Peak> peaks(10);
  size_t total = 0;
  constexpr int kFrames = 20;
  for (int f = 0; f < kFrames; ++f) {
    std::vector<float> x(kBlock, 0.0f);
    testing::add_gaussian_noise(x, 1.0, 100 + f);
    total += finder.find(spectrum(x), peaks);
  }
  // A noise bin's power is exponential: P(P > 10·mean) = e^-10 = 4.5e-5, so ~2047 bins ×
  // 20 frames expect about 1.9 false peaks (Poisson; P(> 8) < 1e-3).
  EXPECT_LE(total, 8u);
}

TEST(PeakFinderTest, RejectsBadConfigWithContext) {
  const Window w = *Window::create(WindowSpec{}, kBlock);
  PeakConfig c;
  c.fft_length = kBlock;
  c.floor_window_bins = 64;
  auto even = PeakFinder::create(c, w);
  ASSERT_FALSE(even.ok());
  EXPECT_NE(even.error().message.find("floor_window_bins 64"), std::string::npos);
  c.floor_window_bins = 63;
  c.fft_length = kBlock / 2;
  auto short_fft = PeakFinder::create(c, w);
  ASSERT_FALSE(short_fft.ok());
  EXPECT_NE(short_fft.error().message.find("fft_length 2048"), std::string::npos);
  c.fft_length = kBlock;
  c.min_prominence_db = -1;
  EXPECT_FALSE(PeakFinder::create(c, w).ok());
  c.min_prominence_db = 10;
  c.leakage_margin_db = -3;
  auto leak = PeakFinder::create(c, w);
  ASSERT_FALSE(leak.ok());
  EXPECT_NE(leak.error().message.find("leakage_margin_db"), std::string::npos);
  c.leakage_margin_db = 6;
  c.min_frequency_hz = 5000;
  c.max_frequency_hz = 4000;
  auto empty = PeakFinder::create(c, w);
  ASSERT_FALSE(empty.ok());
  EXPECT_NE(empty.error().message.find("is empty"), std::string::npos);
  c.max_frequency_hz = 0;
  c.min_frequency_hz = 0;
  c.sample_rate_hz = 0;
  EXPECT_FALSE(PeakFinder::create(c, w).ok());
  c.sample_rate_hz = kFs;
  c.max_peaks = 0;
  EXPECT_FALSE(PeakFinder::create(c, w).ok());
}

TEST(PeakFinderTest, WrongSpectrumSizeFindsNothing) {
  const Window w = *Window::create(WindowSpec{}, kBlock);
  PeakConfig c;
  c.fft_length = kBlock;
  PeakFinder finder = *PeakFinder::create(c, w);
  std::vector<float> p(kBlock / 2, 1.0f);  // one bin short
  std::vector<Peak> peaks(4);
  EXPECT_EQ(finder.find(p, peaks), 0u);
}

}  // namespace
}  // namespace tonewarden::dsp
