// Focus: SpscRing keeps order and loses nothing under one producer and one consumer thread.
#include "tonewarden/base/spsc_ring.h"

#include <gtest/gtest.h>

#include <cstdint>
#include <thread>
#include <vector>

namespace tonewarden::base {
namespace {

TEST(SpscRingTest, RejectsPushThatDoesNotFitAndKeepsOldData) {
  SpscRing<int> ring(4);
  const int a[] = {1, 2, 3};
  EXPECT_TRUE(ring.push(a));
  EXPECT_FALSE(ring.push(a));  // 3 + 3 > 4: reject-newest policy
  EXPECT_EQ(ring.size(), 3u);
  int out[8];
  ASSERT_EQ(ring.pop(out), 3u);
  EXPECT_EQ(out[0], 1);
  EXPECT_EQ(out[2], 3);
}

TEST(SpscRingTest, WrapsAroundTheEnd) {
  SpscRing<int> ring(5);
  int out[5];
  for (int round = 0; round < 20; ++round) {
    const int a[] = {round, round + 1, round + 2};
    ASSERT_TRUE(ring.push(a));
    ASSERT_EQ(ring.pop(out), 3u);
    EXPECT_EQ(out[0], round);
    EXPECT_EQ(out[2], round + 2);
  }
}

TEST(SpscRingTest, TwoThreadsTransferASequenceInOrderWithoutLoss) {
  constexpr uint64_t kCount = 2'000'000;
  SpscRing<uint64_t> ring(1024);
  uint64_t rejected = 0;
  std::thread producer([&] {
    uint64_t next = 0;
    uint64_t chunk[37];
    while (next < kCount) {
      const uint64_t n = std::min<uint64_t>(37, kCount - next);
      for (uint64_t i = 0; i < n; ++i) chunk[i] = next + i;
      if (ring.push(std::span<const uint64_t>(chunk, n))) {
        next += n;
      } else {
        ++rejected;
        std::this_thread::yield();
      }
    }
  });
  uint64_t expected = 0;
  bool in_order = true;
  std::vector<uint64_t> out(53);
  while (expected < kCount) {
    const size_t n = ring.pop(out);
    for (size_t i = 0; i < n; ++i) in_order &= (out[i] == expected++);
    if (n == 0) std::this_thread::yield();
  }
  producer.join();
  EXPECT_TRUE(in_order);
  EXPECT_EQ(expected, kCount);
  EXPECT_EQ(ring.size(), 0u);
}

}  // namespace
}  // namespace tonewarden::base
