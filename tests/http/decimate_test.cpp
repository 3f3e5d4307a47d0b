// Focus: peak-preserving spectrum decimation keeps each bucket's maximum at its own bin.
#include "tonewarden/http/decimate.h"

#include <gtest/gtest.h>

#include <cmath>
#include <vector>

namespace tonewarden::http {
namespace {

TEST(DecimateTest, KeepsMaximumPerBucketAtItsFrequency) {
  // 12 bins into 4 buckets of 3 bins: [1 3 2] [0 4 9] [1 2 5] [6 7 0].
  // Known answer by hand: maxima 3, 9, 5, 7 at bins 1, 5, 8, 10 -> 0.5, 2.5, 4.0, 5.0 Hz.
  const std::vector<float> m = {1, 3, 2, 0, 4, 9, 1, 2, 5, 6, 7, 0};
  const auto d = decimate_max(m, 0.5, 4);
  ASSERT_EQ(d.magnitude.size(), 4u);
  EXPECT_EQ(d.magnitude, (std::vector<float>{3, 9, 5, 7}));
  EXPECT_EQ(d.frequency_hz, (std::vector<double>{0.5, 2.5, 4.0, 5.0}));
}

TEST(DecimateTest, UnevenBucketsCoverEveryBinOnce) {
  // 10 bins into 3 buckets: bounds floor(i*10/3) = 0, 3, 6, 10 -> sizes 3, 3, 4.
  // A single tall bin at the last index (9) must survive in the last bucket.
  std::vector<float> m(10, 1.0f);
  m[9] = 100.0f;
  m[3] = 50.0f;
  const auto d = decimate_max(m, 1.0, 3);
  EXPECT_EQ(d.magnitude, (std::vector<float>{1, 50, 100}));
  EXPECT_EQ(d.frequency_hz, (std::vector<double>{0, 3, 9}));
}

TEST(DecimateTest, MorePointsThanBinsReturnsEveryBin) {
  const std::vector<float> m = {4, 2, 7};
  const auto d = decimate_max(m, 10.0, 100);
  EXPECT_EQ(d.magnitude, m);
  EXPECT_EQ(d.frequency_hz, (std::vector<double>{0, 10, 20}));
  EXPECT_TRUE(decimate_max(m, 10.0, 0).magnitude.empty());
  EXPECT_TRUE(decimate_max(std::vector<float>{}, 10.0, 8).magnitude.empty());
}

TEST(DecimateTest, NanBinsAreIgnored) {
  const float nan = std::nanf("");
  const std::vector<float> m = {nan, 2, nan, nan};
  const auto d = decimate_max(m, 1.0, 2);
  EXPECT_EQ(d.magnitude[0], 2.0f);
  EXPECT_EQ(d.frequency_hz[0], 1.0);
  EXPECT_TRUE(std::isnan(d.magnitude[1]));  // all-NaN bucket -> NaN at its first bin
  EXPECT_EQ(d.frequency_hz[1], 2.0);
}

TEST(DecimateTest, PeakSurvivesHeavyDecimation) {
  // A 1-bin tone of height 1 over a floor of 1e-3 in 65536 bins, reduced to 64 points:
  // the tone's bucket must read exactly 1 at exactly the tone's frequency.
  std::vector<float> m(65536, 1e-3f);
  m[12345] = 1.0f;
  const auto d = decimate_max(m, 0.25, 64);
  const size_t bucket = 12345 * 64 / 65536;  // 12
  EXPECT_EQ(d.magnitude[bucket], 1.0f);
  EXPECT_EQ(d.frequency_hz[bucket], 12345 * 0.25);
}

}  // namespace
}  // namespace tonewarden::http
