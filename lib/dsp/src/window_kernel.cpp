// Window::kernel_magnitude: the normalised magnitude of a window's DTFT, |W(nu)|/|W(0)|,
// which the peak interpolator fits to the bins around a spectral maximum.
#include <cmath>
#include <complex>
#include <numbers>
#include <span>

#include "tonewarden/dsp/window.h"
#include "window_transform.h"

namespace tonewarden::dsp {
namespace {

constexpr double kPi = std::numbers::pi;

// sin(πu)/sin(πu/N), the real part of the Dirichlet kernel D(u) once its linear phase
// e^{-jπu(N-1)/N} is taken out. sin(πu) is evaluated on the reduced argument so that large
// u keeps full precision; where sin(πu/N) vanishes (u a multiple of N) the limit
// N·cos(πu)/cos(πu/N) is used.
double dirichlet_real(double u, double n) noexcept {
  const double whole = std::nearbyint(u);
  const double frac = u - whole;
  const double sign = (std::fmod(std::fabs(whole), 2.0) == 0.0) ? 1.0 : -1.0;
  const double den = std::sin(kPi * u / n);
  if (std::fabs(den) < 1e-12) {
    return n * sign * std::cos(kPi * frac) / std::cos(kPi * u / n);
  }
  return sign * std::sin(kPi * frac) / den;
}

// Cosine-sum window w[n] = Σ_k (-1)^k a_k cos(2πkn/N). Its DTFT is a sum of shifted
// Dirichlet kernels (standard DFT algebra; Harris 1978 writes windows this way):
//   W(ν) = a_0 D(ν) + Σ_{k≥1} (-1)^k (a_k/2)·[D(ν-k) + D(ν+k)],
// with D(u) = e^{-jπu(N-1)/N}·sin(πu)/sin(πu/N). Factoring out e^{-jπν(N-1)/N} leaves
// phases (-1)^k e^{±jπk/N} on the shifted kernels; (-1)^k cancels the window's own sign, so
//   W(ν)·e^{jπν(N-1)/N} = a_0 S(ν) + Σ_{k≥1} (a_k/2)·[e^{jπk/N} S(ν-k) + e^{-jπk/N} S(ν+k)]
// where S is dirichlet_real. Cost: 2K+1 sines for K terms.
std::complex<double> cosine_sum_transform(std::span<const double> a, double nu,
                                          double n) noexcept {
  std::complex<double> acc = a[0] * dirichlet_real(nu, n);
  for (size_t k = 1; k < a.size(); ++k) {
    const double kk = static_cast<double>(k);
    const std::complex<double> rot = std::polar(1.0, kPi * kk / n);
    acc += 0.5 * a[k] * (rot * dirichlet_real(nu - kk, n) + std::conj(rot) * dirichlet_real(nu + kk, n));
  }
  return acc;
}

}  // namespace

namespace detail {

// Phasor recurrence instead of a sine per sample; rounding grows as N·eps (about 1e-11 at
// N = 2^16), and the phasor is renormalised now and then so its magnitude cannot drift.
std::complex<double> centred_transform(std::span<const float> w, double nu) noexcept {
  const double n_total = static_cast<double>(w.size());
  const std::complex<double> step = std::polar(1.0, -2.0 * kPi * nu / n_total);
  std::complex<double> phasor = std::polar(1.0, kPi * nu);  // n = 0: e^{-j2πν(0-N/2)/N}
  std::complex<double> acc = 0;
  for (size_t i = 0; i < w.size(); ++i) {
    acc += static_cast<double>(w[i]) * phasor;
    phasor *= step;
    if ((i & 1023) == 1023) phasor /= std::abs(phasor);
  }
  return acc;
}

}  // namespace detail

// Cosine sums: the closed form above, exact for any N. Kaiser (no closed form for the sampled
// window): the exact DTFT of the float coefficients the analyzer applies, O(N) per call;
// callers that need many evaluations (PeakFinder) tabulate it once.
double Window::kernel_magnitude(double nu_bins) const noexcept {
  if (w_.empty()) return 0.0;
  if (!cosine_terms_.empty()) {
    const double n = static_cast<double>(w_.size());
    // W(0) = a_0·N: the shifted kernels vanish at ν = 0 unless a shift k reaches N.
    const double at_zero = (cosine_terms_.size() < w_.size())
                               ? std::fabs(cosine_terms_[0]) * n
                               : std::abs(cosine_sum_transform(cosine_terms_, 0.0, n));
    return std::abs(cosine_sum_transform(cosine_terms_, nu_bins, n)) / at_zero;
  }
  // Normalise by the sum of the same float table, so K(0) = 1 to rounding.
  double dc = 0;
  for (float v : w_) dc += static_cast<double>(v);
  return std::abs(detail::centred_transform(w_, nu_bins)) / std::fabs(dc);
}

}  // namespace tonewarden::dsp
