// Focus: Window::kernel_magnitude, the normalised |DTFT| that the peak interpolator fits:
// closed form against the direct DTFT sum, exact values, and the Kaiser transform.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <numbers>

#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {
namespace {

constexpr double kPi = std::numbers::pi;

// |Σ w[n] e^{-j2πνn/N}| / |Σ w[n]| by direct summation in long double.
double direct_kernel(const Window& w, double nu) {
  const auto c = w.coefficients();
  const long double n_total = static_cast<long double>(c.size());
  std::complex<long double> acc = 0, dc = 0;
  for (size_t n = 0; n < c.size(); ++n) {
    const long double phase = -2.0L * static_cast<long double>(kPi) * nu * n / n_total;
    acc += static_cast<long double>(c[n]) * std::polar(1.0L, phase);
    dc += static_cast<long double>(c[n]);
  }
  return static_cast<double>(std::abs(acc) / std::abs(dc));
}

Window make(WindowKind kind, size_t n, double beta = 0.0) {
  auto w = Window::create(WindowSpec{kind, beta}, n);
  EXPECT_TRUE(w.ok());
  return std::move(w).value();
}

TEST(WindowKernelTest, ClosedFormEqualsDirectDtftForEveryCosineSum) {
  // Identity: the DTFT of a cosine sum is its sum of shifted Dirichlet kernels (DFT algebra;
  // Harris 1978). Small and odd N check the aliased and half-integer-centre cases; the
  // tolerance covers the float coefficient table (1e-7 relative).
  const WindowKind kinds[] = {WindowKind::kRectangular, WindowKind::kHann,
                              WindowKind::kHamming,     WindowKind::kBlackman,
                              WindowKind::kBlackmanHarris, WindowKind::kFlatTop,
                              WindowKind::kHft95};
  const double nus[] = {0.0, 0.25, 0.5, -0.73, 1.0, 1.5, 2.0, 3.3, 4.0, 5.5, 12.25, -40.5};
  for (WindowKind kind : kinds) {
    for (size_t n : {4, 7, 64, 1001, 4096}) {
      const Window w = make(kind, n);
      for (double nu : nus) {
        EXPECT_NEAR(w.kernel_magnitude(nu), direct_kernel(w, nu), 2e-6)
            << window_name(w.spec()) << " N=" << n << " nu=" << nu;
      }
    }
  }
}

TEST(WindowKernelTest, KaiserExactSumEqualsDirectDtft) {
  for (double beta : {0.0, 6.0, 14.0}) {
    for (size_t n : {5, 256, 4096}) {
      const Window w = make(WindowKind::kKaiser, n, beta);
      for (double nu : {0.0, 0.3, 0.5, 1.0, 2.7, -3.1, 9.5}) {
        EXPECT_NEAR(w.kernel_magnitude(nu), direct_kernel(w, nu), 1e-9)
            << "beta " << beta << " N=" << n << " nu=" << nu;
      }
    }
  }
}

TEST(WindowKernelTest, ExactValuesOfHannAndRectangular) {
  constexpr size_t kN = 4096;
  const Window hann = make(WindowKind::kHann, kN);
  // Hann: W(1) = (a1/2)·N·e^{jπ/N} against W(0) = a0·N, so K(1) = 0.5 exactly, and the
  // first null is at 2 bins (DFT algebra).
  EXPECT_NEAR(hann.kernel_magnitude(1.0), 0.5, 1e-12);
  EXPECT_NEAR(hann.kernel_magnitude(2.0), 0.0, 1e-12);
  // Half-bin values: 8/(3π) for Hann and 2/π for rect in the large-N limit (Harris 1978
  // scallop losses 1.42 and 3.92 dB; REFERENCES.md, exact forms); finite N differs by O(1/N²).
  EXPECT_NEAR(hann.kernel_magnitude(0.5), 8.0 / (3.0 * kPi), 1e-6);
  const Window rect = make(WindowKind::kRectangular, kN);
  EXPECT_NEAR(rect.kernel_magnitude(0.5), 2.0 / kPi, 1e-6);
  EXPECT_NEAR(rect.kernel_magnitude(1.0), 0.0, 1e-12);
}

TEST(WindowKernelTest, HalfBinValueAgreesWithTheWindowScallopLoss) {
  // Window::create computes the scallop loss by its own DTFT at half a bin.
  const WindowSpec specs[] = {{WindowKind::kRectangular, 0}, {WindowKind::kHann, 0},
                              {WindowKind::kBlackmanHarris, 0}, {WindowKind::kFlatTop, 0},
                              {WindowKind::kKaiser, 8.0}};
  for (const auto& spec : specs) {
    const Window w = *Window::create(spec, 2048);
    EXPECT_NEAR(-20.0 * std::log10(w.kernel_magnitude(0.5)), w.scallop_loss_db(), 1e-5)
        << window_name(spec);
  }
}

TEST(WindowKernelTest, KaiserFollowsTheContinuousKaiserTransform) {
  // Continuous Kaiser window transform (from memory; Kaiser & Schafer, IEEE Trans. ASSP
  // 28(1), 1980): W(ν) ∝ sinh(√(β² − (πν)²))/√(β² − (πν)²), with sin/√ beyond πν = β.
  // The sampled window differs by its edge sample and aliasing, O(1/(N·I0(β))).
  constexpr double kBeta = 8.0;
  const Window w = make(WindowKind::kKaiser, 4096, kBeta);
  auto continuous = [](double nu) {
    const double d = kBeta * kBeta - kPi * kPi * nu * nu;
    const double v = d > 0 ? std::sinh(std::sqrt(d)) / std::sqrt(d)
                           : (d < 0 ? std::sin(std::sqrt(-d)) / std::sqrt(-d) : 1.0);
    return std::fabs(v) / (std::sinh(kBeta) / kBeta);
  };
  for (double nu : {0.25, 0.5, 1.0, 1.5, 2.0, 2.5}) {
    EXPECT_NEAR(w.kernel_magnitude(nu), continuous(nu), 1e-5) << "nu=" << nu;
  }
}

}  // namespace
}  // namespace tonewarden::dsp
