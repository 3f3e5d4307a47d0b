// Levels: band RMS from a one-sided power spectrum, and time-domain statistics of a frame.
#include "tonewarden/dsp/levels.h"

#include <algorithm>
#include <cmath>

namespace tonewarden::dsp {

double band_rms(std::span<const float> power, double bin_hz, double enbw_fft_bins, double low_hz,
                double high_hz) noexcept {
  if (power.empty() || !(bin_hz > 0) || !(enbw_fft_bins > 0) || !(high_hz >= low_hz)) return 0.0;
  // Bin k is centred on k·bin_hz; the tolerance keeps an edge that lands on a centre
  // (e.g. 10 Hz on a 0.5 Hz grid) inside despite rounding.
  constexpr double kEdgeTolerance = 1e-9;
  const double lo = std::max(0.0, std::ceil(low_hz / bin_hz - kEdgeTolerance));
  const double hi = std::floor(high_hz / bin_hz + kEdgeTolerance);
  if (hi < lo || lo >= static_cast<double>(power.size())) return 0.0;
  const size_t k0 = static_cast<size_t>(lo);
  const size_t k1 = std::min(power.size() - 1, static_cast<size_t>(std::max(0.0, hi)));
  double sum = 0;
  for (size_t k = k0; k <= k1; ++k) sum += power[k];
  // Each bin's window collects ENBW bins' worth of noise, so Σ P over-counts by that factor.
  return std::sqrt(sum / enbw_fft_bins);
}

TimeStats time_stats(std::span<const float> x) noexcept {
  TimeStats s;
  if (x.empty()) return s;
  const double n = static_cast<double>(x.size());
  double mean = 0;
  for (float v : x) mean += v;
  mean /= n;
  double m2 = 0, m4 = 0, peak = 0;
  for (float v : x) {
    const double d = static_cast<double>(v) - mean;
    const double d2 = d * d;
    m2 += d2;
    m4 += d2 * d2;
    peak = std::max(peak, std::abs(d));
  }
  m2 /= n;
  m4 /= n;
  s.mean = mean;
  s.rms = std::sqrt(m2);
  s.peak = peak;
  if (m2 > 0) {
    s.crest_factor = peak / s.rms;
    s.kurtosis = m4 / (m2 * m2);  // Pearson: Gaussian 3, sine 1.5
  }
  return s;
}

}  // namespace tonewarden::dsp
