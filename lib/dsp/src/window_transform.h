// Internal to dsp: the exact DTFT of a tabulated window about its centre, shared by
// Window::kernel_magnitude and PeakFinder's kernel table. Not a public header.
#pragma once

#include <complex>
#include <span>

namespace tonewarden::dsp::detail {

// Σ_n w[n]·e^{-j2πν(n-N/2)/N} with ν in bins of N = w.size(). Taking the phase about the
// centre keeps the result nearly real and smooth through the kernel's nulls, so it can be
// interpolated. O(N), allocation-free.
std::complex<double> centred_transform(std::span<const float> w, double nu) noexcept;

}  // namespace tonewarden::dsp::detail
