// Focus: Framer frame starts and contents for hop < block (overlap), hop == block, and
// hop > block (skipping), in arbitrary push chunk sizes; bad configs are rejected.
#include "tonewarden/dsp/framer.h"

#include <gtest/gtest.h>

#include <numeric>
#include <vector>

namespace tonewarden::dsp {
namespace {

// Pushes a ramp x[i] = i in chunks of `chunk` and collects every frame's start index,
// checking each frame holds exactly x[start .. start+block).
std::vector<int64_t> run_ramp(size_t block, size_t hop, size_t total, size_t chunk) {
  auto framer = Framer::create(FramerConfig{block, hop});
  EXPECT_TRUE(framer.ok());
  std::vector<float> x(total);
  std::iota(x.begin(), x.end(), 0.0f);
  std::vector<float> frame(block);
  std::vector<int64_t> starts;
  std::span<const float> rest(x);
  while (!rest.empty()) {
    const size_t n = framer->push(rest.first(std::min(chunk, rest.size())));
    rest = rest.subspan(n);
    int64_t start = -1;
    while (framer->next_frame(frame, &start)) {
      for (size_t i = 0; i < block; ++i) {
        EXPECT_EQ(frame[i], static_cast<float>(start + static_cast<int64_t>(i)));
      }
      starts.push_back(start);
    }
  }
  EXPECT_EQ(framer->num_frames(), starts.size());
  return starts;
}

TEST(FramerTest, HalfOverlapStartsEveryHop) {
  // block 8, hop 4, 32 samples: frames start at 0,4,...,24 (floor((32-8)/4)+1 = 7 frames).
  const auto starts = run_ramp(8, 4, 32, 5);
  EXPECT_EQ(starts, (std::vector<int64_t>{0, 4, 8, 12, 16, 20, 24}));
}

TEST(FramerTest, ArbitraryOverlapAndChunking) {
  // block 10, hop 3 (70 % overlap), 40 samples: starts 0,3,...,30.
  for (size_t chunk : {1u, 2u, 7u, 64u}) {
    const auto starts = run_ramp(10, 3, 40, chunk);
    std::vector<int64_t> expected;
    for (int64_t s = 0; s + 10 <= 40; s += 3) expected.push_back(s);
    EXPECT_EQ(starts, expected) << "chunk " << chunk;
  }
}

TEST(FramerTest, NoOverlapWhenHopEqualsBlock) {
  EXPECT_EQ(run_ramp(4, 4, 17, 3), (std::vector<int64_t>{0, 4, 8, 12}));
}

TEST(FramerTest, HopLargerThanBlockSkipsSamples) {
  // block 4, hop 10: frames at 0, 10, 20 (samples 4..9 and 14..19 are dropped).
  for (size_t chunk : {1u, 3u, 100u}) {
    EXPECT_EQ(run_ramp(4, 10, 25, chunk), (std::vector<int64_t>{0, 10, 20})) << chunk;
  }
}

TEST(FramerTest, PushStopsWhenAFrameIsReady) {
  auto framer = Framer::create(FramerConfig{4, 2});
  ASSERT_TRUE(framer.ok());
  std::vector<float> x(10, 1.0f);
  EXPECT_EQ(framer->push(x), 4u);  // fills one block, leaves the rest to the caller
  EXPECT_EQ(framer->push(x), 0u);  // nothing more until the frame is taken
  std::vector<float> frame(4);
  EXPECT_TRUE(framer->next_frame(frame, nullptr));
  EXPECT_FALSE(framer->next_frame(frame, nullptr));
  EXPECT_EQ(framer->push(x), 2u);  // hop 2: two new samples complete the next frame
}

TEST(FramerTest, WrongOutputSizeIsRefused) {
  auto framer = Framer::create(FramerConfig{4, 4});
  ASSERT_TRUE(framer.ok());
  std::vector<float> x(4, 1.0f);
  framer->push(x);
  std::vector<float> small(3);
  EXPECT_FALSE(framer->next_frame(small, nullptr));
  std::vector<float> right(4);
  EXPECT_TRUE(framer->next_frame(right, nullptr));
}

TEST(FramerTest, ResetRestartsIndices) {
  auto framer = Framer::create(FramerConfig{4, 2});
  ASSERT_TRUE(framer.ok());
  std::vector<float> x(6, 0.0f), frame(4);
  int64_t start = -1;
  framer->push(x);
  ASSERT_TRUE(framer->next_frame(frame, &start));
  framer->reset();
  EXPECT_EQ(framer->num_frames(), 0u);
  EXPECT_EQ(framer->push(x), 4u);
  ASSERT_TRUE(framer->next_frame(frame, &start));
  EXPECT_EQ(start, 0);
}

TEST(FramerTest, RejectsBadConfig) {
  auto a = Framer::create(FramerConfig{1, 1});
  ASSERT_FALSE(a.ok());
  EXPECT_NE(a.error().message.find("block 1"), std::string::npos) << a.error().message;
  auto b = Framer::create(FramerConfig{8, 0});
  ASSERT_FALSE(b.ok());
  EXPECT_NE(b.error().message.find("hop 0"), std::string::npos) << b.error().message;
}

}  // namespace
}  // namespace tonewarden::dsp
