// Focus: conversions from the one-sided power spectrum to peak, RMS, power and PSD scales,
// edge-bin handling, scale names, and dB conversion.
#include "tonewarden/dsp/scaling.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace tonewarden::dsp {
namespace {

TEST(ScalingTest, SineOfUnitPeakReadsInEveryScale) {
  // A 1.0 peak sine has RMS² 0.5 in its bin (scipy periodogram 'spectrum' convention).
  const double p = 0.5;
  EXPECT_NEAR(power_to_scale(p, SpectrumScale::kPeak, 1.0, false), 1.0, 1e-12);
  EXPECT_NEAR(power_to_scale(p, SpectrumScale::kRms, 1.0, false), std::sqrt(0.5), 1e-12);
  EXPECT_NEAR(power_to_scale(p, SpectrumScale::kPower, 1.0, false), 0.5, 1e-12);
  // PSD = P / ENBW_hz: Hann at fs 51200, N 8192 has ENBW 1.5·6.25 = 9.375 Hz.
  EXPECT_NEAR(power_to_scale(p, SpectrumScale::kPsd, 9.375, false), 0.0533333, 1e-7);
}

TEST(ScalingTest, EdgeBinPeakEqualsRms) {
  // DC of 2.0 reads P = 4 (not doubled); its peak is its RMS: 2.
  EXPECT_NEAR(power_to_scale(4.0, SpectrumScale::kPeak, 1.0, true), 2.0, 1e-12);
  EXPECT_NEAR(power_to_scale(4.0, SpectrumScale::kRms, 1.0, true), 2.0, 1e-12);
}

TEST(ScalingTest, ConvertSpectrumTreatsDcAndNyquistAsEdges) {
  const std::vector<float> power{4.0f, 0.5f, 0.5f, 4.0f};
  std::vector<float> out(4);
  // Even length 6: bins 0..3, bin 3 is Nyquist.
  convert_power_spectrum(power, SpectrumScale::kPeak, 1.0, out, 6);
  EXPECT_FLOAT_EQ(out[0], 2.0f);
  EXPECT_FLOAT_EQ(out[1], 1.0f);
  EXPECT_FLOAT_EQ(out[3], 2.0f);
  // Odd length 7: bins 0..3, bin 3 is an ordinary doubled bin.
  convert_power_spectrum(power, SpectrumScale::kPeak, 1.0, out, 7);
  EXPECT_FLOAT_EQ(out[3], static_cast<float>(std::sqrt(8.0)));
  // Default: even length 2·(4-1).
  convert_power_spectrum(power, SpectrumScale::kPeak, 1.0, out);
  EXPECT_FLOAT_EQ(out[3], 2.0f);
}

TEST(ScalingTest, NamesRoundTrip) {
  for (auto s : {SpectrumScale::kPeak, SpectrumScale::kRms, SpectrumScale::kPower, SpectrumScale::kPsd}) {
    auto parsed = parse_spectrum_scale(spectrum_scale_name(s));
    ASSERT_TRUE(parsed.has_value());
    EXPECT_EQ(*parsed, s);
  }
  EXPECT_FALSE(parse_spectrum_scale("dB").has_value());
  EXPECT_FALSE(parse_spectrum_scale("").has_value());
  EXPECT_TRUE(is_power_like(SpectrumScale::kPsd));
  EXPECT_FALSE(is_power_like(SpectrumScale::kRms));
}

TEST(ScalingTest, DbUsesTenOrTwentyLog) {
  EXPECT_NEAR(to_db(100.0, 1.0, SpectrumScale::kPower), 20.0, 1e-12);
  EXPECT_NEAR(to_db(100.0, 1.0, SpectrumScale::kRms), 40.0, 1e-12);
  EXPECT_NEAR(to_db(2.0, 1.0, SpectrumScale::kPeak), 6.0206, 1e-4);  // 20·log10(2)
  EXPECT_EQ(to_db(0.0, 1.0, SpectrumScale::kPower), -400.0);
  EXPECT_EQ(to_db(-1.0, 1.0, SpectrumScale::kPower), -400.0);
  EXPECT_EQ(to_db(1.0, 0.0, SpectrumScale::kPower), -400.0);
}

}  // namespace
}  // namespace tonewarden::dsp
