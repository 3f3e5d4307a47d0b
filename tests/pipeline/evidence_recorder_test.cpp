// Focus: raw-evidence clips: exact samples around an activation, sharing and rate limits,
// partial clips on stop or a gap, the size cap, I/O failures and path checks.
#include "tonewarden/pipeline/evidence_recorder.h"

#include <gtest/gtest.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <vector>

#include "support/temp_dir.h"
#include "tonewarden/source/sound_file_reader.h"

namespace tonewarden::pipeline {
namespace {

namespace fs = std::filesystem;
constexpr double kFs = 8000;
constexpr size_t kBlock = 1000;
// 24-bit FLAC: one step is 2^-23 of full scale; reading back may round once.
constexpr double kQuantum = 1.0 / 8388608.0;

// A ramp whose value names its own frame and channel: frame f of channel c is
// (c + 1) * 1e-4 * (f mod 5000) volts, so every sample read back says where it came from.
float volts_at(size_t c, int64_t frame) {
  return static_cast<float>((c + 1) * 1e-4 * static_cast<double>(frame % 5000));
}

struct Feeder {
  EvidenceRecorder& rec;
  size_t nch;
  int64_t frame = 0;
  base::WallTimeMs t0{1'790'000'000'000};
  std::vector<std::vector<float>> buf;

  void blocks(size_t n, bool gap_first = false) {
    buf.assign(nch, std::vector<float>(kBlock));
    for (size_t b = 0; b < n; ++b) {
      std::vector<std::span<const float>> spans;
      for (size_t c = 0; c < nch; ++c) {
        for (size_t i = 0; i < kBlock; ++i) buf[c][i] = volts_at(c, frame + static_cast<int64_t>(i));
        spans.emplace_back(buf[c]);
      }
      rec.on_block(spans, frame, now(), gap_first && b == 0);
      frame += kBlock;
    }
  }
  base::WallTimeMs now() const {
    return base::wall_after_samples(t0, frame, kFs);
  }
};

EvidenceRecorderConfig two_channels(const fs::path& dir) {
  EvidenceRecorderConfig c;
  c.data_dir = dir.string();
  c.rig = "bay4-pump";
  c.sample_rate_hz = kFs;
  ChannelSpec a;
  a.name = "motor-de";
  a.unit = "g";
  a.sensitivity_v_per_unit = 0.1;
  a.full_scale_v = 2.0;
  ChannelSpec b = a;
  b.name = "pump-nde";
  b.full_scale_v = 5.0;
  c.channels = {a, b};
  c.pre_s = 1.0;
  c.post_s = 0.5;
  c.min_interval_s = 60;
  return c;
}

std::vector<float> read_all(const fs::path& path, size_t* channels) {
  auto r = source::SoundFileReader::create(path.string());
  EXPECT_TRUE(r.ok()) << (r.ok() ? "" : r.error().message);
  if (!r) return {};
  *channels = r->channels();
  std::vector<float> out, chunk(4096 * r->channels());
  for (;;) {
    auto n = r->read(chunk);
    EXPECT_TRUE(n.ok());
    if (!n || *n == 0) break;
    out.insert(out.end(), chunk.begin(), chunk.begin() + static_cast<long>(*n * r->channels()));
  }
  return out;
}

nlohmann::json read_sidecar(const fs::path& flac) {
  fs::path p = flac;
  p.replace_extension(".json");
  std::ifstream in(p);
  EXPECT_TRUE(in.good()) << p;
  return nlohmann::json::parse(in, nullptr, false);
}

TEST(EvidenceRecorderTest, ClipHoldsExactlyPreAndPostSamplesScaledToFullScale) {
  testing::TempDir dir("tw_evidence");
  auto rec = EvidenceRecorder::create(two_channels(dir.path()));
  ASSERT_TRUE(rec.ok()) << rec.error().message;
  Feeder f{**rec, 2};
  f.blocks(30);  // 3.75 s: the pre ring (1 s) has wrapped several times
  const int64_t activation_frame = f.frame;
  const std::string rel = (*rec)->on_activation(f.now(), "bay4-pump.motor-de-bpfo");
  ASSERT_FALSE(rel.empty());
  EXPECT_EQ(rel.rfind("evidence/bay4-pump/", 0), 0u) << rel;
  f.blocks(10);  // 1.25 s, more than post_s
  (*rec)->finish();
  EXPECT_EQ((*rec)->num_clips_written(), 1u);

  size_t nch = 0;
  const auto samples = read_all(dir.path() / rel, &nch);
  ASSERT_EQ(nch, 2u);
  // Expected length: pre_s * fs + post_s * fs = 8000 + 4000 frames.
  ASSERT_EQ(samples.size(), 12000u * 2);
  double worst = 0;
  for (size_t i = 0; i < 12000; ++i) {
    const int64_t frame = activation_frame - 8000 + static_cast<int64_t>(i);
    for (size_t c = 0; c < 2; ++c) {
      const double full_scale = c == 0 ? 2.0 : 5.0;
      worst = std::max(worst, std::abs(samples[i * 2 + c] - volts_at(c, frame) / full_scale));
    }
  }
  EXPECT_LE(worst, kQuantum) << "samples must be the ring's, in order, scaled by 1/full_scale";

  const auto side = read_sidecar(dir.path() / rel);
  ASSERT_FALSE(side.is_discarded());
  EXPECT_EQ(side["frames"], 12000);
  EXPECT_EQ(side["first_frame"], activation_frame - 8000);  // the source's own frame count
  EXPECT_DOUBLE_EQ(side["pre_s"].get<double>(), 1.0);
  EXPECT_DOUBLE_EQ(side["post_s"].get<double>(), 0.5);
  EXPECT_EQ(side["end"], "complete");
  // 0.1 V/g over a 2 V full scale: a file value of 0.05 per g.
  EXPECT_DOUBLE_EQ(side["channels"][0]["file_value_per_unit"].get<double>(), 0.05);
  EXPECT_NE(side["analyze"].get<std::string>().find("--sensitivity 0.05 --unit g"), std::string::npos);
  EXPECT_FALSE(fs::exists(dir.path() / (rel + ".part")));
}

TEST(EvidenceRecorderTest, EarlyActivationKeepsOnlyTheSamplesThereAre) {
  testing::TempDir dir("tw_evidence");
  auto rec = EvidenceRecorder::create(two_channels(dir.path()));
  ASSERT_TRUE(rec.ok());
  Feeder f{**rec, 2};
  f.blocks(3);  // 0.375 s of history, less than pre_s
  const std::string rel = (*rec)->on_activation(f.now(), "r");
  f.blocks(4);
  (*rec)->finish();
  size_t nch = 0;
  const auto samples = read_all(dir.path() / rel, &nch);
  EXPECT_EQ(samples.size() / 2, 3000u + 4000u);
  EXPECT_NEAR(samples[0], volts_at(0, 0) / 2.0, kQuantum);
}

TEST(EvidenceRecorderTest, ActivationsDuringAClipShareItAndTheIntervalLimitsNewOnes) {
  testing::TempDir dir("tw_evidence");
  auto cfg = two_channels(dir.path());
  cfg.min_interval_s = 5;
  auto rec = EvidenceRecorder::create(cfg);
  ASSERT_TRUE(rec.ok());
  Feeder f{**rec, 2};
  f.blocks(10);
  const std::string first = (*rec)->on_activation(f.now(), "a");
  f.blocks(1);
  EXPECT_EQ((*rec)->on_activation(f.now(), "b"), first) << "a running clip covers this activation";
  f.blocks(8);  // clip complete at 0.5 s after the first activation
  (*rec)->finish();
  EXPECT_EQ((*rec)->on_activation(f.now(), "c"), "") << "1.1 s after the clip began, interval 5 s";
  EXPECT_EQ((*rec)->num_clips_skipped(), 1u);
  f.blocks(40);  // 5 s later
  const std::string second = (*rec)->on_activation(f.now(), "d");
  EXPECT_FALSE(second.empty());
  EXPECT_NE(second, first);
  f.blocks(5);
  (*rec)->finish();
  EXPECT_EQ((*rec)->num_clips_written(), 2u);
  const auto side = read_sidecar(dir.path() / first);
  EXPECT_EQ(side["rules"], nlohmann::json({"a", "b"}));
}

TEST(EvidenceRecorderTest, StopAndGapEndAClipWithTheSamplesItHas) {
  testing::TempDir dir("tw_evidence");
  auto cfg = two_channels(dir.path());
  cfg.min_interval_s = 0;
  auto rec = EvidenceRecorder::create(cfg);
  ASSERT_TRUE(rec.ok());
  Feeder f{**rec, 2};
  f.blocks(10);
  const std::string stopped = (*rec)->on_activation(f.now(), "a");
  f.blocks(2);  // 0.25 s of 0.5 s post
  (*rec)->finish();
  size_t nch = 0;
  EXPECT_EQ(read_all(dir.path() / stopped, &nch).size() / 2, 8000u + 2000u);
  EXPECT_EQ(read_sidecar(dir.path() / stopped)["end"], "stopped");

  f.blocks(20);
  const std::string gapped = (*rec)->on_activation(f.now(), "b");
  f.blocks(1);
  f.blocks(3, /*gap_first=*/true);
  (*rec)->finish();
  EXPECT_EQ(read_all(dir.path() / gapped, &nch).size() / 2, 8000u + 1000u);
  EXPECT_EQ(read_sidecar(dir.path() / gapped)["end"], "gap in the signal");
}

TEST(EvidenceRecorderTest, SizeCapRemovesTheOldestClipsFirst) {
  testing::TempDir dir("tw_evidence");
  auto cfg = two_channels(dir.path());
  cfg.min_interval_s = 0;
  // The size of one clip and its sidecar, measured with a generous cap in another folder.
  uint64_t one_clip = 0;
  {
    auto cfg_big = cfg;
    cfg_big.max_total_bytes = uint64_t{1} << 30;
    testing::TempDir sizing("tw_evidence_size");
    cfg_big.data_dir = sizing.path().string();
    auto rec = EvidenceRecorder::create(cfg_big);
    Feeder f{**rec, 2};
    f.blocks(10);
    const std::string rel = (*rec)->on_activation(f.now(), "a");
    f.blocks(5);
    (*rec)->finish();
    one_clip = fs::file_size(sizing.path() / rel);
    fs::path side = sizing.path() / rel;
    one_clip += fs::file_size(side.replace_extension(".json"));
  }
  cfg.max_total_bytes = one_clip * 2 + one_clip / 2;  // two clips fit, three do not
  auto rec = EvidenceRecorder::create(cfg);
  ASSERT_TRUE(rec.ok());
  Feeder f{**rec, 2};
  std::vector<std::string> clips;
  for (int k = 0; k < 4; ++k) {
    f.blocks(10);
    clips.push_back((*rec)->on_activation(f.now(), "r" + std::to_string(k)));
    f.blocks(5);
    (*rec)->finish();
  }
  EXPECT_FALSE(fs::exists(dir.path() / clips[0]));
  EXPECT_FALSE(fs::exists(dir.path() / clips[1]));
  EXPECT_TRUE(fs::exists(dir.path() / clips[2]));
  EXPECT_TRUE(fs::exists(dir.path() / clips[3]));
}

TEST(EvidenceRecorderTest, AnUnwritableFolderLosesTheClipButNotTheRecorder) {
  testing::TempDir dir("tw_evidence");
  auto cfg = two_channels(dir.path());
  cfg.min_interval_s = 0;
  auto rec = EvidenceRecorder::create(cfg);
  ASSERT_TRUE(rec.ok());
  // Replace the rig's folder by a plain file: every create in it fails (even as root).
  const fs::path rig_dir = dir.path() / "evidence" / "bay4-pump";
  fs::remove_all(rig_dir);
  std::ofstream(rig_dir) << "not a folder";
  Feeder f{**rec, 2};
  f.blocks(10);
  EXPECT_FALSE((*rec)->on_activation(f.now(), "a").empty());
  f.blocks(5);
  (*rec)->finish();
  EXPECT_EQ((*rec)->num_write_failures(), 1u);
  EXPECT_EQ((*rec)->num_clips_written(), 0u);

  fs::remove(rig_dir);
  fs::create_directories(rig_dir);
  const std::string rel = (*rec)->on_activation(f.now(), "b");
  f.blocks(5);
  (*rec)->finish();
  EXPECT_EQ((*rec)->num_clips_written(), 1u) << "recovers once the folder is writable again";
  EXPECT_TRUE(fs::exists(dir.path() / rel));
}

TEST(EvidenceRecorderTest, RejectsSettingsFlacCannotHold) {
  testing::TempDir dir("tw_evidence");
  auto cfg = two_channels(dir.path());
  cfg.sample_rate_hz = 44100.5;
  EXPECT_FALSE(EvidenceRecorder::create(cfg).ok());
  cfg = two_channels(dir.path());
  cfg.pre_s = 0;
  cfg.post_s = 0;
  EXPECT_FALSE(EvidenceRecorder::create(cfg).ok());
  cfg = two_channels(dir.path());
  cfg.channels.resize(9, cfg.channels[0]);
  EXPECT_FALSE(EvidenceRecorder::create(cfg).ok());
}

TEST(EvidencePathTest, ResolvesOnlyClipsInsideTheEvidenceFolder) {
  EXPECT_EQ(*resolve_evidence_path("/var/lib/tw", "evidence/bay4/20261202T031500.250Z-r.flac"),
            "/var/lib/tw/evidence/bay4/20261202T031500.250Z-r.flac");
  for (const char* bad : {"../evidence/bay4/x.flac", "/etc/passwd", "evidence/../../x.flac",
                          "evidence/bay4/x.wav", "evidence/a/b/c.flac", "evidence/bay4/..flac",
                          "other/bay4/x.flac", "evidence/bay 4/x.flac", "evidence/bay4/.x.flac",
                          "evidence//x.flac", ""}) {
    EXPECT_FALSE(resolve_evidence_path("/var/lib/tw", bad).ok()) << bad;
  }
}

}  // namespace
}  // namespace tonewarden::pipeline
