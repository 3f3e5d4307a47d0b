// Focus: FileSource plays one recording (and loops it), and a watched folder in order;
// a restart skips finished files; format changes and truncated files are skipped and
// reported; timestamps follow the frame count; stop() wakes an idle folder.
#include "tonewarden/source/file_source.h"

#include <gtest/gtest.h>

#include <chrono>
#include <filesystem>
#include <thread>
#include <vector>

#include "support/temp_dir.h"
#include "tonewarden/source/sound_file_writer.h"

namespace tonewarden::source {
namespace {

namespace fs = std::filesystem;

class FileSourceTest : public ::testing::Test {
 protected:
  void SetUp() override { fs::create_directory(drop_); }

  // A float WAV whose sample i of channel c is value + i + c / 10 (easy to recognise).
  std::string write_wav(const fs::path& path, size_t frames, float value,
                        double rate_hz = 48000.0, size_t channels = 2, int age_s = 0) {
    SoundFileWriterConfig wc;
    wc.sample_rate_hz = rate_hz;
    wc.channels = channels;
    auto w = SoundFileWriter::create(path.string(), wc);
    EXPECT_TRUE(w.ok()) << (w.ok() ? "" : w.error().message);
    std::vector<float> x(frames * channels);
    for (size_t i = 0; i < frames; ++i)
      for (size_t c = 0; c < channels; ++c) x[i * channels + c] = value + i + c / 10.0f;
    EXPECT_TRUE(w->write(x).ok());
    EXPECT_TRUE(w->close().ok());
    fs::last_write_time(path, stamp_ - std::chrono::seconds(age_s));
    return path.string();
  }

  std::unique_ptr<FileSource> make(const FileSourceConfig& c) {
    auto s = FileSource::create(c);
    EXPECT_TRUE(s.ok()) << (s.ok() ? "" : s.error().message);
    return s.ok() ? std::move(s).value() : nullptr;
  }

  FileSourceConfig folder_config() const {
    FileSourceConfig c;
    c.watch_dir = drop_.string();
    c.record_path = record_;
    c.sample_rate_hz = 48000.0;
    c.channels = 2;
    c.poll_ms = 10;
    c.pace = Pace::kFast;
    return c;
  }

  struct Block {
    BlockInfo info;
    std::vector<float> samples;
  };
  // Reads until `done(source)` holds or `max_reads` calls; keeps non-empty blocks.
  template <typename Done>
  std::vector<Block> read_until(FileSource& s, size_t block_frames, Done done,
                                int max_reads = 2000) {
    std::vector<Block> blocks;
    std::vector<float> buf(block_frames * s.capabilities().channels);
    for (int k = 0; k < max_reads && !done(s); ++k) {
      BlockInfo info;
      auto n = s.read(buf, &info);
      EXPECT_TRUE(n.ok());
      if (!n.ok()) break;
      if (*n > 0) {
        blocks.push_back({info, std::vector<float>(buf.begin(),
                                                   buf.begin() + *n * s.capabilities().channels)});
      }
    }
    return blocks;
  }

  tonewarden::testing::TempDir tmp_{"tw_file_source_test"};
  const fs::path& root_ = tmp_.path();
  const fs::path drop_ = root_ / "drop";
  const std::string record_ = (root_ / "finished.txt").string();
  fs::file_time_type stamp_ = fs::file_time_type::clock::now();
};

TEST_F(FileSourceTest, OneFilePlaysToTheEndAndFinishes) {
  FileSourceConfig c;
  c.path = write_wav(root_ / "one.wav", 1000, 0.0f);
  c.pace = Pace::kFast;
  c.start_time = base::WallTimeMs{1'600'000'000'000};
  auto s = make(c);
  EXPECT_EQ(s->capabilities().channels, 2u);
  EXPECT_EQ(s->capabilities().sample_rate_hz, 48000.0);
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 300, [](FileSource& f) {
    return f.health().state == SourceState::kFinished;
  });
  ASSERT_EQ(blocks.size(), 4u);  // 300 + 300 + 300 + 100 frames
  EXPECT_EQ(blocks[3].info.frames, 100u);
  EXPECT_EQ(blocks[3].info.first_frame, 900);
  // 900 frames at 48 kHz = 18.75 ms: the timestamp floors to 18 ms.
  EXPECT_EQ(blocks[3].info.t_first.unix_ms, 1'600'000'000'018);
  EXPECT_EQ(blocks[3].samples[2 * 99 + 1], 999.1f);  // sample 999 of channel 1
  EXPECT_EQ(s->health().frames_delivered, 1000u);
  EXPECT_EQ(s->num_files_done(), 1u);
  EXPECT_EQ(s->num_pacing_sleeps(), 0u);  // fast: never sleeps
}

TEST_F(FileSourceTest, LoopingWrapsWithADiscontinuityAndARunningFrameIndex) {
  FileSourceConfig c;
  c.path = write_wav(root_ / "loop.wav", 500, 0.0f, 48000.0, 1);
  c.pace = Pace::kFast;
  c.loop = true;
  auto s = make(c);
  ASSERT_TRUE(s->capabilities().can_loop);
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 200, [](FileSource& f) { return f.num_loops() >= 2; });
  // Pass 1: 200, 200, 100; pass 2 starts at frame 500 with the discontinuity flag.
  ASSERT_GE(blocks.size(), 6u);
  EXPECT_FALSE(blocks[1].info.discontinuity);
  EXPECT_TRUE(blocks[3].info.discontinuity);
  EXPECT_EQ(blocks[3].info.first_frame, 500);
  EXPECT_EQ(blocks[3].samples[0], 0.0f);  // the file starts over
  EXPECT_EQ(blocks[4].samples[0], 200.0f);
  EXPECT_FALSE(blocks[4].info.discontinuity);
  EXPECT_NE(s->health().state, SourceState::kFinished);
}

TEST_F(FileSourceTest, RealTimeFileIsHeldToTheSampleClock) {
  FileSourceConfig c;
  c.path = write_wav(root_ / "rt.wav", 240, 0.0f, 8000.0, 1);  // 30 ms at 8 kHz
  c.pace = Pace::kRealTime;
  auto s = make(c);
  const base::MonoTime before = base::mono_now();
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 80, [](FileSource& f) {
    return f.health().state == SourceState::kFinished;
  });
  ASSERT_EQ(blocks.size(), 3u);
  // Three 10 ms blocks; the last is released no earlier than 30 ms after start.
  EXPECT_GE(base::mono_now() - before, std::chrono::milliseconds(30));
  EXPECT_EQ(blocks[2].info.t_first.unix_ms - blocks[0].info.t_first.unix_ms, 20);
  EXPECT_GE(s->num_pacing_sleeps(), 1u);
}

TEST_F(FileSourceTest, WatchedFolderPlaysRecordingsOldestFirst) {
  write_wav(drop_ / "rec_b.wav", 100, 2000.0f, 48000.0, 2, 20);
  write_wav(drop_ / "rec_a.wav", 100, 1000.0f, 48000.0, 2, 30);  // oldest
  write_wav(drop_ / "rec_c.wav", 100, 3000.0f, 48000.0, 2, 10);
  auto s = make(folder_config());
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 64, [](FileSource& f) { return f.num_files_done() >= 3; });
  std::vector<float> firsts;
  for (const Block& b : blocks)
    if (b.info.discontinuity || b.info.first_frame == 0) firsts.push_back(b.samples[0]);
  EXPECT_EQ(firsts, (std::vector<float>{1000.0f, 2000.0f, 3000.0f}));
  ASSERT_FALSE(blocks.empty());
  EXPECT_EQ(blocks.back().info.first_frame + static_cast<int64_t>(blocks.back().info.frames), 300);
  EXPECT_EQ(s->health().errors, 0u);
}

TEST_F(FileSourceTest, RestartSkipsFinishedFilesAndTakesOnlyNewOnes) {
  write_wav(drop_ / "old.wav", 100, 1000.0f, 48000.0, 2, 30);
  {
    auto s = make(folder_config());
    ASSERT_TRUE(s->start().ok());
    read_until(*s, 64, [](FileSource& f) { return f.num_files_done() >= 1; });
    EXPECT_EQ(s->num_files_done(), 1u);
  }
  write_wav(drop_ / "new.wav", 100, 5000.0f, 48000.0, 2, 5);
  auto s = make(folder_config());
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 64, [](FileSource& f) { return f.num_files_done() >= 1; });
  ASSERT_FALSE(blocks.empty());
  EXPECT_EQ(blocks.front().samples[0], 5000.0f);  // old.wav was not played again
  EXPECT_EQ(s->health().frames_delivered, 100u);
  // Nothing else arrives: the source waits.
  std::vector<float> buf(128);
  auto n = s->read(buf, nullptr);
  ASSERT_TRUE(n.ok());
  EXPECT_EQ(*n, 0u);
  EXPECT_EQ(s->health().state, SourceState::kWaiting);
}

TEST_F(FileSourceTest, FormatChangeSkipsThatFileAndReportsIt) {
  write_wav(drop_ / "a.wav", 100, 1000.0f, 48000.0, 2, 30);
  write_wav(drop_ / "b.wav", 100, 2000.0f, 44100.0, 2, 20);  // other rate
  write_wav(drop_ / "c.wav", 100, 3000.0f, 48000.0, 1, 15);  // other channel count
  write_wav(drop_ / "d.wav", 100, 4000.0f, 48000.0, 2, 10);
  auto s = make(folder_config());
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 64, [](FileSource& f) {
    return f.num_files_done() + f.num_files_skipped() >= 4;
  });
  EXPECT_EQ(s->num_files_done(), 2u);
  EXPECT_EQ(s->num_files_skipped(), 2u);
  EXPECT_EQ(s->health().frames_delivered, 200u);
  const SourceHealth h = s->health();
  EXPECT_EQ(h.errors, 2u);
  EXPECT_NE(h.last_error.find("c.wav"), std::string::npos) << h.last_error;
  EXPECT_NE(h.last_error.find("1 ch at 48000 Hz"), std::string::npos) << h.last_error;
}

TEST_F(FileSourceTest, TruncatedRecordingIsSkippedAndReported) {
  write_wav(drop_ / "cut.wav", 1000, 1000.0f, 48000.0, 2, 30);
  // Cut the data chunk short: the header still claims 1000 frames.
  fs::resize_file(drop_ / "cut.wav", fs::file_size(drop_ / "cut.wav") - 800);
  fs::last_write_time(drop_ / "cut.wav", stamp_ - std::chrono::seconds(30));
  write_wav(drop_ / "fine.wav", 100, 2000.0f, 48000.0, 2, 10);
  auto s = make(folder_config());
  ASSERT_TRUE(s->start().ok());
  auto blocks = read_until(*s, 64, [](FileSource& f) {
    return f.num_files_done() + f.num_files_skipped() >= 2;
  });
  EXPECT_EQ(s->num_files_skipped(), 1u);
  EXPECT_EQ(s->num_files_done(), 1u);
  const SourceHealth h = s->health();
  EXPECT_EQ(h.errors, 1u);
  EXPECT_NE(h.last_error.find("cut.wav"), std::string::npos) << h.last_error;
  EXPECT_NE(h.last_error.find("truncated"), std::string::npos) << h.last_error;
  ASSERT_FALSE(blocks.empty());
  EXPECT_EQ(blocks.front().samples[0], 2000.0f);

  // One file given directly: the same fault fails create() with the file named.
  FileSourceConfig one;
  one.path = (drop_ / "cut.wav").string();
  auto direct = FileSource::create(one);
  ASSERT_FALSE(direct.ok());
  EXPECT_EQ(direct.error().code, base::ErrorCode::kCorruptData);
  EXPECT_NE(direct.error().message.find("cut.wav"), std::string::npos);
}

TEST_F(FileSourceTest, StopWakesAnIdleWatchedFolder) {
  FileSourceConfig c = folder_config();
  c.poll_ms = 600000;  // ten minutes between scans
  auto s = make(c);
  ASSERT_TRUE(s->start().ok());
  std::vector<float> buf(128);
  // The first read scans, finds nothing and sleeps until the next scan, ten minutes away;
  // only stop() can end it early (ctest's timeout would fail the test otherwise).
  std::thread stopper([&] {
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
    s->stop();
  });
  auto n = s->read(buf, nullptr);
  stopper.join();
  ASSERT_TRUE(n.ok());
  EXPECT_EQ(*n, 0u);
  EXPECT_EQ(s->health().state, SourceState::kFinished);
}

TEST_F(FileSourceTest, BadSettingsAreClearErrors) {
  FileSourceConfig both = folder_config();
  both.path = "x.wav";
  auto a = FileSource::create(both);
  ASSERT_FALSE(a.ok());
  EXPECT_NE(a.error().message.find("exactly one"), std::string::npos);

  FileSourceConfig undeclared = folder_config();
  undeclared.channels = 0;
  auto b = FileSource::create(undeclared);
  ASSERT_FALSE(b.ok());
  EXPECT_NE(b.error().message.find("channels"), std::string::npos);

  FileSourceConfig looped = folder_config();
  looped.loop = true;
  EXPECT_FALSE(FileSource::create(looped).ok());

  FileSourceConfig missing;
  missing.path = (root_ / "absent.wav").string();
  auto d = FileSource::create(missing);
  ASSERT_FALSE(d.ok());
  EXPECT_EQ(d.error().code, base::ErrorCode::kNotFound);
  EXPECT_NE(d.error().message.find("absent.wav"), std::string::npos);

  FileSourceConfig mismatch;
  mismatch.path = write_wav(root_ / "m.wav", 10, 0.0f, 48000.0, 2);
  mismatch.channels = 4;
  auto e = FileSource::create(mismatch);
  ASSERT_FALSE(e.ok());
  EXPECT_NE(e.error().message.find("config expects 4 ch"), std::string::npos) << e.error().message;
}

}  // namespace
}  // namespace tonewarden::source
