// Focus: zero padding at the end samples the DTFT; padding at the front only shifts phase.
//
// Sources: DFT/DTFT definitions (X_M[k] = X(e^{j2πk/M}) for x padded to M; the shift theorem
// gives e^{-jωd} for a delay of d samples). The numeric example x = [1,2,3,4] padded to 7
// was computed with numpy 1.24 (numpy.fft.fft([1,2,3,4], 7)) and is listed in the project's
// reference notes.
#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <numbers>
#include <vector>

#include "tonewarden/dsp/fft.h"

namespace tonewarden::dsp {
namespace {

using cd = std::complex<double>;

TEST(PaddingIdentityTest, EndPaddingToSevenMatchesPublishedDtftSamples) {
  auto fft = RealFft::create(7, FftPlanning::kEstimate);
  ASSERT_TRUE(fft.ok());
  const float x[] = {1, 2, 3, 4};
  std::fill(fft->input().begin(), fft->input().end(), 0.0f);
  std::copy(std::begin(x), std::end(x), fft->input().begin());
  fft->execute();
  // numpy.fft.fft([1,2,3,4], 7), bins 0..3 (numpy 1.24).
  const cd expected[] = {{10.0, 0.0},
                         {-2.024459, -6.223982},
                         {0.346011, 2.479121},
                         {0.178448, -2.421985}};
  ASSERT_EQ(fft->output().size(), 4u);
  for (size_t k = 0; k < 4; ++k) {
    EXPECT_NEAR(fft->output()[k].real(), expected[k].real(), 2e-6) << k;
    EXPECT_NEAR(fft->output()[k].imag(), expected[k].imag(), 2e-6) << k;
  }
  // The full transform holds their conjugates in reverse order (real input symmetry).
  auto full = ComplexFft::create(7, ComplexFft::Direction::kForward, FftPlanning::kEstimate);
  ASSERT_TRUE(full.ok());
  for (size_t n = 0; n < 7; ++n) full->input()[n] = {n < 4 ? x[n] : 0.0f, 0.0f};
  full->execute();
  for (size_t k = 1; k < 4; ++k) {
    EXPECT_NEAR(full->output()[7 - k].real(), expected[k].real(), 2e-6) << k;
    EXPECT_NEAR(full->output()[7 - k].imag(), -expected[k].imag(), 2e-6) << k;
  }
  // And each bin is the DTFT Σ x[n] e^{-jωn} at ω = 2πk/7 (definition).
  for (size_t k = 0; k < 4; ++k) {
    cd dtft = 0;
    for (size_t n = 0; n < 4; ++n) dtft += double(x[n]) * std::polar(1.0, -2 * std::numbers::pi * k * n / 7.0);
    EXPECT_NEAR(std::abs(cd(fft->output()[k]) - dtft), 0.0, 2e-6) << k;
  }
}

TEST(PaddingIdentityTest, FrontPaddingKeepsMagnitudeAndShiftsPhase) {
  // Shift theorem: delaying by d multiplies bin k by e^{-jωd}, ω = 2πk/M.
  constexpr size_t kM = 16;
  constexpr size_t kD = 3;
  const float x[] = {0.5f, -1.0f, 2.0f, 0.25f, 1.5f};
  auto end_fft = RealFft::create(kM, FftPlanning::kEstimate);
  auto front_fft = RealFft::create(kM, FftPlanning::kEstimate);
  ASSERT_TRUE(end_fft.ok() && front_fft.ok());
  std::copy(std::begin(x), std::end(x), end_fft->input().begin());
  std::copy(std::begin(x), std::end(x), front_fft->input().begin() + kD);
  end_fft->execute();
  front_fft->execute();
  for (size_t k = 0; k <= kM / 2; ++k) {
    const cd a = end_fft->output()[k];
    const cd b = front_fft->output()[k];
    EXPECT_NEAR(std::abs(b), std::abs(a), 1e-5) << k;
    const double omega = 2 * std::numbers::pi * static_cast<double>(k) / kM;
    const cd shifted = a * std::polar(1.0, -omega * static_cast<double>(kD));
    EXPECT_NEAR(std::abs(b - shifted), 0.0, 1e-5) << k;
  }
}

}  // namespace
}  // namespace tonewarden::dsp
