// Focus: Pacer keeps real-time sources on the sample clock, never sleeps when fast, and
// wakes at once on stop().
#include "tonewarden/source/pacer.h"

#include <gtest/gtest.h>

#include <chrono>
#include <thread>

namespace tonewarden::source {
namespace {

using std::chrono::milliseconds;

TEST(PacerTest, ParsesPaceNames) {
  EXPECT_EQ(parse_pace("realtime"), Pace::kRealTime);
  EXPECT_EQ(parse_pace("fast"), Pace::kFast);
  EXPECT_FALSE(parse_pace("slow").has_value());
  EXPECT_STREQ(to_string(Pace::kRealTime), "realtime");
}

TEST(PacerTest, FastPacerNeverSleeps) {
  Pacer pacer(Pace::kFast, 48000.0);
  pacer.start();
  // Ten minutes of frames are "due" at once for a fast pacer.
  for (int64_t f = 0; f <= 48000 * 600; f += 48000) EXPECT_TRUE(pacer.wait_until_due(f));
  EXPECT_EQ(pacer.num_sleeps(), 0u);
}

TEST(PacerTest, DueTimeFollowsFrameCount) {
  Pacer pacer(Pace::kRealTime, 48000.0);
  const base::MonoTime anchor = base::mono_now();
  pacer.start(anchor);
  // 48000 frames at 48 kHz = exactly 1 s; 1 frame = 20833.33 ns (rounded to 20833).
  EXPECT_EQ(pacer.due_time(48000) - anchor, std::chrono::seconds(1));
  EXPECT_EQ(pacer.due_time(1) - anchor, std::chrono::nanoseconds(20833));
  // A year of frames keeps its precision: 48000 * 86400 * 365 frames = 31536000 s.
  EXPECT_EQ(pacer.due_time(int64_t{48000} * 86400 * 365) - anchor, std::chrono::seconds(31536000));
}

TEST(PacerTest, RealTimeWaitReturnsNoEarlierThanTheDueTime) {
  Pacer pacer(Pace::kRealTime, 1000.0);
  pacer.start();
  // Frame 20 at 1 kHz is due 20 ms after the anchor; a wait never returns before it.
  ASSERT_TRUE(pacer.wait_until_due(20));
  EXPECT_GE(base::mono_now(), pacer.due_time(20));
  EXPECT_EQ(pacer.num_sleeps(), 1u);
  // Already due: no second sleep.
  ASSERT_TRUE(pacer.wait_until_due(5));
  EXPECT_EQ(pacer.num_sleeps(), 1u);
}

TEST(PacerTest, StopWakesALongWait) {
  Pacer pacer(Pace::kRealTime, 48000.0);
  pacer.start();
  std::thread stopper([&] {
    std::this_thread::sleep_for(milliseconds(20));
    pacer.stop();
  });
  // Frame 48000 * 3600 is due in an hour; stop() must end the wait with false.
  EXPECT_FALSE(pacer.wait_until_due(int64_t{48000} * 3600));
  stopper.join();
  EXPECT_TRUE(pacer.stopped());
  EXPECT_FALSE(pacer.wait_until_due(0));
  EXPECT_FALSE(pacer.sleep_for(milliseconds(1)));
}

}  // namespace
}  // namespace tonewarden::source
