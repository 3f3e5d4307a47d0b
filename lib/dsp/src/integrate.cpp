// Frequency-domain integration of acceleration power spectra: |V|² = |A|²/(2πf)² per order.
#include "tonewarden/dsp/integrate.h"

#include <algorithm>
#include <cmath>
#include <numbers>

namespace tonewarden::dsp {

void integrate_power_spectrum(std::span<const float> in, double bin_hz, double low_cut_hz,
                              IntegrationOrder order, double scale, std::span<float> out) noexcept {
  const size_t n = std::min(in.size(), out.size());
  const int power_of_omega = 2 * static_cast<int>(order);  // power spectrum: squared gain
  const double scale_sq = scale * scale;
  for (size_t k = 0; k < n; ++k) {
    const double f = static_cast<double>(k) * bin_hz;
    // DC has no finite integral, and the low cut keeps 1/f^order from amplifying drift.
    if (k == 0 || !(f > 0) || f < low_cut_hz) {
      out[k] = 0.0f;
      continue;
    }
    const double omega = 2.0 * std::numbers::pi * f;
    out[k] = static_cast<float>(in[k] * scale_sq / std::pow(omega, power_of_omega));
  }
}

}  // namespace tonewarden::dsp
