// Focus: integrating an acceleration spectrum to velocity gives the published RMS and peak of
// a pure tone: 1 g peak at 100 Hz -> 11.036359 mm/s RMS, 15.607768 mm/s peak.
//
// Sources: V(f) = A(f)/(j2πf) (calculus); standard gravity g_n = 9.80665 m/s² exactly (3rd
// CGPM, 1901); worked values computed with numpy 1.24 and listed in the project's reference
// notes. Low cut at 10 Hz is common practice.
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <vector>

#include "support/signals.h"
#include "tonewarden/dsp/integrate.h"
#include "tonewarden/dsp/levels.h"
#include "tonewarden/dsp/scaling.h"
#include "tonewarden/dsp/spectrum_analyzer.h"

namespace tonewarden::dsp {
namespace {

constexpr double kStandardGravity = 9.80665;             // m/s², exact (3rd CGPM 1901)
constexpr double kGToMmPerS = kStandardGravity * 1000.0;  // g -> mm/s² before integration
constexpr double kExpectedRmsMmPerS = 11.036359;          // reference notes, numpy 1.24
constexpr double kExpectedPeakMmPerS = 15.607768;         // reference notes, numpy 1.24

TEST(IntegrationTest, ClosedFormOfWorkedExample) {
  // Peak velocity = A/(2πf); RMS = peak/√2.
  const double peak = kGToMmPerS / (2 * std::numbers::pi * 100.0);
  EXPECT_NEAR(peak, kExpectedPeakMmPerS, 1e-6);
  EXPECT_NEAR(peak / std::sqrt(2.0), kExpectedRmsMmPerS, 1e-6);
}

TEST(IntegrationTest, OneGAtHundredHertzFromSpectrum) {
  // 1 g peak at 100 Hz, fs 25600. Rect window on bin: only bin 100 holds power, so the
  // integration is exact. Hann over 4 s: the main lobe spans 100 ± 0.5 Hz, so 1/f² varies
  // by < 1e-4 across it.
  struct Setup { const char* window; size_t block; double tol_mm_s; };
  for (const Setup& s : {Setup{"rect", 25600, 1e-4}, Setup{"hann", 102400, 2e-4},
                         Setup{"flattop", 102400, 2e-4}}) {
    SpectrumConfig cfg;
    cfg.sample_rate_hz = 25600;
    cfg.block = s.block;
    cfg.window = *parse_window_spec(s.window);
    cfg.planning = FftPlanning::kEstimate;
    auto a = SpectrumAnalyzer::create(cfg);
    ASSERT_TRUE(a.ok());
    const auto x = testing::make_sine(s.block, 25600, 100.0, 1.0);  // in g
    std::vector<float> p(a->num_bins()), v(a->num_bins());
    ASSERT_TRUE(a->process(x, p));
    integrate_power_spectrum(p, a->bin_hz(), 10.0, IntegrationOrder::kVelocity, kGToMmPerS, v);
    // Velocity RMS over 10-1000 Hz (the usual severity band, common practice).
    const double rms = band_rms(v, a->bin_hz(), a->window().enbw_bins(), 10.0, 1000.0);
    EXPECT_NEAR(rms, kExpectedRmsMmPerS, s.tol_mm_s) << s.window;
    // Peak scale of the tone's own bin (on bin): sqrt(2P).
    const size_t k = static_cast<size_t>(std::lround(100.0 / a->bin_hz()));
    if (std::string(s.window) == "rect") {
      EXPECT_NEAR(power_to_scale(v[k], SpectrumScale::kPeak, a->enbw_hz(), false),
                  kExpectedPeakMmPerS, 2e-4);
    }
  }
}

TEST(IntegrationTest, DisplacementOfWorkedExample) {
  // Displacement peak = A/(2πf)²: 9806.65/(200π)² mm = 0.0248405 mm (same algebra).
  const std::vector<float> p{0.0f, 0.5f};  // 1 g peak tone in bin 1 (RMS² = 0.5 g²)
  std::vector<float> d(2);
  integrate_power_spectrum(p, 100.0, 10.0, IntegrationOrder::kDisplacement, kGToMmPerS, d);
  const double expected_peak = kGToMmPerS / std::pow(2 * std::numbers::pi * 100.0, 2);
  EXPECT_NEAR(std::sqrt(2.0 * d[1]), expected_peak, 1e-9);
  EXPECT_NEAR(expected_peak, 0.0248405, 1e-7);
}

}  // namespace
}  // namespace tonewarden::dsp
