// Focus: linear, exponential and peak-hold averaging of power spectra, and parsing of the
// average spec with clear errors.
#include "tonewarden/dsp/averager.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace tonewarden::dsp {
namespace {

SpectrumAverager make(AverageConfig c) {
  auto a = SpectrumAverager::create(c);
  EXPECT_TRUE(a.ok()) << (a.ok() ? "" : a.error().message);
  return std::move(a).value();
}

TEST(AveragerTest, LinearAveragesNFramesThenRestarts) {
  AverageConfig c;
  c.mode = AverageMode::kLinear;
  c.linear_frames = 3;
  c.num_bins = 2;
  auto avg = make(c);
  std::vector<float> a{1, 10}, b{2, 20}, d{6, 60};
  EXPECT_FALSE(avg.push(a));
  EXPECT_FALSE(avg.push(b));
  ASSERT_TRUE(avg.push(d));
  // Mean of power: (1+2+6)/3 = 3, (10+20+60)/3 = 30.
  EXPECT_FLOAT_EQ(avg.result()[0], 3.0f);
  EXPECT_FLOAT_EQ(avg.result()[1], 30.0f);
  EXPECT_EQ(avg.frames_in_result(), 3u);
  // Restart: the next three frames average on their own.
  std::vector<float> z{0, 0};
  EXPECT_FALSE(avg.push(z));
  EXPECT_FALSE(avg.push(z));
  ASSERT_TRUE(avg.push(z));
  EXPECT_FLOAT_EQ(avg.result()[0], 0.0f);
}

TEST(AveragerTest, ExponentialFollowsFirstOrderStep) {
  // alpha = 1 - exp(-T/tau); after a step from 0 to 1 the output after k more frames is
  // 1 - (1-alpha)^k (first-order low-pass, discrete form).
  AverageConfig c;
  c.mode = AverageMode::kExponential;
  c.time_constant_s = 1.0;
  c.frame_period_s = 0.1;
  c.num_bins = 1;
  auto avg = make(c);
  std::vector<float> zero{0}, one{1};
  ASSERT_TRUE(avg.push(zero));  // seeds the filter at 0
  const double alpha = 1.0 - std::exp(-0.1);
  for (int k = 1; k <= 10; ++k) {
    ASSERT_TRUE(avg.push(one));
    EXPECT_NEAR(avg.result()[0], 1.0 - std::pow(1.0 - alpha, k), 1e-6) << k;
  }
  // After tau (10 frames of 0.1 s) a step has reached 1 - e^-1 = 63.2 %.
  EXPECT_NEAR(avg.result()[0], 1.0 - std::exp(-1.0), 1e-6);
  EXPECT_EQ(avg.frames_in_result(), 11u);
}

TEST(AveragerTest, ExponentialSeedsWithFirstFrame) {
  AverageConfig c;
  c.mode = AverageMode::kExponential;
  c.num_bins = 1;
  auto avg = make(c);
  std::vector<float> p{4};
  ASSERT_TRUE(avg.push(p));
  EXPECT_FLOAT_EQ(avg.result()[0], 4.0f);
}

TEST(AveragerTest, PeakHoldKeepsMaximumUntilReset) {
  AverageConfig c;
  c.mode = AverageMode::kPeakHold;
  c.num_bins = 2;
  auto avg = make(c);
  std::vector<float> a{1, 5}, b{3, 2};
  ASSERT_TRUE(avg.push(a));
  ASSERT_TRUE(avg.push(b));
  EXPECT_FLOAT_EQ(avg.result()[0], 3.0f);
  EXPECT_FLOAT_EQ(avg.result()[1], 5.0f);
  avg.reset();
  EXPECT_EQ(avg.frames_in_result(), 0u);
  ASSERT_TRUE(avg.push(b));
  EXPECT_FLOAT_EQ(avg.result()[1], 2.0f);
}

TEST(AveragerTest, WrongSizeIsRefused) {
  AverageConfig c;
  c.num_bins = 3;
  auto avg = make(c);
  std::vector<float> p{1, 2};
  EXPECT_FALSE(avg.push(p));
  EXPECT_EQ(avg.frames_in_result(), 0u);
}

TEST(AveragerTest, ParsesValidSpecs) {
  auto l = parse_average_spec("linear:16");
  ASSERT_TRUE(l.ok());
  EXPECT_EQ(l->mode, AverageMode::kLinear);
  EXPECT_EQ(l->linear_frames, 16u);
  auto e = parse_average_spec("exp:2.5");
  ASSERT_TRUE(e.ok());
  EXPECT_EQ(e->mode, AverageMode::kExponential);
  EXPECT_DOUBLE_EQ(e->time_constant_s, 2.5);
  auto p = parse_average_spec("peak");
  ASSERT_TRUE(p.ok());
  EXPECT_EQ(p->mode, AverageMode::kPeakHold);
}

TEST(AveragerTest, RejectsBadSpecsWithContext) {
  for (const char* bad : {"", "mean", "linear", "linear:", "linear:0", "linear:-3", "linear:2.5",
                          "linear:x", "exp:", "exp:0", "exp:-1", "exp:abc", "exp:inf", "peak:3"}) {
    auto r = parse_average_spec(bad);
    ASSERT_FALSE(r.ok()) << bad;
    EXPECT_EQ(r.error().code, base::ErrorCode::kInvalidArgument);
    EXPECT_NE(r.error().message.find("'" + std::string(bad) + "'"), std::string::npos)
        << r.error().message;
  }
  auto r = parse_average_spec("median");
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("linear:N, exp:SECONDS or peak"), std::string::npos);
}

TEST(AveragerTest, CreateRejectsBadConfig) {
  AverageConfig c;
  c.num_bins = 0;
  EXPECT_FALSE(SpectrumAverager::create(c).ok());
  c.num_bins = 4;
  c.mode = AverageMode::kExponential;
  c.frame_period_s = 0;
  auto r = SpectrumAverager::create(c);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("frame period"), std::string::npos);
  c.mode = AverageMode::kLinear;
  c.linear_frames = 0;
  EXPECT_FALSE(SpectrumAverager::create(c).ok());
}

}  // namespace
}  // namespace tonewarden::dsp
