// Peak-preserving spectrum decimation (see decimate.h).
#include "tonewarden/http/decimate.h"

#include <cmath>
#include <limits>

namespace tonewarden::http {

DecimatedSpectrum decimate_max(std::span<const float> magnitudes, double bin_hz, size_t points) {
  DecimatedSpectrum out;
  const size_t n = magnitudes.size();
  const size_t m = points < n ? points : n;
  out.frequency_hz.reserve(m);
  out.magnitude.reserve(m);
  for (size_t i = 0; i < m; ++i) {
    const size_t begin = i * n / m;
    const size_t end = (i + 1) * n / m;
    size_t best = begin;
    float best_value = std::numeric_limits<float>::quiet_NaN();
    for (size_t k = begin; k < end; ++k) {
      const float v = magnitudes[k];
      if (std::isnan(v)) continue;
      if (std::isnan(best_value) || v > best_value) {
        best_value = v;
        best = k;
      }
    }
    out.frequency_hz.push_back(static_cast<double>(best) * bin_hz);
    out.magnitude.push_back(best_value);
  }
  return out;
}

}  // namespace tonewarden::http
