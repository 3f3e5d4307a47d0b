// Focus: SpectrumAnalyzer sizes, bin spacing and resolution, tone amplitude on and off bin,
// mean removal, a prime block, and rejection of bad configs and mismatched buffers.
#include "tonewarden/dsp/spectrum_analyzer.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <vector>

#include "support/signals.h"

namespace tonewarden::dsp {
namespace {

using testing::make_sine;

SpectrumAnalyzer make(SpectrumConfig c) {
  auto a = SpectrumAnalyzer::create(c);
  EXPECT_TRUE(a.ok()) << (a.ok() ? "" : a.error().message);
  return std::move(a).value();
}

TEST(SpectrumAnalyzerTest, SizesAndBinSpacing) {
  SpectrumConfig c;
  c.sample_rate_hz = 48000;
  c.block = 1000;
  c.pad_factor = 3;
  auto a = make(c);
  EXPECT_EQ(a.fft_length(), 3000u);  // 3000 = 2^3·3·5^3 is already smooth
  EXPECT_EQ(a.num_bins(), 1501u);
  EXPECT_DOUBLE_EQ(a.bin_hz(), 16.0);
  EXPECT_NEAR(a.resolution_hz(), 1.5 * 48.0, 1e-9);  // Hann ENBW 1.5 bins of fs/block
  EXPECT_DOUBLE_EQ(a.enbw_hz(), a.resolution_hz());
}

TEST(SpectrumAnalyzerTest, OnBinToneReadsHalfItsSquaredPeak) {
  // Peak 2.0 sine on bin 100: P = A²/2 = 2 for any window (coherent gain is divided out).
  for (const char* name : {"rect", "hann", "blackman-harris", "flattop", "kaiser:9"}) {
    SpectrumConfig c;
    c.sample_rate_hz = 8192;
    c.block = 1024;
    c.window = *parse_window_spec(name);
    auto a = make(c);
    const auto x = make_sine(1024, 8192, 100 * 8.0, 2.0);
    std::vector<float> p(a.num_bins());
    ASSERT_TRUE(a.process(x, p));
    EXPECT_NEAR(p[100], 2.0, 2e-5) << name;
  }
}

TEST(SpectrumAnalyzerTest, OffBinToneReadsWithinScallopLoss) {
  // Half a bin off: Hann loses its scallop loss, 1.4236 dB (-20·log10(8/(3π)), exact).
  SpectrumConfig c;
  c.sample_rate_hz = 1024;
  c.block = 1024;
  auto a = make(c);
  const auto x = make_sine(1024, 1024, 100.5, 1.0);
  std::vector<float> p(a.num_bins());
  ASSERT_TRUE(a.process(x, p));
  const float peak = std::max(p[100], p[101]);
  EXPECT_NEAR(10 * std::log10(peak / 0.5), -a.window().scallop_loss_db(), 0.01);
}

TEST(SpectrumAnalyzerTest, MeanRemovalClearsDc) {
  SpectrumConfig c;
  c.block = 256;
  c.sample_rate_hz = 256;
  auto x = make_sine(256, 256, 10, 1.0);
  for (float& v : x) v += 3.0f;
  std::vector<float> p(129);
  auto with = make(c);
  ASSERT_TRUE(with.process(x, p));
  EXPECT_LT(p[0], 1e-10);
  c.remove_mean = false;
  auto without = make(c);
  ASSERT_TRUE(without.process(x, p));
  EXPECT_NEAR(p[0], 9.0, 1e-4);  // DC of 3 reads 3² (not doubled)
}

TEST(SpectrumAnalyzerTest, PrimeBlockUsesSmoothFftLength) {
  // 2^19 - 1 is prime; the FFT runs at 2^19 and a tone still reads its power.
  SpectrumConfig c;
  c.sample_rate_hz = 524287;
  c.block = 524287;
  c.planning = FftPlanning::kEstimate;
  auto a = make(c);
  EXPECT_EQ(a.fft_length(), 524288u);
  const auto x = make_sine(524287, 524287, 1000.0, 1.0);
  std::vector<float> p(a.num_bins());
  ASSERT_TRUE(a.process(x, p));
  const auto it = std::max_element(p.begin(), p.end());
  EXPECT_NEAR(static_cast<double>(it - p.begin()) * a.bin_hz(), 1000.0, a.bin_hz());
  // Between on-bin (0.5) and the worst scallop (Hann 1.42 dB down).
  EXPECT_GT(*it, 0.5 * std::pow(10.0, -1.43 / 10));
  EXPECT_LT(*it, 0.5001);
}

TEST(SpectrumAnalyzerTest, RejectsMismatchedBuffersAndCounts) {
  SpectrumConfig c;
  c.block = 64;
  auto a = make(c);
  std::vector<float> x(63), p(a.num_bins()), x_ok(64), p_bad(3);
  EXPECT_FALSE(a.process(x, p));
  EXPECT_FALSE(a.process(x_ok, p_bad));
  EXPECT_TRUE(a.process(x_ok, p));
  EXPECT_EQ(a.num_rejected(), 2u);
  EXPECT_EQ(a.num_frames(), 1u);
}

TEST(SpectrumAnalyzerTest, RejectsBadConfig) {
  SpectrumConfig c;
  c.sample_rate_hz = 0;
  auto r = SpectrumAnalyzer::create(c);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("sample rate"), std::string::npos);
  c = SpectrumConfig{};
  c.block = 1;
  EXPECT_FALSE(SpectrumAnalyzer::create(c).ok());
  c = SpectrumConfig{};
  c.pad_factor = 0;
  r = SpectrumAnalyzer::create(c);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("pad"), std::string::npos);
  c = SpectrumConfig{};
  c.block = size_t{1} << 27;
  c.pad_factor = 4;
  r = SpectrumAnalyzer::create(c);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("largest FFT"), std::string::npos);
  c = SpectrumConfig{};
  c.window = WindowSpec{WindowKind::kKaiser, 99.0};
  r = SpectrumAnalyzer::create(c);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("spectrum window"), std::string::npos) << r.error().message;
}

}  // namespace
}  // namespace tonewarden::dsp
