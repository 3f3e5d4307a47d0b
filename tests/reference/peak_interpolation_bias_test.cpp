// Focus: the window-aware peak interpolator is unbiased (≤ 0.001 bin, ≤ 0.01 dB) for a
// noise-free tone, for every window and pad factor ×1/×2/×4/×8; a parabola is not.
//
// Outside basis: DFT algebra. A periodic cosine-sum window is a sum of shifted Dirichlet
// kernels (F. J. Harris, Proc. IEEE 66(1), 1978), so a tone at ν0 gives padded bins
// |X[m]| = A·|W(m/P − ν0)| exactly, up to the negative-frequency image of a real tone.
// The expected values are therefore the generator's own frequency and power (a sine of
// amplitude 1 has RMS² = 0.5); the target bounds are the project's accuracy requirement.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

#include "support/signals.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {
namespace {

constexpr double kFs = 48000.0;
constexpr size_t kBlock = 4096;
constexpr double kCentreBin = 1000.0;  // mid-band: 11.7 kHz of 24 kHz
constexpr int kOffsets = 21;           // tone offsets -0.5 .. +0.5 bin
constexpr double kMaxBiasBins = 1e-3;  // project target
constexpr double kMaxBiasDb = 1e-2;    // project target

// The analyzer's one-sided power spectrum: |X|²/(Σw)², doubled except DC and Nyquist
// (scipy.signal.periodogram's 'spectrum' convention), end-padded to fft_length.
SpectrumAnalyzer make_analyzer(const WindowSpec& window, size_t pad) {
  SpectrumConfig config;
  config.sample_rate_hz = kFs;
  config.block = kBlock;
  config.pad_factor = pad;
  config.window = window;
  config.planning = FftPlanning::kEstimate;
  auto analyzer = SpectrumAnalyzer::create(config);
  EXPECT_TRUE(analyzer.ok());
  return std::move(analyzer).value();
}

std::vector<float> power_spectrum(const std::vector<float>& x, SpectrumAnalyzer& analyzer) {
  std::vector<float> p(analyzer.num_bins());
  EXPECT_TRUE(analyzer.process(x, p));
  return p;
}

size_t argmax(const std::vector<float>& p) {
  return static_cast<size_t>(std::max_element(p.begin(), p.end()) - p.begin());
}

struct Bias {
  double bins = 0;
  double db = 0;
};

Bias worst_bias(const std::string& window_name, size_t pad) {
  const auto spec = parse_window_spec(window_name);
  EXPECT_TRUE(spec.ok());
  SpectrumAnalyzer analyzer = make_analyzer(*spec, pad);
  const size_t nfft = analyzer.fft_length();
  PeakConfig config;
  config.sample_rate_hz = kFs;
  config.fft_length = nfft;
  auto finder = PeakFinder::create(config, analyzer.window());
  EXPECT_TRUE(finder.ok()) << finder.error().message;
  Bias worst;
  for (int i = 0; i < kOffsets; ++i) {
    const double offset = -0.5 + static_cast<double>(i) / (kOffsets - 1);
    const double bin = kCentreBin + offset;  // unpadded bins
    const auto x = testing::make_sine(kBlock, kFs, bin * kFs / kBlock, 1.0, 0.3 + i);
    const auto p = power_spectrum(x, analyzer);
    const Peak peak = finder->interpolate(p, argmax(p));
    const double err_bins = peak.bin * kBlock / static_cast<double>(nfft) - bin;
    const double err_db = 10.0 * std::log10(peak.power / 0.5);
    worst.bins = std::max(worst.bins, std::fabs(err_bins));
    worst.db = std::max(worst.db, std::fabs(err_db));
  }
  return worst;
}

TEST(PeakInterpolationBiasTest, WindowAwareFitMeetsTargetForEveryWindowAndPad) {
  const char* windows[] = {"rect",  "hann",  "hamming",  "blackman", "blackman-harris",
                           "flattop", "hft95", "kaiser:6", "kaiser:12"};
  for (const char* name : windows) {
    for (size_t pad : {1, 2, 4, 8}) {
      const Bias b = worst_bias(name, pad);
      std::printf("  %-16s pad x%zu: worst bias %.2e bin, %.2e dB\n", name, pad, b.bins, b.db);
      EXPECT_LE(b.bins, kMaxBiasBins) << name << " pad " << pad;
      EXPECT_LE(b.db, kMaxBiasDb) << name << " pad " << pad;
    }
  }
}

// Parabola through |X| at the maximum and its neighbours (J. O. Smith, Spectral Audio Signal
// Processing, 2011). For Hann unpadded its worst frequency bias over a bin is about 0.053 bin
// (our measurement, REFERENCES.md "Interpolating a peak"): far outside the 0.001 target, so
// the bias sweep above can fail.
TEST(PeakInterpolationBiasTest, ParabolaOnMagnitudeMissesTargetForHann) {
  SpectrumAnalyzer analyzer = make_analyzer(WindowSpec{WindowKind::kHann, 0.0}, 1);
  double worst = 0;
  for (int i = 0; i < kOffsets; ++i) {
    const double bin = kCentreBin - 0.5 + static_cast<double>(i) / (kOffsets - 1);
    const auto x = testing::make_sine(kBlock, kFs, bin * kFs / kBlock, 1.0, 0.3 + i);
    const auto p = power_spectrum(x, analyzer);
    const size_t m = argmax(p);
    const double a = std::sqrt(p[m - 1]), b = std::sqrt(p[m]), c = std::sqrt(p[m + 1]);
    const double est = static_cast<double>(m) + 0.5 * (a - c) / (a - 2 * b + c);
    worst = std::max(worst, std::fabs(est - bin));
  }
  std::printf("  parabola on |X|, hann pad x1: worst bias %.4f bin\n", worst);
  EXPECT_GT(worst, 0.045);
  EXPECT_LT(worst, 0.060);
  EXPECT_GT(worst, 10 * kMaxBiasBins);
}

}  // namespace
}  // namespace tonewarden::dsp
