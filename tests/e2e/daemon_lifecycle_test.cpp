// Focus: the whole daemon: start on the synthetic rig, readiness and watchdog through a fake
// NOTIFY_SOCKET, the HTTP API, SIGHUP with a good and a bad file, SIGTERM within 5 s, exit 0.
#include <gtest/gtest.h>
#include <httplib.h>
#include <signal.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <filesystem>
#include <fstream>
#include <regex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

#include <nlohmann/json.hpp>

#include "support/subprocess.h"

namespace tonewarden {
namespace {

using namespace std::chrono_literals;
using nlohmann::json;
namespace fs = std::filesystem;

std::string read_file(const fs::path& p) {
  std::ifstream in(p);
  std::stringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string rig_config(const std::string& data_dir, double bpfo_warning) {
  std::ostringstream c;
  c << "[daemon]\ndata_dir = \"" << data_dir << "\"\nfft_planner = \"estimate\"\nlog_level = \"info\"\n"
    << "[http]\nlisten = \"127.0.0.1:0\"\n"
    << "[store]\ncommit_interval_ms = 200\n"
    << "[[rig]]\nname = \"bay4-pump\"\n"
    << "[rig.source]\nkind = \"synthetic\"\nsample_rate_hz = 48000\npace = \"realtime\"\nseed = 7\n"
    << "story_start_s = 21540\nstory_speed = 30\ndefect_onset_s = 21600\ntach = true\n"
    << "[[rig.channel]]\nname = \"motor-de\"\nindex = 0\nsensitivity_v_per_unit = 0.1\nunit = \"g\"\nfull_scale_v = 1\n"
    << "[[rig.channel]]\nname = \"pump-nde\"\nindex = 1\nsensitivity_v_per_unit = 0.1\nunit = \"g\"\nfull_scale_v = 1\n"
    << "[[rig.channel]]\nname = \"tach\"\nindex = 2\nsensitivity_v_per_unit = 1\nunit = \"V\"\nfull_scale_v = 1\nrole = \"tach\"\n"
    << "[rig.analysis]\nblock_samples = 8192\noverlap_pct = 50\nwindow = \"hann\"\naverage = \"linear:2\"\n"
    << "envelope_low_hz = 2000\nenvelope_high_hz = 8000\n"
    << "[rig.speed]\nsource = \"tach\"\nrpm = 2975\ntach_channel = \"tach\"\ntrigger_level_v = 0.25\nmin_rpm = 2400\nmax_rpm = 3300\n"
    << "[[rig.target]]\nname = \"bpfo\"\nkind = \"bearing\"\nchannel = \"motor-de\"\nballs = 9\n"
    << "ball_diameter_mm = 7.94\npitch_diameter_mm = 39.04\ndefect = \"bpfo\"\nspectrum = \"envelope\"\n"
    << "[[rig.rule]]\nname = \"motor-de-bpfo\"\nreading = \"motor-de.bpfo.amplitude\"\nwarning = " << bpfo_warning
    << "\n";
  return c.str();
}

// The fake service manager: a datagram socket that collects sd_notify messages.
class NotifySocket {
 public:
  explicit NotifySocket(const fs::path& path) : path_(path) {
    fd_ = socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);
    sockaddr_un addr{};
    addr.sun_family = AF_UNIX;
    std::snprintf(addr.sun_path, sizeof addr.sun_path, "%s", path.c_str());
    bind(fd_, reinterpret_cast<sockaddr*>(&addr), sizeof addr);
    timeval tv{0, 100000};
    setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &tv, sizeof tv);
  }
  ~NotifySocket() { close(fd_); }
  // Waits until a message containing `needle` arrives; returns it, or "" on time-out.
  std::string wait_for(const std::string& needle, std::chrono::milliseconds timeout) {
    const auto end = std::chrono::steady_clock::now() + timeout;
    while (std::chrono::steady_clock::now() < end) {
      char buf[4096];
      const ssize_t n = recv(fd_, buf, sizeof buf - 1, 0);
      if (n <= 0) continue;
      std::string msg(buf, static_cast<size_t>(n));
      all_ += msg + "\n";
      if (msg.find(needle) != std::string::npos) return msg;
    }
    return "";
  }
  const std::string& all() const { return all_; }

 private:
  fs::path path_;
  int fd_ = -1;
  std::string all_;
};

// Polls GET /api/v1/spectrogram until it holds at least 5 rows (10 s at most) and checks them.
void expect_spectrogram_history(httplib::Client& http) {
  json j;
  for (int i = 0; i < 100; ++i) {
    auto r = http.Get("/api/v1/spectrogram?channel=motor-de&rows=600&points=1024");
    if (r && r->status == 200) j = json::parse(r->body, nullptr, false);
    if (j.is_object() && j["rows"].size() >= 5) break;
    std::this_thread::sleep_for(100ms);
  }
  ASSERT_TRUE(j.is_object() && j["rows"].size() >= 5) << j.dump().substr(0, 400);
  EXPECT_EQ(j["order"], "oldest_first");
  EXPECT_EQ(j["level"], "dB re 1 g RMS");
  // block_samples 8192 zero-padded to 16384 (pad_factor's default 2) at 48 kHz: 8193 bins of
  // 48000/16384 = 2.9296875 Hz, kept as 1024 buckets.
  EXPECT_EQ(j["num_bins"], 8193);
  EXPECT_DOUBLE_EQ(j["bin_hz"].get<double>(), 48000.0 / 16384);
  const auto freqs = j["frequency_hz"].get<std::vector<double>>();
  ASSERT_EQ(freqs.size(), 1024u);
  std::string previous;
  for (const json& row : j["rows"]) {
    const std::string t = row["t"].get<std::string>();
    EXPECT_GT(t, previous);  // RFC 3339 UTC with fixed digits: text order is time order
    previous = t;
    const auto db = row["db"].get<std::vector<double>>();
    ASSERT_EQ(db.size(), 1024u);
    size_t loudest = 0;
    for (size_t i = 0; i < db.size() && freqs[i] < 500; ++i)
      if (db[i] > db[loudest]) loudest = i;
    const double hi = loudest + 1 < freqs.size() ? freqs[loudest + 1] : 1e9;
    EXPECT_TRUE(freqs[loudest] <= 49.6 && 49.6 < hi) << "loudest bucket " << freqs[loudest] << " Hz";
    // 1x: 0.08 g peak = 0.0566 g RMS = -24.9 dB re 1 g (hand computed; the tolerance covers
    // the Hann scalloping loss, at most 1.4 dB); white noise 0.015 g RMS over 24 kHz puts a
    // 5.86 Hz resolution cell near -71 dB (hand estimate): 20 dB above the median is safe.
    std::vector<double> sorted = db;
    std::nth_element(sorted.begin(), sorted.begin() + sorted.size() / 2, sorted.end());
    EXPECT_GT(db[loudest], sorted[sorted.size() / 2] + 20) << "1x at " << db[loudest] << " dB";
    EXPECT_NEAR(db[loudest], -24.9, 3.0);
  }
}

class DaemonLifecycleTest : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = fs::temp_directory_path() / ("tw_e2e_" + std::to_string(getpid()));
    fs::remove_all(dir_);
    fs::create_directories(dir_);
    config_ = dir_ / "rig.toml";
    std::ofstream(config_) << rig_config((dir_ / "data").string(), 0.5);
  }
  void TearDown() override {
    if (pid_ > 0) {
      kill(pid_, SIGKILL);
      waitpid(pid_, nullptr, 0);
    }
    fs::remove_all(dir_);
  }
  void start(const fs::path& notify_path) {
    pid_ = fork();
    if (pid_ == 0) {
      setenv("NOTIFY_SOCKET", notify_path.c_str(), 1);
      setenv("WATCHDOG_USEC", "1000000", 1);
      setenv("WATCHDOG_PID", std::to_string(getpid()).c_str(), 1);
      const std::string log = (dir_ / "daemon.log").string();
      freopen(log.c_str(), "w", stderr);
      freopen("/dev/null", "w", stdout);
      const std::string bin = testing::tonewarden_binary();
      execl(bin.c_str(), bin.c_str(), "run", "--config", config_.c_str(), nullptr);
      _exit(127);
    }
  }
  std::string log() const { return read_file(dir_ / "daemon.log"); }

  fs::path dir_, config_;
  pid_t pid_ = -1;
};

TEST_F(DaemonLifecycleTest, StartsServesReloadsAndStopsInOrder) {
  NotifySocket notify(dir_ / "notify.sock");
  start(dir_ / "notify.sock");

  // Ready: READY=1 with a status line that names the URL.
  const std::string ready = notify.wait_for("READY=1", 20s);
  ASSERT_FALSE(ready.empty()) << "no READY=1; log:\n" << log();
  std::smatch m;
  ASSERT_TRUE(std::regex_search(ready, m, std::regex("http://127\\.0\\.0\\.1:(\\d+)/"))) << ready;
  const int port = std::stoi(m[1]);

  httplib::Client http("127.0.0.1", port);
  auto status = http.Get("/api/v1/status");
  ASSERT_TRUE(status);
  EXPECT_EQ(status->status, 200);
  EXPECT_NE(status->body.find("bay4-pump"), std::string::npos);

  // Watchdog pings at half the interval (1 s here).
  EXPECT_FALSE(notify.wait_for("WATCHDOG=1", 3s).empty());

  // A spectrum arrives once the first averaging period is done.
  bool got_spectrum = false;
  for (int i = 0; i < 100 && !got_spectrum; ++i) {
    auto r = http.Get("/api/v1/spectrum?channel=motor-de&points=256");
    got_spectrum = r && r->status == 200;
    if (!got_spectrum) std::this_thread::sleep_for(100ms);
  }
  EXPECT_TRUE(got_spectrum) << log();

  // The spectrogram history fills from the live spectra: several rows, times increasing, and
  // the motor's 1x (2975 rpm / 60 = 49.6 Hz; 0.08 g peak, the strongest tone of the demo
  // rig's motor channel) as the loudest point below 500 Hz, well above the noise floor.
  expect_spectrogram_history(http);

  // SIGHUP with a good file: the changed rule level applies live.
  std::ofstream(config_) << rig_config((dir_ / "data").string(), 0.25);
  kill(pid_, SIGHUP);
  EXPECT_FALSE(notify.wait_for("RELOADING=1", 5s).empty());
  for (int i = 0; i < 50 && log().find("now runs its new targets and rules") == std::string::npos; ++i) {
    std::this_thread::sleep_for(100ms);
  }
  EXPECT_NE(log().find("now runs its new targets and rules"), std::string::npos) << log();
  // Alarm states carry over: the changed rule and every signal-quality rule keep theirs.
  EXPECT_TRUE(std::regex_search(log(), std::regex("rig 'bay4-pump': (\\d+) of \\1 alarm\\(s\\) keep their state")))
      << log();

  // SIGHUP with a bad file: rejected, the daemon keeps serving the old configuration.
  std::ofstream(config_) << "[daemon]\nno_such_key = 1\n";
  kill(pid_, SIGHUP);
  for (int i = 0; i < 50 && log().find("reload: rejected") == std::string::npos; ++i) {
    std::this_thread::sleep_for(100ms);
  }
  EXPECT_NE(log().find("reload: rejected; the running configuration stays"), std::string::npos) << log();
  auto still = http.Get("/api/v1/status");
  ASSERT_TRUE(still);
  EXPECT_EQ(still->status, 200);

  // SIGTERM: STOPPING=1, exit 0 within 5 s.
  const auto t0 = std::chrono::steady_clock::now();
  kill(pid_, SIGTERM);
  int wstatus = 0;
  pid_t done = 0;
  while (std::chrono::steady_clock::now() - t0 < 10s) {
    done = waitpid(pid_, &wstatus, WNOHANG);
    if (done == pid_) break;
    std::this_thread::sleep_for(20ms);
  }
  const double stop_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
  ASSERT_EQ(done, pid_) << "daemon did not exit; log:\n" << log();
  pid_ = -1;
  EXPECT_TRUE(WIFEXITED(wstatus));
  EXPECT_EQ(WEXITSTATUS(wstatus), 0) << log();
  EXPECT_LT(stop_s, 5.0);
  EXPECT_FALSE(notify.wait_for("STOPPING=1", 1s).empty() && notify.all().find("STOPPING=1") == std::string::npos);
}

TEST_F(DaemonLifecycleTest, BadConfigExitsTwoWithFileLineColumn) {
  std::ofstream(config_) << "[daemon]\ndata_dir = \"x\"\nbogus = 3\n";
  const auto r = testing::run_process({testing::tonewarden_binary(), "run", "--config", config_.string()});
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_NE(r.stderr_text.find(config_.string() + ":3:1"), std::string::npos) << r.stderr_text;
}

TEST_F(DaemonLifecycleTest, ReadOnlyDataDirectoryIsAClearErrorAtStart) {
  // A file where the data directory should be: cannot be created or written, even as root.
  const fs::path blocker = dir_ / "not-a-dir";
  std::ofstream(blocker) << "x";
  const auto r = testing::run_process({testing::tonewarden_binary(), "run", "--config", config_.string(),
                                       "--data-dir", (blocker / "data").string()});
  EXPECT_EQ(r.exit_code, 1);
  EXPECT_NE(r.stderr_text.find("data directory"), std::string::npos) << r.stderr_text;
}

}  // namespace
}  // namespace tonewarden
