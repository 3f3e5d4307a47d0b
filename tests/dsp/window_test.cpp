// Focus: window names parse and print back, bad names and lengths give clear errors, and every
// window is periodic, peak-normalised and consistent with its cosine terms.
#include "tonewarden/dsp/window.h"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>

namespace tonewarden::dsp {
namespace {

const char* const kAllNames[] = {"rect",  "hann",  "hamming",   "blackman", "blackman-harris",
                                 "flattop", "hft95", "kaiser:8", "kaiser:0.5"};

TEST(WindowTest, NamesRoundTrip) {
  for (const char* name : kAllNames) {
    auto spec = parse_window_spec(name);
    ASSERT_TRUE(spec.ok()) << name;
    EXPECT_EQ(window_name(*spec), name);
  }
  auto k = parse_window_spec("kaiser:8.6");
  ASSERT_TRUE(k.ok());
  EXPECT_EQ(k->kind, WindowKind::kKaiser);
  EXPECT_DOUBLE_EQ(k->kaiser_beta, 8.6);
}

TEST(WindowTest, UnknownNameListsValidNames) {
  auto spec = parse_window_spec("hanning");
  ASSERT_FALSE(spec.ok());
  EXPECT_EQ(spec.error().code, base::ErrorCode::kInvalidArgument);
  const std::string& msg = spec.error().message;
  EXPECT_NE(msg.find("'hanning'"), std::string::npos) << msg;
  EXPECT_NE(msg.find("blackman-harris"), std::string::npos) << msg;
  EXPECT_NE(msg.find("kaiser:BETA"), std::string::npos) << msg;
  EXPECT_EQ(msg.find('\n'), std::string::npos);
}

TEST(WindowTest, BadKaiserBetaIsRejected) {
  for (const char* bad : {"kaiser", "kaiser:", "kaiser:x", "kaiser:8x", "kaiser:-1", "kaiser:51",
                          "kaiser:nan", "kaiser:inf"}) {
    auto spec = parse_window_spec(bad);
    EXPECT_FALSE(spec.ok()) << bad;
    if (!spec.ok()) {
      EXPECT_NE(spec.error().message.find(bad), std::string::npos) << spec.error().message;
    }
  }
  EXPECT_FALSE(Window::create(WindowSpec{WindowKind::kKaiser, -2.0}, 64).ok());
}

TEST(WindowTest, RejectsTooShortLength) {
  auto w = Window::create(WindowSpec{WindowKind::kHann}, 1);
  ASSERT_FALSE(w.ok());
  EXPECT_NE(w.error().message.find("length 1"), std::string::npos) << w.error().message;
}

TEST(WindowTest, PeriodicSymmetricAndPeakOne) {
  // Periodic (DFT-even) form: w[n] == w[N-n], and the centre sample of an even N is the peak.
  for (const char* name : kAllNames) {
    auto w = Window::create(*parse_window_spec(name), 64);
    ASSERT_TRUE(w.ok());
    const auto c = w->coefficients();
    ASSERT_EQ(c.size(), 64u);
    for (size_t n = 1; n < 64; ++n) EXPECT_NEAR(c[n], c[64 - n], 1e-6) << name << " n=" << n;
    EXPECT_NEAR(c[32], 1.0, 1e-6) << name;
    for (float v : c) EXPECT_LE(v, 1.0f + 1e-6f) << name;
  }
}

TEST(WindowTest, HannSamplesMatchDefinition) {
  // Periodic Hann: 0.5 - 0.5 cos(2πn/N).
  auto w = Window::create(WindowSpec{WindowKind::kHann}, 10);
  ASSERT_TRUE(w.ok());
  for (size_t n = 0; n < 10; ++n) {
    EXPECT_NEAR(w->coefficients()[n], 0.5 - 0.5 * std::cos(2 * std::numbers::pi * n / 10.0), 1e-7);
  }
  EXPECT_DOUBLE_EQ(w->sum(), 5.0);
  EXPECT_NEAR(w->sum_of_squares(), 3.75, 1e-12);  // N·(a0² + a1²/2) = 10·0.375
}

TEST(WindowTest, KaiserEndpointsAndEmptyCosineTerms) {
  // w[0] = 1/I0(beta) for the periodic Kaiser window (Kaiser window definition).
  auto w = Window::create(WindowSpec{WindowKind::kKaiser, 6.0}, 100);
  ASSERT_TRUE(w.ok());
  EXPECT_NEAR(w->coefficients()[0], 1.0 / std::cyl_bessel_i(0.0, 6.0), 1e-7);
  EXPECT_TRUE(w->cosine_terms().empty());
  // Kaiser with beta 0 is the rectangular window.
  auto r = Window::create(WindowSpec{WindowKind::kKaiser, 0.0}, 16);
  ASSERT_TRUE(r.ok());
  EXPECT_NEAR(r->enbw_bins(), 1.0, 1e-12);
}

TEST(WindowTest, CosineTermsSumToOneAndGiveCoherentGain) {
  // Normalised to peak 1: Σ a_k = 1, and CG = a0 exactly for a periodic cosine sum.
  for (const char* name : {"rect", "hann", "hamming", "blackman", "blackman-harris", "flattop", "hft95"}) {
    auto w = Window::create(*parse_window_spec(name), 1000);
    ASSERT_TRUE(w.ok());
    double s = 0;
    for (double a : w->cosine_terms()) s += a;
    EXPECT_NEAR(s, 1.0, 1e-12) << name;
    EXPECT_NEAR(w->coherent_gain(), w->cosine_terms()[0], 1e-12) << name;
  }
}

TEST(WindowTest, OddLengthIsSupported) {
  auto w = Window::create(WindowSpec{WindowKind::kBlackmanHarris}, 524287);
  ASSERT_TRUE(w.ok());
  EXPECT_NEAR(w->enbw_bins(), 2.0044, 1e-4);  // Harris 1978 Table 1 [from memory]; see reference test
  EXPECT_GT(w->scallop_loss_db(), 0.0);
}

}  // namespace
}  // namespace tonewarden::dsp
