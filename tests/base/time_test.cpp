// Focus: RFC 3339 and unix-millisecond parsing and formatting, and sample-count timestamps.
#include "tonewarden/base/time.h"

#include <gtest/gtest.h>

#include <cstdint>

namespace tonewarden::base {
namespace {

TEST(TimeTest, FormatsKnownInstant) {
  // 1e12 ms after the epoch is 2001-09-09T01:46:40Z (a well-known unix time milestone).
  EXPECT_EQ(format_rfc3339(WallTimeMs{1'000'000'000'000}), "2001-09-09T01:46:40.000Z");
}

TEST(TimeTest, ParsesRfc3339WithOffsetAndFraction) {
  WallTimeMs t;
  ASSERT_TRUE(parse_time("2001-09-09T03:46:40.250+02:00", &t));
  EXPECT_EQ(t.unix_ms, 1'000'000'000'250);
  ASSERT_TRUE(parse_time("2001-09-09T01:46:40Z", &t));
  EXPECT_EQ(t.unix_ms, 1'000'000'000'000);
}

TEST(TimeTest, ParsesUnixMilliseconds) {
  WallTimeMs t;
  ASSERT_TRUE(parse_time("1700000000123", &t));
  EXPECT_EQ(t.unix_ms, 1700000000123);
  // The int64 limits parse; one past them is refused, not thrown.
  ASSERT_TRUE(parse_time("9223372036854775807", &t));
  EXPECT_EQ(t.unix_ms, INT64_MAX);
  ASSERT_TRUE(parse_time("-9223372036854775808", &t));
  EXPECT_EQ(t.unix_ms, INT64_MIN);
  EXPECT_FALSE(parse_time("9223372036854775808", &t));
  EXPECT_FALSE(parse_time("99999999999999999999999", &t));
  EXPECT_FALSE(parse_time("-", &t));
}

TEST(TimeTest, RejectsMalformedTimes) {
  WallTimeMs t;
  for (const char* bad : {"", "yesterday", "2026-13-01T00:00:00Z", "2026-01-01T00:00:00",
                          "2026-01-01 00:00:00Z", "12ab", "2026-01-01T00:00:00Zjunk"}) {
    EXPECT_FALSE(parse_time(bad, &t)) << bad;
  }
}

TEST(TimeTest, TimestampsFollowSampleCount) {
  const WallTimeMs start{1'000'000};
  EXPECT_EQ(wall_after_samples(start, 48000, 48000.0).unix_ms, 1'001'000);
  EXPECT_EQ(wall_after_samples(start, 24, 48000.0).unix_ms, 1'000'000);  // 0.5 ms floors
}

}  // namespace
}  // namespace tonewarden::base
