// Focus: the synthetic rig's signal, seen through the real analysis (dsp::SpectrumAnalyzer
// and dsp::EnvelopeAnalyzer), shows the scenario it claims: shaft orders, vane pass and
// 100 Hz hum at their configured levels, and an outer-race defect at BPFO (computed here
// from the bearing geometry) in the envelope spectrum after onset and not before.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "tonewarden/dsp/envelope.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/source/synthetic_rig.h"

namespace tonewarden {
namespace {

using source::SyntheticRig;
using source::SyntheticRigConfig;

constexpr size_t kBlock = 65536;      // 1.37 s at 48 kHz: bins of 0.73 Hz
constexpr size_t kLongBlock = 524288;  // 10.9 s: bins of 0.092 Hz
constexpr double kFs = 48000.0;

// Channel `ch` of the first `frames` frames the rig generates.
std::vector<float> channel_of(const SyntheticRigConfig& config, size_t ch, size_t frames) {
  auto rig = SyntheticRig::create(config);
  EXPECT_TRUE(rig.ok());
  const size_t nch = (*rig)->num_channels();
  std::vector<float> all(frames * nch), out(frames);
  (*rig)->generate(all);
  for (size_t i = 0; i < frames; ++i) out[i] = all[i * nch + ch];
  return out;
}

// Largest bin value within +-`halfwidth_hz` of `f_hz`.
double max_near(const std::vector<float>& p, double bin_hz, double f_hz, double halfwidth_hz) {
  const auto lo = static_cast<size_t>(std::max(0.0, (f_hz - halfwidth_hz) / bin_hz));
  const auto hi = std::min(p.size() - 1, static_cast<size_t>((f_hz + halfwidth_hz) / bin_hz));
  return *std::max_element(p.begin() + lo, p.begin() + hi + 1);
}

double median_between(const std::vector<float>& p, double bin_hz, double lo_hz, double hi_hz) {
  std::vector<float> v(p.begin() + static_cast<size_t>(lo_hz / bin_hz),
                       p.begin() + static_cast<size_t>(hi_hz / bin_hz));
  std::nth_element(v.begin(), v.begin() + v.size() / 2, v.end());
  return v[v.size() / 2];
}

// BPFO = n/2 fr (1 - d/D cos phi): Randall & Antoni 2011, Eq. (2); computed here from the
// geometry, independently of the rig's own figure.
double bpfo_from_geometry(const SyntheticRigConfig& c, double shaft_hz) {
  const double phi = c.contact_angle_deg * M_PI / 180.0;
  return c.bearing_balls / 2.0 * shaft_hz *
         (1.0 - c.ball_diameter_mm / c.pitch_diameter_mm * std::cos(phi));
}

std::vector<float> power_spectrum(const std::vector<float>& x, dsp::WindowKind window,
                                  size_t block) {
  dsp::SpectrumConfig sc;
  sc.sample_rate_hz = kFs;
  sc.block = block;
  sc.window.kind = window;
  sc.planning = dsp::FftPlanning::kEstimate;
  auto an = dsp::SpectrumAnalyzer::create(sc);
  EXPECT_TRUE(an.ok());
  std::vector<float> p(an->num_bins());
  EXPECT_TRUE(an->process(std::span<const float>(x).first(block), p));
  return p;
}

std::vector<float> envelope_spectrum(const std::vector<float>& x, double* bin_hz) {
  dsp::EnvelopeConfig ec;
  ec.sample_rate_hz = kFs;
  ec.block = kBlock;
  ec.band_low_hz = 2500.0;  // around the rig's 3.5 kHz structural resonance
  ec.band_high_hz = 4500.0;
  ec.planning = dsp::FftPlanning::kEstimate;
  auto an = dsp::EnvelopeAnalyzer::create(ec);
  EXPECT_TRUE(an.ok());
  std::vector<float> p(an->num_bins());
  EXPECT_TRUE(an->process(std::span<const float>(x).first(kBlock), p));
  *bin_hz = an->bin_hz();
  return p;
}

TEST(SyntheticRigSpectrumTest, PlainSpectrumShowsOrdersVanePassAndHumAtConfiguredLevels) {
  SyntheticRigConfig c;
  c.pace = source::Pace::kFast;
  c.story_start_s = 1000.0;  // healthy: long before the defect
  auto rig = SyntheticRig::create(c);
  ASSERT_TRUE(rig.ok());
  // 2x (99.17 Hz) sits 0.83 Hz from the 100 Hz hum, so the block must resolve them: 10.9 s
  // with a flat-top (main lobe +-5 bins = +-0.46 Hz). The drift moves the speed by < 0.3 rpm
  // over the block, well inside a bin at 1x..3x.
  const double fr = (*rig)->speed_hz_at(c.story_start_s + 5.5);
  const double bin_hz = kFs / kLongBlock;
  for (size_t ch = 0; ch < 2; ++ch) {
    const auto p =
        power_spectrum(channel_of(c, ch, kLongBlock), dsp::WindowKind::kFlatTop, kLongBlock);
    const source::RigChannelMix& m = c.channels[ch];
    struct Line {
      const char* what;
      double f_hz;
      double amplitude_g;
    };
    const Line lines[] = {
        {"1x", fr, m.order_g[0]},
        {"2x", 2 * fr, m.order_g[1]},
        {"3x", 3 * fr, m.order_g[2]},
        {"vane pass 6x", 6 * fr, m.vane_pass_g},
        {"hum 2x mains", 100.0, m.hum_g},
    };
    for (const Line& l : lines) {
      // Spectrum scaling: a sine of peak A reads A^2/2 (scipy 'spectrum' convention); the
      // flat-top's maximum bin is within 0.01 dB of it (REFERENCES.md, flat-top table).
      // Expected peak volts = g x 0.1 V/g (the sensors' sensitivity). Tolerance 3 %: the
      // broadband noise in the flat-top's 3.8-bin band is about 1 % of the weakest line.
      const double peak_v = std::sqrt(2.0 * max_near(p, bin_hz, l.f_hz, 0.2));
      EXPECT_NEAR(peak_v, l.amplitude_g * c.sensitivity_v_per_g,
                  0.03 * l.amplitude_g * c.sensitivity_v_per_g)
          << "channel " << ch << " " << l.what << " at " << l.f_hz << " Hz";
    }
    // No BPFO line before the defect: far below the smallest tone (3x).
    const double bpfo = bpfo_from_geometry(c, fr);
    EXPECT_LT(max_near(p, bin_hz, bpfo, 1.0), 1e-3 * max_near(p, bin_hz, 3 * fr, 0.2))
        << "channel " << ch;
  }
}

TEST(SyntheticRigSpectrumTest, EnvelopeShowsBpfoHarmonicsAfterOnsetAndNotBefore) {
  SyntheticRigConfig healthy;
  healthy.pace = source::Pace::kFast;
  healthy.story_start_s = healthy.defect_onset_s - 100.0;  // the block ends 98.6 s early
  SyntheticRigConfig faulty = healthy;
  faulty.story_start_s = faulty.defect_onset_s + faulty.defect_growth_s;  // full size

  auto rig = SyntheticRig::create(faulty);
  ASSERT_TRUE(rig.ok());
  const double fr = (*rig)->speed_hz_at(faulty.story_start_s + 0.7);
  const double bpfo = bpfo_from_geometry(faulty, fr);
  // 9 balls, 7.94/39.04 mm, 0 deg at about 2975 rpm: BPFO about 177.7 Hz (3.5848 x).
  ASSERT_NEAR(bpfo / fr, 3.58478, 1e-5);

  double bin_hz = 0.0;
  const auto env_bad = envelope_spectrum(channel_of(faulty, 0, kBlock), &bin_hz);
  const auto env_ok = envelope_spectrum(channel_of(healthy, 0, kBlock), &bin_hz);
  // Impacts at BPFO ringing a resonance make lines at BPFO and its harmonics in the envelope
  // spectrum (Randall & Antoni 2011, section on envelope analysis). Criterion (ours): a line
  // at least 10 dB above the median envelope level between 20 and 1000 Hz. The search
  // spans +-1 % of each harmonic: the impact intervals jitter by 1 % (slip).
  const double floor_bad = median_between(env_bad, bin_hz, 20.0, 1000.0);
  for (int k = 1; k <= 3; ++k) {
    EXPECT_GT(max_near(env_bad, bin_hz, k * bpfo, 0.01 * k * bpfo), 10.0 * floor_bad)
        << "harmonic " << k << " of BPFO " << bpfo << " Hz";
  }
  const double floor_ok = median_between(env_ok, bin_hz, 20.0, 1000.0);
  EXPECT_LT(max_near(env_ok, bin_hz, bpfo, 0.01 * bpfo), 10.0 * floor_ok);

  // The plain spectrum carries a small BPFO line at full size: 0.01 g = 1 mV peak on
  // channel 0 (the configured bpfo_line_g x 0.1 V/g). Flat-top reading, 5 % tolerance
  // (noise, and what little of the impacts reaches down to BPFO).
  const auto plain =
      power_spectrum(channel_of(faulty, 0, kBlock), dsp::WindowKind::kFlatTop, kBlock);
  EXPECT_NEAR(std::sqrt(2.0 * max_near(plain, kFs / kBlock, bpfo, 3.0)),
              faulty.channels[0].bpfo_line_g * faulty.sensitivity_v_per_g,
              0.05 * faulty.channels[0].bpfo_line_g * faulty.sensitivity_v_per_g);
}

}  // namespace
}  // namespace tonewarden
