// Focus: EnvelopeAnalyzer matches a numpy/scipy envelope spectrum bin by bin, and finds the
// modulation rate of an AM carrier and the repetition rate of decaying resonance impacts.
//
// Reference: tests/reference/scripts/envelope.py run by Debian's /usr/bin/python3 (FFT-mask
// band limit, scipy.signal.hilbert, squared envelope, mean removed, get_window,
// periodogram(scaling='spectrum')). Expected peak frequencies are the generators' own.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "support/signals.h"
#include "support/subprocess.h"
#include "tonewarden/dsp/envelope.h"
#include "tonewarden/dsp/peaks.h"

namespace tonewarden::dsp {
namespace {

constexpr double kFs = 48000.0;
constexpr size_t kBlock = 8192;
constexpr size_t kPad = 2;
constexpr double kTwoPi = 2.0 * std::numbers::pi;

struct Case {
  std::vector<float> x;
  double band_low_hz;
  double band_high_hz;
  double rate_hz;  // modulation or impact rate
};

// 3 kHz carrier, 50 % amplitude modulation at 107 Hz, white noise (σ = 0.05).
Case am_carrier() {
  Case c{std::vector<float>(kBlock), 2010.0, 3990.0, 107.0};
  for (size_t n = 0; n < kBlock; ++n) {
    const double t = static_cast<double>(n) / kFs;
    c.x[n] = static_cast<float>((1.0 + 0.5 * std::cos(kTwoPi * 107.0 * t)) *
                                std::sin(kTwoPi * 3000.0 * t));
  }
  testing::add_gaussian_noise(c.x, 0.05, 21);
  return c;
}

// Impacts every 1/107.3 s, each ringing a 3.5 kHz resonance that decays with τ = 1.2 ms,
// in white noise (σ = 0.1) and with a 50 Hz hum outside the band.
Case impact_train() {
  Case c{std::vector<float>(kBlock), 2510.0, 4490.0, 107.3};
  const double period = 1.0 / 107.3, tau = 1.2e-3;
  for (size_t n = 0; n < kBlock; ++n) {
    const double t = static_cast<double>(n) / kFs;
    double v = 0;
    for (double t0 = std::floor(t / period) * period; t0 > t - 10 * tau && t0 >= 0; t0 -= period) {
      const double age = t - t0;
      v += std::exp(-age / tau) * std::sin(kTwoPi * 3500.0 * age);
    }
    c.x[n] = static_cast<float>(v + 0.3 * std::sin(kTwoPi * 50.0 * t));
  }
  testing::add_gaussian_noise(c.x, 0.1, 22);
  return c;
}

std::vector<double> scipy_envelope(const Case& c, size_t nfft) {
  std::ostringstream text;
  text.precision(9);
  for (float v : c.x) text << v << '\n';
  const auto r = testing::run_process({testing::kReferencePython,
                                       testing::reference_script("envelope.py"),
                                       std::to_string(kFs), std::to_string(c.band_low_hz),
                                       std::to_string(c.band_high_hz), "hann",
                                       std::to_string(nfft)},
                                      text.str());
  EXPECT_EQ(r.exit_code, 0) << r.stderr_text;
  std::vector<double> p;
  std::istringstream in(r.stdout_text);
  for (double v; in >> v;) p.push_back(v);
  return p;
}

void check_case(const Case& c) {
  EnvelopeConfig config;
  config.sample_rate_hz = kFs;
  config.block = kBlock;
  config.pad_factor = kPad;
  config.band_low_hz = c.band_low_hz;
  config.band_high_hz = c.band_high_hz;
  config.window = WindowSpec{WindowKind::kHann, 0.0};
  config.planning = FftPlanning::kEstimate;
  auto analyzer = EnvelopeAnalyzer::create(config);
  ASSERT_TRUE(analyzer.ok()) << analyzer.error().message;
  std::vector<float> ours(analyzer->num_bins());
  ASSERT_TRUE(analyzer->process(c.x, ours));

  const auto ref = scipy_envelope(c, analyzer->fft_length());
  ASSERT_EQ(ref.size(), ours.size());
  const double peak = *std::max_element(ref.begin(), ref.end());
  size_t compared = 0;
  double worst = 0;
  for (size_t k = 0; k < ref.size(); ++k) {
    if (ref[k] < 1e-6 * peak) continue;  // significant bins: within 60 dB of the maximum
    worst = std::max(worst, std::fabs(ours[k] - ref[k]) / ref[k]);
    ++compared;
  }
  std::printf("  rate %.1f Hz: %zu bins compared, worst relative difference %.2e\n", c.rate_hz,
              compared, worst);
  EXPECT_GT(compared, 20u);
  EXPECT_LT(worst, 1e-3);

  // The strongest envelope line below 500 Hz is the modulation/impact rate (± one bin).
  PeakConfig pc;
  pc.sample_rate_hz = kFs;
  pc.fft_length = analyzer->fft_length();
  pc.min_frequency_hz = 20.0;
  pc.max_frequency_hz = 500.0;
  auto finder = PeakFinder::create(pc, analyzer->window());
  ASSERT_TRUE(finder.ok()) << finder.error().message;
  std::vector<Peak> peaks(5);
  ASSERT_GE(finder->find(ours, peaks), 1u);
  std::printf("  strongest envelope line below 500 Hz: %.3f Hz (bin %.3f Hz)\n",
              peaks[0].frequency_hz, analyzer->bin_hz());
  EXPECT_NEAR(peaks[0].frequency_hz, c.rate_hz, analyzer->bin_hz());
}

TEST(EnvelopeVsScipyTest, AmCarrierMatchesScipyAndShowsTheModulationRate) {
  check_case(am_carrier());
}

TEST(EnvelopeVsScipyTest, ResonanceImpactsMatchScipyAndShowTheImpactRate) {
  check_case(impact_train());
}

TEST(EnvelopeVsScipyTest, RejectsBadBandsAndSizes) {
  EnvelopeConfig config;
  config.sample_rate_hz = kFs;
  config.block = kBlock;
  config.band_low_hz = 5000;
  config.band_high_hz = 4000;
  auto inverted = EnvelopeAnalyzer::create(config);
  ASSERT_FALSE(inverted.ok());
  EXPECT_NE(inverted.error().message.find("band [5000"), std::string::npos);
  config.band_low_hz = 1000;
  config.band_high_hz = 30000;  // above fs/2
  EXPECT_FALSE(EnvelopeAnalyzer::create(config).ok());
  config.band_low_hz = 1000.5;  // bins sit at 995.1 and 1001.95 Hz: none inside
  config.band_high_hz = 1001.5;
  auto empty = EnvelopeAnalyzer::create(config);
  ASSERT_FALSE(empty.ok());
  EXPECT_NE(empty.error().message.find("holds no FFT bin"), std::string::npos);
  config.band_low_hz = 1000;
  config.band_high_hz = 5000;
  config.pad_factor = 0;
  EXPECT_FALSE(EnvelopeAnalyzer::create(config).ok());
  config.pad_factor = 1;
  auto ok = EnvelopeAnalyzer::create(config);
  ASSERT_TRUE(ok.ok());
  std::vector<float> frame(kBlock - 1), out(ok->num_bins());
  EXPECT_FALSE(ok->process(frame, out));  // short frame: refused, nothing written
}

}  // namespace
}  // namespace tonewarden::dsp
