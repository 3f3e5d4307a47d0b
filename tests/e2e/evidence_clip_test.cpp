// Focus: raw evidence through the whole daemon. The outer-race record plays live; its BPFO
// alarm raises; the event names a FLAC clip; the API serves it; the clip holds the record's own
// samples; and `tonewarden analyze` run as the clip's sidecar says reads the record's levels
// and finds BPFO in the clip.
#include <gtest/gtest.h>
#include <httplib.h>
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <regex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include "support/subprocess.h"
#include "support/temp_dir.h"
#include "tonewarden/source/sound_file_reader.h"

namespace tonewarden {
namespace {

using namespace std::chrono_literals;
using json = nlohmann::json;
namespace fs = std::filesystem;

// BPFO of the record's bearing at 1796 rpm: 107.30 Hz (tests/data/bearing-cwru/README.md).
constexpr double kBpfoHz = 107.30;
constexpr double kFullScaleV = 5.0;  // the record peaks at 3.63 g; 1 V/g
constexpr double kFs = 12000.0;

std::string read_text(const fs::path& p) {
  std::ifstream in(p);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

// Geometry in mm from the README's inches (9 balls, 0.3126 in, 1.537 in, 0 degrees). The rule
// reads how far BPFO stands above the envelope floor; the record shows about 29 dB there.
std::string file_rig_config(const std::string& data_dir, const std::string& wav) {
  std::ostringstream c;
  c << "[daemon]\ndata_dir = \"" << data_dir << "\"\nfft_planner = \"estimate\"\n"
    << "[http]\nlisten = \"127.0.0.1:0\"\n"
    << "[store]\ncommit_interval_ms = 200\n"
    << "[evidence]\npre_s = 1\npost_s = 2\n"
    << "[[rig]]\nname = \"test-stand-7\"\n"
    << "[rig.source]\nkind = \"file\"\npath = \"" << wav << "\"\npace = \"realtime\"\n"
    << "[[rig.channel]]\nname = \"de\"\nindex = 0\nsensitivity_v_per_unit = 1\nunit = \"g\"\n"
    << "full_scale_v = " << kFullScaleV << "\n"
    << "[rig.analysis]\nblock_samples = 8192\noverlap_pct = 50\nwindow = \"hann\"\naverage = \"linear:4\"\n"
    << "envelope_low_hz = 2000\nenvelope_high_hz = 5000\n"
    << "[rig.speed]\nsource = \"fixed\"\nrpm = 1796\n"
    << "[[rig.target]]\nname = \"bpfo\"\nkind = \"bearing\"\nchannel = \"de\"\nballs = 9\n"
    << "ball_diameter_mm = 7.94\npitch_diameter_mm = 39.04\ndefect = \"bpfo\"\nspectrum = \"envelope\"\n"
    << "[[rig.rule]]\nname = \"de-bpfo\"\nreading = \"de.bpfo.snr_db\"\nwarning = 12\non_delay_s = 0\n";
  return c.str();
}

std::vector<float> read_mono_or_interleaved(const std::string& path, size_t* channels) {
  auto r = source::SoundFileReader::create(path);
  EXPECT_TRUE(r.ok()) << (r.ok() ? "" : r.error().message);
  if (!r) return {};
  *channels = r->channels();
  std::vector<float> out, chunk(4096 * r->channels());
  for (;;) {
    auto n = r->read(chunk);
    if (!n || *n == 0) break;
    out.insert(out.end(), chunk.begin(), chunk.begin() + static_cast<long>(*n * r->channels()));
  }
  return out;
}

class EvidenceClipTest : public ::testing::Test {
 protected:
  void TearDown() override {
    if (pid_ > 0) {
      kill(pid_, SIGKILL);
      waitpid(pid_, nullptr, 0);
    }
  }
  void start(const fs::path& config, const fs::path& log) {
    pid_ = fork();
    if (pid_ == 0) {
      freopen(log.c_str(), "w", stderr);
      freopen("/dev/null", "w", stdout);
      const std::string bin = testing::tonewarden_binary();
      execl(bin.c_str(), bin.c_str(), "run", "--config", config.c_str(), nullptr);
      _exit(127);
    }
  }
  // Waits for the daemon to exit on its own; returns its exit code, or -1.
  int wait_exit(std::chrono::seconds timeout) {
    const auto end = std::chrono::steady_clock::now() + timeout;
    int status = 0;
    while (std::chrono::steady_clock::now() < end) {
      if (waitpid(pid_, &status, WNOHANG) == pid_) {
        pid_ = -1;
        return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
      }
      std::this_thread::sleep_for(50ms);
    }
    return -1;
  }
  pid_t pid_ = -1;
};

TEST_F(EvidenceClipTest, AlarmClipIsTheRecordsOwnSamplesAndAnalyzesAgain) {
  testing::TempDir dir("tw_e2e_evidence");
  const std::string wav = testing::test_data("bearing-cwru/outer_race_130_12k.wav");
  const fs::path data = dir.path() / "data";
  const fs::path config = dir.path() / "rig.toml";
  const fs::path log = dir.path() / "daemon.log";
  std::ofstream(config) << file_rig_config(data.string(), wav);
  start(config, log);

  // The URL from the "ready" log line.
  int port = 0;
  for (int i = 0; i < 200 && port == 0; ++i) {
    std::smatch m;
    const std::string text = read_text(log);
    if (std::regex_search(text, m, std::regex("http://127\\.0\\.0\\.1:(\\d+)/"))) port = std::stoi(m[1]);
    else std::this_thread::sleep_for(50ms);
  }
  ASSERT_GT(port, 0) << read_text(log);
  httplib::Client http("127.0.0.1", port);

  // The activation event carries the clip's API link.
  std::string link;
  for (int i = 0; i < 200 && link.empty(); ++i) {
    auto r = http.Get("/api/v1/alarms/events?from=2000-01-01T00:00:00Z&to=2100-01-01T00:00:00Z");
    if (r && r->status == 200) {
      const json j = json::parse(r->body, nullptr, false);
      const json& list = j.is_object() && j.contains("events") ? j["events"] : j;
      for (const json& e : list) {
        if (e.value("state", "") == "unacknowledged" && e.contains("evidence") && e["evidence"].is_string()) {
          link = e["evidence"].get<std::string>();
        }
      }
    }
    if (link.empty()) std::this_thread::sleep_for(50ms);
  }
  ASSERT_FALSE(link.empty()) << "no activation event with evidence; log:\n" << read_text(log);
  EXPECT_EQ(link.rfind("/api/v1/evidence/test-stand-7/", 0), 0u) << link;
  ASSERT_EQ(link.substr(link.size() - 5), ".flac");

  // Served once written (post_s = 2 s after the activation).
  int clip_status = 0;
  std::string clip_body, clip_type;
  for (int i = 0; i < 200 && clip_status != 200; ++i) {
    if (auto r = http.Get(link)) {
      clip_status = r->status;
      clip_body = r->body;
      clip_type = r->get_header_value("Content-Type");
    }
    if (clip_status != 200) std::this_thread::sleep_for(50ms);
  }
  ASSERT_EQ(clip_status, 200) << clip_body;
  EXPECT_EQ(clip_type, "audio/flac");
  EXPECT_EQ(clip_body.compare(0, 4, "fLaC"), 0);  // FLAC stream marker
  // Counted in the rig's status once written (the file is served after its rename, and the
  // counter moves right after that).
  int64_t clips = -1;
  for (int i = 0; i < 100 && clips != 1; ++i) {
    if (auto st = http.Get("/api/v1/status"); st && st->status == 200) {
      const json j = json::parse(st->body, nullptr, false);
      if (!j.is_discarded()) clips = j["sources"][0]["evidence"]["clips"].get<int64_t>();
    }
    if (clips != 1) std::this_thread::sleep_for(50ms);
  }
  EXPECT_EQ(clips, 1);
  auto traversal = http.Get("/api/v1/evidence/test-stand-7/..%2F..%2Ftonewarden.db");
  ASSERT_TRUE(traversal);
  EXPECT_EQ(traversal->status, 400);

  // The record is 10.17 s long; played live, the daemon stops by itself at its end.
  ASSERT_EQ(wait_exit(30s), 0) << read_text(log);

  const fs::path flac = data / link.substr(std::string("/api/v1/").size());
  ASSERT_TRUE(fs::exists(flac)) << flac;
  EXPECT_EQ(fs::file_size(flac), clip_body.size());
  fs::path sidecar_path = flac;
  sidecar_path.replace_extension(".json");
  const json sidecar = json::parse(read_text(sidecar_path), nullptr, false);
  ASSERT_FALSE(sidecar.is_discarded()) << sidecar_path;
  EXPECT_EQ(sidecar["end"], "complete");
  EXPECT_EQ(sidecar["rules"][0], "de-bpfo");
  // pre_s 1 s + post_s 2 s at 12 kHz: 36000 frames (the activation comes after the first
  // averaging period, 1.7 s in, so the 1 s of history is all there).
  EXPECT_EQ(sidecar["frames"], 36000);

  // Identity: clip value * full scale is the record's sample at first_frame + i, within the
  // 24-bit quantum (full scale / 2^23).
  size_t nch = 0;
  const std::vector<float> clip = read_mono_or_interleaved(flac.string(), &nch);
  ASSERT_EQ(nch, 1u);
  ASSERT_EQ(clip.size(), 36000u);
  size_t rec_ch = 0;
  const std::vector<float> record = read_mono_or_interleaved(wav, &rec_ch);
  const int64_t first = sidecar["first_frame"].get<int64_t>();
  ASSERT_GE(first, 0);
  ASSERT_LE(first + 36000, static_cast<int64_t>(record.size()));
  double worst = 0, sum = 0;
  for (size_t i = 0; i < clip.size(); ++i) {
    const double original = record[static_cast<size_t>(first) + i];
    worst = std::max(worst, std::abs(clip[i] * kFullScaleV - original));
    sum += original;
  }
  EXPECT_LE(worst, kFullScaleV / 8388608.0);
  // analyze reports AC levels: RMS and peak about the mean (direct sums over the record).
  const double mean = sum / static_cast<double>(clip.size());
  double sum_sq = 0, peak = 0;
  for (size_t i = 0; i < clip.size(); ++i) {
    const double d = record[static_cast<size_t>(first) + i] - mean;
    sum_sq += d * d;
    peak = std::max(peak, std::abs(d));
  }
  const double rms = std::sqrt(sum_sq / static_cast<double>(clip.size()));

  // The sidecar's command line, as an engineer would run it beside the clip.
  std::istringstream words(sidecar["analyze"].get<std::string>());
  std::vector<std::string> argv;
  for (std::string w; words >> w;) argv.push_back(w);
  ASSERT_GE(argv.size(), 3u);
  ASSERT_EQ(argv[0], "tonewarden");
  ASSERT_EQ(argv[2], flac.filename().string());
  argv[0] = testing::tonewarden_binary();
  argv[2] = flac.string();
  for (const char* extra : {"--format", "json", "--block", "8192", "--envelope", "2000:5000", "--peaks", "40"}) {
    argv.emplace_back(extra);
  }
  const auto r = testing::run_process(argv);
  ASSERT_EQ(r.exit_code, 0) << r.stderr_text;
  const json a = json::parse(r.stdout_text, nullptr, false);
  ASSERT_FALSE(a.is_discarded()) << r.stdout_text;
  EXPECT_EQ(a["unit"], "g");
  // The clip's levels in g are the record's own (direct sums over the same samples above).
  EXPECT_NEAR(a["time"]["rms"].get<double>(), rms, 1e-5 * rms);
  EXPECT_NEAR(a["time"]["peak"].get<double>(), peak, 1e-5 * peak + kFullScaleV / 8388608.0);
  // And the defect is in it: the strongest envelope peak below 500 Hz sits at BPFO, within
  // one bin (12000 / 8192 = 1.46 Hz) plus the 1 % a real defect tone slips.
  const json* best = nullptr;
  for (const json& p : a["envelope_peaks"]) {
    if (p["frequency_hz"].get<double>() < 500.0 &&
        (!best || p["amplitude"].get<double>() > (*best)["amplitude"].get<double>())) {
      best = &p;
    }
  }
  ASSERT_NE(best, nullptr) << r.stdout_text;
  EXPECT_NEAR((*best)["frequency_hz"].get<double>(), kBpfoHz, 1.46 + 0.01 * kBpfoHz);
}

}  // namespace
}  // namespace tonewarden
