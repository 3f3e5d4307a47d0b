// Focus: fast_length returns the smallest 7-smooth length >= n, checked against known values
// and a brute-force search, and stays quick for very large n.
#include "tonewarden/dsp/fast_length.h"

#include <gtest/gtest.h>

#include <cstdint>

namespace tonewarden::dsp {
namespace {

bool is_seven_smooth(size_t m) {
  for (size_t p : {2u, 3u, 5u, 7u}) {
    while (m % p == 0) m /= p;
  }
  return m == 1;
}

TEST(FastLengthTest, KnownValues) {
  // Expected values by hand factorisation.
  EXPECT_EQ(fast_length(0), 1u);
  EXPECT_EQ(fast_length(1), 1u);
  EXPECT_EQ(fast_length(2), 2u);
  EXPECT_EQ(fast_length(11), 12u);     // 2^2·3
  EXPECT_EQ(fast_length(13), 14u);     // 2·7
  EXPECT_EQ(fast_length(17), 18u);     // 2·3^2
  EXPECT_EQ(fast_length(97), 98u);     // 2·7^2
  EXPECT_EQ(fast_length(1000), 1000u); // 2^3·5^3
  EXPECT_EQ(fast_length(1001), 1008u); // 2^4·3^2·7
  EXPECT_EQ(fast_length(8192), 8192u);
  EXPECT_EQ(fast_length(8193), 8232u); // 2^3·3·7^3
  // 2^19 - 1 is prime; 524288 = 2^19 is the next 7-smooth number.
  EXPECT_EQ(fast_length(524287), 524288u);
  EXPECT_EQ(fast_length(540000), 540000u);  // 2^5·3^3·5^4
}

TEST(FastLengthTest, MatchesBruteForceUpTo5000) {
  for (size_t n = 1; n <= 5000; ++n) {
    size_t expected = n;
    while (!is_seven_smooth(expected)) ++expected;
    ASSERT_EQ(fast_length(n), expected) << "n=" << n;
  }
}

TEST(FastLengthTest, LargeLengthsAreSmoothAndTight) {
  for (size_t n : {size_t{9'999'991}, size_t{10'000'019}, size_t{123'456'789},
                   size_t{1} << 40, (size_t{1} << 40) + 1}) {
    const size_t m = fast_length(n);
    EXPECT_GE(m, n);
    EXPECT_TRUE(is_seven_smooth(m)) << m;
    // Gaps between 7-smooth numbers near 1e7 are far below 1 %.
    EXPECT_LT(static_cast<double>(m - n), 0.01 * static_cast<double>(n)) << n;
  }
}

TEST(FastLengthTest, HugeLengthDoesNotOverflow) {
  const size_t n = (size_t{1} << 63) + 1;
  EXPECT_EQ(fast_length(n), n);  // nothing smooth fits in size_t: returned unchanged
  EXPECT_EQ(fast_length(size_t{1} << 63), size_t{1} << 63);
}

}  // namespace
}  // namespace tonewarden::dsp
