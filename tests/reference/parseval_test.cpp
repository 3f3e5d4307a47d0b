// Focus: energy is conserved from time to frequency: Σx² = (1/N)Σ|X|², and the mean square of
// a signal equals Σ P / ENBW_bins = Σ PSD·df for tones and noise, at any pad factor.
//
// Sources: Parseval's theorem for the DFT; ENBW = N·Σw²/(Σw)² (F. J. Harris, Proc. IEEE 66(1),
// 1978). For a windowed frame the identity Σ_k P[k] / ENBW_fft_bins = Σ(w·x)²/Σw² is exact;
// for a stationary signal its expectation is the mean square.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <random>
#include <vector>

#include "support/signals.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/dsp/levels.h"
#include "tonewarden/dsp/scaling.h"
#include "tonewarden/dsp/spectrum_analyzer.h"

namespace tonewarden::dsp {
namespace {

TEST(ParsevalTest, EnergyOfDftEqualsEnergyOfSignal) {
  // Σ|x|² = (1/N)Σ|X|² (Parseval), for a random complex and a random real signal.
  constexpr size_t kN = 1000;
  std::mt19937 rng(7);
  std::normal_distribution<float> dist;
  auto c = ComplexFft::create(kN, ComplexFft::Direction::kForward, FftPlanning::kEstimate);
  ASSERT_TRUE(c.ok());
  double ex = 0;
  for (auto& v : c->input()) {
    v = {dist(rng), dist(rng)};
    ex += std::norm(std::complex<double>(v));
  }
  c->execute();
  double eX = 0;
  for (auto v : c->output()) eX += std::norm(std::complex<double>(v));
  EXPECT_NEAR(eX / kN / ex, 1.0, 1e-6);

  // Real input: the half spectrum counts bins 1..N/2-1 twice.
  auto r = RealFft::create(kN, FftPlanning::kEstimate);
  ASSERT_TRUE(r.ok());
  ex = 0;
  for (auto& v : r->input()) {
    v = dist(rng);
    ex += double(v) * v;
  }
  r->execute();
  const auto X = r->output();
  eX = std::norm(std::complex<double>(X[0])) + std::norm(std::complex<double>(X[kN / 2]));
  for (size_t k = 1; k < kN / 2; ++k) eX += 2 * std::norm(std::complex<double>(X[k]));
  EXPECT_NEAR(eX / kN / ex, 1.0, 1e-6);
}

struct Sums {
  double by_enbw, by_psd, band;
};

Sums spectrum_mean_square(const std::vector<float>& x, const char* window, size_t pad, double fs) {
  SpectrumConfig cfg;
  cfg.sample_rate_hz = fs;
  cfg.block = x.size();
  cfg.pad_factor = pad;
  cfg.window = *parse_window_spec(window);
  cfg.planning = FftPlanning::kEstimate;
  auto a = SpectrumAnalyzer::create(cfg);
  EXPECT_TRUE(a.ok());
  std::vector<float> p(a->num_bins()), d(a->num_bins());
  EXPECT_TRUE(a->process(x, p));
  convert_power_spectrum(p, SpectrumScale::kPsd, a->enbw_hz(), d, a->fft_length());
  // ENBW in padded bins = ENBW_bins · nfft / block.
  const double enbw_fft = a->window().enbw_bins() * double(a->fft_length()) / double(x.size());
  double sp = 0, sd = 0;
  for (size_t k = 0; k < p.size(); ++k) {
    sp += p[k];
    sd += d[k];
  }
  return {sp / enbw_fft, sd * a->bin_hz(), std::pow(band_rms(p, a->bin_hz(), enbw_fft, 0, fs), 2)};
}

TEST(ParsevalTest, TonesMeanSquareFromSpectrum) {
  // Two sines over whole periods (bins 50 and 211 of 2048): mean square = Σ A²/2 = 0.5 + 0.125.
  // With a cosine-sum window the sums are exact because x²·w² has no component that aliases.
  auto x = testing::make_sine(2048, 2048, 50, 1.0);
  testing::add_sine(x, 2048, 211, 0.5, 1.0);
  for (const char* window : {"rect", "hann", "blackman-harris", "flattop"}) {
    for (size_t pad : {1u, 2u, 4u}) {
      const Sums s = spectrum_mean_square(x, window, pad, 2048);
      EXPECT_NEAR(s.by_enbw, 0.625, 1e-5) << window << " pad " << pad;
      EXPECT_NEAR(s.by_psd, 0.625, 1e-5) << window << " pad " << pad;
      EXPECT_NEAR(s.band, 0.625, 1e-5) << window << " pad " << pad;
    }
  }
}

TEST(ParsevalTest, NoiseMeanSquareFromSpectrum) {
  // Gaussian noise, sigma 2: mean square 4 in expectation. The spectrum sum equals the
  // window-weighted time-domain mean square Σ(w·x)²/Σw² exactly (Parseval), and that one is
  // within a few percent of 4 for 32768 samples.
  std::vector<float> x(32768, 0.0f);
  testing::add_gaussian_noise(x, 2.0, 99);
  double mean = 0;
  for (float v : x) mean += v;
  mean /= double(x.size());
  for (const char* window : {"rect", "hann", "kaiser:6"}) {
    auto w = Window::create(*parse_window_spec(window), x.size());
    ASSERT_TRUE(w.ok());
    double num = 0;
    for (size_t n = 0; n < x.size(); ++n) {
      const double wx = w->coefficients()[n] * (x[n] - mean);
      num += wx * wx;
    }
    const double weighted_ms = num / w->sum_of_squares();
    for (size_t pad : {1u, 2u}) {
      const Sums s = spectrum_mean_square(x, window, pad, 1000.0);
      EXPECT_NEAR(s.by_enbw / weighted_ms, 1.0, 1e-4) << window << " pad " << pad;
      EXPECT_NEAR(s.by_psd / weighted_ms, 1.0, 1e-4) << window << " pad " << pad;
      EXPECT_NEAR(s.by_enbw, 4.0, 0.15) << window;  // sampling spread of a 32768-sample estimate
    }
  }
}

}  // namespace
}  // namespace tonewarden::dsp
