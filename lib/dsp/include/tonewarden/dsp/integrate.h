// Frequency-domain integration of acceleration power spectra to velocity or displacement:
// V(f) = A(f)/(j2πf). Bins below `low_cut_hz` (and DC) are zeroed. Unit conversion is the
// caller's: pass `scale` to convert, e.g. g -> mm/s needs 9.80665·1000.
#pragma once

#include <span>

namespace tonewarden::dsp {

enum class IntegrationOrder { kVelocity = 1, kDisplacement = 2 };

// out[k] = in[k] · (scale / (2π f_k)^order)², with out[k] = 0 for f_k < low_cut_hz or k = 0.
// `in` and `out` may alias. Allocation-free.
void integrate_power_spectrum(std::span<const float> in, double bin_hz, double low_cut_hz,
                              IntegrationOrder order, double scale, std::span<float> out) noexcept;

}  // namespace tonewarden::dsp
