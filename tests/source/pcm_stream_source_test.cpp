// Focus: raw PCM (s16le, s32le, f32le) from files, named pipes and stdin reads back exactly;
// a trailing partial frame, non-finite floats, idle pipes, stop() and bad settings.
#include "tonewarden/source/pcm_stream_source.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <gtest/gtest.h>

#include <climits>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <thread>
#include <vector>

#include "support/temp_dir.h"

namespace tonewarden::source {
namespace {

namespace fs = std::filesystem;

class PcmStreamSourceTest : public ::testing::Test {
 protected:

  std::string write_file(const std::string& name, const void* data, size_t bytes) {
    const std::string path = (dir_ / name).string();
    std::ofstream f(path, std::ios::binary);
    f.write(static_cast<const char*>(data), static_cast<std::streamsize>(bytes));
    return path;
  }

  static std::unique_ptr<PcmStreamSource> make(const PcmStreamConfig& c) {
    auto s = PcmStreamSource::create(c);
    EXPECT_TRUE(s.ok()) << (s.ok() ? "" : s.error().message);
    return s.ok() ? std::move(s).value() : nullptr;
  }

  // Reads until the source reports no data, in blocks of `block_frames`.
  static std::vector<float> drain(PcmStreamSource& s, size_t channels, size_t block_frames) {
    std::vector<float> all, block(block_frames * channels);
    for (;;) {
      auto n = s.read(block, nullptr);
      EXPECT_TRUE(n.ok());
      if (!n.ok() || *n == 0) break;
      all.insert(all.end(), block.begin(), block.begin() + *n * channels);
    }
    return all;
  }

  tonewarden::testing::TempDir tmp_{"tw_pcm_test"};
  const fs::path& dir_ = tmp_.path();
};

TEST_F(PcmStreamSourceTest, ParsesFormatNames) {
  EXPECT_EQ(parse_pcm_format("s16le"), PcmFormat::kS16Le);
  EXPECT_EQ(parse_pcm_format("s32le"), PcmFormat::kS32Le);
  EXPECT_EQ(parse_pcm_format("f32le"), PcmFormat::kF32Le);
  EXPECT_FALSE(parse_pcm_format("s24le").has_value());
  EXPECT_EQ(bytes_per_sample(PcmFormat::kS16Le), 2u);
}

TEST_F(PcmStreamSourceTest, S16FileReadsBackScaledToFullScaleOne) {
  const int16_t raw[] = {0, 1, -1, 32767, -32768, 12345};
  PcmStreamConfig c;
  c.path = write_file("a.s16", raw, sizeof raw);
  c.format = PcmFormat::kS16Le;
  c.channels = 2;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  const auto x = drain(*s, 2, 2);  // blocks of 2 frames: 2 + 1
  ASSERT_EQ(x.size(), 6u);
  // Full scale = 1.0: sample k reads k / 32768, exact in float.
  for (size_t i = 0; i < 6; ++i) EXPECT_EQ(x[i], raw[i] / 32768.0f) << i;
  EXPECT_EQ(s->health().frames_delivered, 3u);
  EXPECT_EQ(s->health().state, SourceState::kFinished);
  EXPECT_EQ(s->health().errors, 0u);
}

TEST_F(PcmStreamSourceTest, S32FileReadsBackScaledToFullScaleOne) {
  const int32_t raw[] = {INT32_MIN, 1 << 30, -(256 * 12345), 0, INT32_MAX, 256};
  PcmStreamConfig c;
  c.path = write_file("a.s32", raw, sizeof raw);
  c.format = PcmFormat::kS32Le;
  c.channels = 3;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  const auto x = drain(*s, 3, 64);
  ASSERT_EQ(x.size(), 6u);
  EXPECT_EQ(x[0], -1.0f);                     // -2^31 / 2^31
  EXPECT_EQ(x[1], 0.5f);                      // 2^30 / 2^31
  EXPECT_EQ(x[2], -(256.0f * 12345) / 2147483648.0f);  // exact: 24 significant bits
  EXPECT_EQ(x[3], 0.0f);
  EXPECT_EQ(x[4], 1.0f);  // (2^31 - 1) / 2^31 rounds to 1.0 in float (24-bit mantissa)
  EXPECT_EQ(x[5], 0x1.0p-23f);  // 256 / 2^31 = 2^-23
}

TEST_F(PcmStreamSourceTest, F32FromNamedPipeInDribbledPiecesIsBitExact) {
  std::vector<float> sent(3000);
  for (size_t i = 0; i < sent.size(); ++i) sent[i] = std::sin(0.01f * i) * (1.0f + i);
  const std::string fifo = (dir_ / "stream.fifo").string();
  ASSERT_EQ(mkfifo(fifo.c_str(), 0600), 0);
  PcmStreamConfig c;
  c.path = fifo;
  c.channels = 2;
  c.idle_timeout_ms = 5000;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());  // does not wait for the writer
  std::thread writer([&] {
    const int fd = ::open(fifo.c_str(), O_WRONLY);
    ASSERT_GE(fd, 0);
    const auto* bytes = reinterpret_cast<const unsigned char*>(sent.data());
    const size_t total = sent.size() * sizeof(float);
    // 7-byte pieces split samples and frames across reads.
    for (size_t off = 0; off < total; off += 7) {
      ASSERT_GT(::write(fd, bytes + off, std::min<size_t>(7, total - off)), 0);
      if (off % 700 == 0) std::this_thread::yield();
    }
    ::close(fd);
  });
  const auto got = drain(*s, 2, 256);
  writer.join();
  ASSERT_EQ(got.size(), sent.size());
  EXPECT_EQ(std::memcmp(got.data(), sent.data(), sent.size() * sizeof(float)), 0);
  EXPECT_EQ(s->num_partial_frames(), 0u);
}

TEST_F(PcmStreamSourceTest, DashReadsStandardInput) {
  const int16_t raw[] = {100, -200, 300, -400};
  int p[2];
  ASSERT_EQ(pipe(p), 0);
  ASSERT_EQ(::write(p[1], raw, sizeof raw), static_cast<ssize_t>(sizeof raw));
  ::close(p[1]);
  const int saved = dup(STDIN_FILENO);
  ASSERT_EQ(dup2(p[0], STDIN_FILENO), STDIN_FILENO);
  ::close(p[0]);
  PcmStreamConfig c;
  c.path = "-";
  c.format = PcmFormat::kS16Le;
  c.channels = 1;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  const auto x = drain(*s, 1, 16);
  dup2(saved, STDIN_FILENO);
  ::close(saved);
  ASSERT_EQ(x.size(), 4u);
  EXPECT_EQ(x[3], -400 / 32768.0f);
  EXPECT_NE(s->describe().find("stdin"), std::string::npos);
}

TEST_F(PcmStreamSourceTest, PartialTrailingFrameIsCountedAndReported) {
  // 2 channels of s16 = 4-byte frames; 5 whole frames then 3 stray bytes.
  std::vector<unsigned char> bytes(5 * 4 + 3, 0);
  for (size_t i = 0; i < bytes.size(); ++i) bytes[i] = static_cast<unsigned char>(i);
  PcmStreamConfig c;
  c.path = write_file("cut.s16", bytes.data(), bytes.size());
  c.format = PcmFormat::kS16Le;
  c.channels = 2;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  const auto x = drain(*s, 2, 64);
  EXPECT_EQ(x.size(), 10u);  // every whole frame kept
  EXPECT_EQ(s->num_partial_frames(), 1u);
  EXPECT_EQ(s->num_dropped_bytes(), 3u);
  const SourceHealth h = s->health();
  EXPECT_EQ(h.errors, 1u);
  EXPECT_EQ(h.state, SourceState::kFinished);
  EXPECT_NE(h.last_error.find("3 trailing bytes of a 4-byte frame"), std::string::npos)
      << h.last_error;
  EXPECT_NE(h.last_error.find("cut.s16"), std::string::npos) << h.last_error;
}

TEST_F(PcmStreamSourceTest, NonFiniteFloatsBecomeZeroAndAreCounted) {
  const float raw[] = {0.25f, NAN, INFINITY, -0.5f};
  PcmStreamConfig c;
  c.path = write_file("nan.f32", raw, sizeof raw);
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  const auto x = drain(*s, 1, 8);
  ASSERT_EQ(x.size(), 4u);
  EXPECT_EQ(x[0], 0.25f);
  EXPECT_EQ(x[1], 0.0f);
  EXPECT_EQ(x[2], 0.0f);
  EXPECT_EQ(x[3], -0.5f);
  EXPECT_EQ(s->num_nonfinite(), 2u);
  EXPECT_NE(s->health().last_error.find("2 non-finite"), std::string::npos);
}

TEST_F(PcmStreamSourceTest, IdlePipeWaitsAndStopUnblocksRead) {
  int p[2];
  ASSERT_EQ(pipe(p), 0);
  PcmStreamConfig c;
  c.path = "/dev/fd/" + std::to_string(p[0]);
  c.idle_timeout_ms = 10;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  std::vector<float> block(64);
  auto n = s->read(block, nullptr);  // the writer is open but silent
  ASSERT_TRUE(n.ok());
  EXPECT_EQ(*n, 0u);
  EXPECT_EQ(s->health().state, SourceState::kWaiting);

  PcmStreamConfig c2 = c;
  c2.idle_timeout_ms = 60000;  // a read that would wait a minute
  auto s2 = make(c2);
  ASSERT_TRUE(s2->start().ok());
  std::thread stopper([&] {
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
    s2->stop();
  });
  n = s2->read(block, nullptr);
  stopper.join();
  ASSERT_TRUE(n.ok());
  EXPECT_EQ(*n, 0u);
  EXPECT_EQ(s2->health().state, SourceState::kFinished);
  ::close(p[0]);
  ::close(p[1]);
}

TEST_F(PcmStreamSourceTest, RealTimePacingStampsBlocksByFrameCount) {
  std::vector<int16_t> raw(8000 * 3 / 100);  // 30 ms at 8 kHz, mono
  PcmStreamConfig c;
  c.path = write_file("rt.s16", raw.data(), raw.size() * 2);
  c.format = PcmFormat::kS16Le;
  c.sample_rate_hz = 8000.0;
  c.pace = Pace::kRealTime;
  c.start_time = base::WallTimeMs{2'000'000'000'000};
  auto s = make(c);
  const base::MonoTime before = base::mono_now();
  ASSERT_TRUE(s->start().ok());
  std::vector<float> block(80);  // 10 ms
  for (int64_t k = 0; k < 3; ++k) {
    BlockInfo info;
    ASSERT_EQ(*s->read(block, &info), 80u);
    EXPECT_EQ(info.first_frame, 80 * k);
    EXPECT_EQ(info.t_first.unix_ms, 2'000'000'000'000 + 10 * k);  // 80 frames = 10 ms
  }
  EXPECT_GE(base::mono_now() - before, std::chrono::milliseconds(30));
  EXPECT_GE(s->num_pacing_sleeps(), 1u);
}

TEST_F(PcmStreamSourceTest, FastPacingNeverSleeps) {
  std::vector<int16_t> raw(48000 * 10);  // 10 s at 48 kHz
  PcmStreamConfig c;
  c.path = write_file("fast.s16", raw.data(), raw.size() * 2);
  c.format = PcmFormat::kS16Le;
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  EXPECT_EQ(drain(*s, 1, 4096).size(), raw.size());
  EXPECT_EQ(s->num_pacing_sleeps(), 0u);
}

TEST_F(PcmStreamSourceTest, MissingFileIsNotFoundWithItsPath) {
  PcmStreamConfig c;
  c.path = (dir_ / "absent.raw").string();
  auto s = make(c);
  const base::Status st = s->start();
  ASSERT_FALSE(st.ok());
  EXPECT_EQ(st.error().code, base::ErrorCode::kNotFound);
  EXPECT_NE(st.error().message.find("absent.raw"), std::string::npos);
  PcmStreamConfig d;
  d.path = dir_.string();
  auto sd = make(d);
  const base::Status std_ = sd->start();
  ASSERT_FALSE(std_.ok());
  EXPECT_NE(std_.error().message.find("directory"), std::string::npos);
}

TEST_F(PcmStreamSourceTest, RejectsBadSettings) {
  PcmStreamConfig c;
  c.channels = 0;
  auto a = PcmStreamSource::create(c);
  ASSERT_FALSE(a.ok());
  EXPECT_NE(a.error().message.find("channels 0"), std::string::npos);
  c.channels = 1;
  c.sample_rate_hz = 0.0;
  auto b = PcmStreamSource::create(c);
  ASSERT_FALSE(b.ok());
  EXPECT_NE(b.error().message.find("sample_rate_hz"), std::string::npos);
  c.sample_rate_hz = 48000.0;
  c.path = "";
  EXPECT_FALSE(PcmStreamSource::create(c).ok());
}

TEST_F(PcmStreamSourceTest, ReadBeforeStartIsAnError) {
  PcmStreamConfig c;
  auto s = make(c);
  std::vector<float> block(4);
  EXPECT_FALSE(s->read(block, nullptr).ok());
}

}  // namespace
}  // namespace tonewarden::source
