// Fake providers with known contents and a fixture that runs a real server on 127.0.0.1:0,
// for the HTTP tests. The expected values in the tests are the values set up here.
#pragma once

#include <gtest/gtest.h>
#include <httplib.h>

#include <algorithm>
#include <memory>
#include <mutex>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "tonewarden/http/server.h"

namespace tonewarden::http::fixture {

using base::ErrorCode;
using nlohmann::json;

inline constexpr const char* kToken = "test-token-0123456789abcdef";
inline constexpr const char* kMotorSeries = "bay4.motor_de.bpfo.amplitude";
inline constexpr const char* kVelocitySeries = "bay4.motor_de.velocity_rms";
// 2026-12-02T00:00:00Z in unix ms (86400 s/day * 20789 days since 1970-01-01).
inline constexpr int64_t kT0Ms = 1796169600000;

class FakeStatus : public StatusProvider {
 public:
  StatusInfo status() override {
    std::lock_guard<std::mutex> lock(mu);
    return info;
  }
  ConfigView config() override {
    ConfigView c;
    c.rigs = {{"bay4", "pump test bay 4", 2975}};
    c.channels = {{"motor_de", "bay4", "g", 100, 48000}, {"pump_de", "bay4", "g", 100, 48000}};
    c.targets = {{"bpfo", "bay4", "motor_de", "bearing", "outer race"}};
    RuleInfo rule;
    rule.id = "motor_bpfo_level";
    rule.rig = "bay4";
    rule.series = kMotorSeries;
    rule.unit = "g";
    rule.warning = 0.5;
    rule.critical = 1.0;
    c.rules = {rule};
    return c;
  }
  Status request_reload() override {
    std::lock_guard<std::mutex> lock(mu);
    ++reloads;
    return Status::success();
  }
  std::mutex mu;
  StatusInfo info = [] {
    StatusInfo s;
    s.version = "9.8.7";
    s.uptime_s = 42.5;
    SourceStatus src;
    src.name = "usb_interface";
    src.state = "running";
    src.sample_rate_hz = 48000;
    src.frames = 1200;
    src.overflows = 2;
    src.drops = 480;
    src.last_frame = WallTimeMs{kT0Ms};
    s.sources = {src};
    s.storage.rows_written = 999;
    return s;
  }();
  int reloads = 0;
};

class FakeLive : public LiveProvider {
 public:
  Result<LiveSpectrum> spectrum(const std::string& channel) override {
    if (channel != "motor_de") return base::make_error(ErrorCode::kNotFound, "no frame yet");
    LiveSpectrum s;
    s.channel = channel;
    s.t = WallTimeMs{kT0Ms};
    s.unit = "g";
    s.scaling = "amplitude_rms";
    s.bin_hz = 0.5;
    s.resolution_hz = 0.75;
    // 12 bins with maxima at bins 1, 5 and 10 (values 3, 9 and 7).
    s.magnitudes = {1, 3, 2, 0, 4, 9, 1, 2, 5, 6, 7, 0};
    s.peaks = {{2.5, 9.0}};
    s.markers = {{"bpfo", 2.5, 9.0}};
    s.thresholds = {{"motor_bpfo_level", "warning", 0.5, 0, 6}};
    return s;
  }
  // motor_de: kSpectrogramRows rows, 1 s apart from kT0Ms, of 12 kept points over 48 bins of
  // 0.5 Hz (4 bins per point: buckets start at 0, 2, 4, ... 22 Hz); row r is kRowDb + r dB.
  // pump_de: none yet (kNotFound).
  static constexpr size_t kSpectrogramRows = 3;
  static constexpr float kRowDb[12] = {-60, -40, -50, -70, -30, -20, -60, -55, -45, -35, -25, -80};
  Result<Spectrogram> spectrogram(const std::string& channel, size_t max_rows) override {
    {
      std::lock_guard<std::mutex> lock(mu);
      last_max_rows = max_rows;
    }
    if (channel != "motor_de") return base::make_error(ErrorCode::kNotFound, "no spectrum yet");
    Spectrogram g;
    g.channel = channel;
    g.unit = "g";
    g.bin_hz = 0.5;
    g.num_bins = 48;
    g.capacity = 600;
    for (int i = 0; i < 12; ++i) g.frequency_hz.push_back(2.0 * i);
    for (size_t r = kSpectrogramRows - std::min(max_rows, kSpectrogramRows); r < kSpectrogramRows; ++r) {
      SpectrogramRow row{WallTimeMs{kT0Ms + static_cast<int64_t>(r) * 1000}, {}};
      for (float v : kRowDb) row.db.push_back(v + static_cast<float>(r));
      g.rows.push_back(std::move(row));
    }
    return g;
  }
  std::vector<Reading> readings() override {
    std::lock_guard<std::mutex> lock(mu);
    return list;
  }
  std::mutex mu;
  size_t last_max_rows = 0;
  std::vector<Reading> list = {
      {kMotorSeries, "bay4", "motor_de", "bpfo", "amplitude", "g", 0.25, WallTimeMs{kT0Ms}},
      {kVelocitySeries, "bay4", "motor_de", "", "velocity_rms", "mm/s", 2.8, WallTimeMs{kT0Ms}},
      {"bay4.pump_de.speed", "bay4", "pump_de", "", "speed", "rpm", 2975, WallTimeMs{kT0Ms}}};
};

class FakeTrends : public TrendProvider {
 public:
  std::vector<std::string> series_names() override { return {kMotorSeries, kVelocitySeries}; }
  Result<std::vector<TrendSeries>> trends(const TrendQuery& q) override {
    std::lock_guard<std::mutex> lock(mu);
    last = q;
    std::vector<TrendSeries> out;
    for (const auto& name : q.series) {
      TrendSeries s{name, "g", "raw", {}};
      s.points = {{WallTimeMs{kT0Ms}, 1.5, 1.0, 2.0, 3}, {WallTimeMs{kT0Ms + 1000}, 2.5, 2.0, 3.0, 3}};
      out.push_back(s);
    }
    return out;
  }
  std::mutex mu;
  TrendQuery last;
};

class FakeAlarms : public AlarmProvider {
 public:
  std::vector<AlarmState> states() override {
    std::lock_guard<std::mutex> lock(mu);
    return list;
  }
  Result<std::vector<AlarmEvent>> events(const AlarmEventQuery& q) override {
    std::lock_guard<std::mutex> lock(mu);
    last = q;
    AlarmEvent e;
    e.id = 17;
    e.t = WallTimeMs{kT0Ms};
    e.alarm = "motor_bpfo_level@motor_de";
    e.rule = "motor_bpfo_level";
    e.severity = "warning";
    e.state = "unacknowledged";
    e.value = 0.61;
    return std::vector<AlarmEvent>{e};
  }
  Status acknowledge(const std::string& id, const std::string& user,
                     const std::string& comment) override {
    std::lock_guard<std::mutex> lock(mu);
    for (auto& a : list) {
      if (a.id != id) continue;
      if (a.state == "normal")
        return base::make_error(ErrorCode::kInvalidArgument, "alarm is not active");
      a.state = "acknowledged";
      a.acknowledged_by = user;
      last_comment = comment;
      return Status::success();
    }
    return base::make_error(ErrorCode::kNotFound, "no such alarm");
  }
  Status shelve(const std::string& id, const std::string& user, int64_t duration_s,
                const std::string&) override {
    std::lock_guard<std::mutex> lock(mu);
    for (auto& a : list) {
      if (a.id != id) continue;
      a.state = "shelved";
      a.shelved_until = WallTimeMs{kT0Ms + duration_s * 1000};
      a.acknowledged_by = user;
      return Status::success();
    }
    return base::make_error(ErrorCode::kNotFound, "no such alarm");
  }
  std::mutex mu;
  AlarmEventQuery last;
  std::string last_comment;
  std::vector<AlarmState> list = [] {
    AlarmState a;
    a.id = "motor_bpfo_level@motor_de";
    a.rule = "motor_bpfo_level";
    a.rig = "bay4";
    a.series = kMotorSeries;
    a.severity = "warning";
    a.state = "unacknowledged";
    a.value = 0.61;
    a.since = WallTimeMs{kT0Ms};
    AlarmState quiet = a;
    quiet.id = "quiet@pump_de";
    quiet.severity = "none";
    quiet.state = "normal";
    return std::vector<AlarmState>{a, quiet};
  }();
};

class FakeSnapshots : public SnapshotProvider {
 public:
  Result<std::vector<SnapshotInfo>> list(const SnapshotQuery& q) override {
    std::lock_guard<std::mutex> lock(mu);
    last = q;
    return std::vector<SnapshotInfo>{info()};
  }
  Result<Snapshot> get(int64_t id) override {
    if (id != 7) return base::make_error(ErrorCode::kNotFound, "no snapshot " + std::to_string(id));
    return Snapshot{info(), {0, 8, 1, 1, 2, 3}};
  }
  static SnapshotInfo info() {
    SnapshotInfo s;
    s.id = 7;
    s.t = WallTimeMs{kT0Ms};
    s.rig = "bay4";
    s.channel = "motor_de";
    s.reason = "alarm";
    s.unit = "g";
    s.window = "hann";
    s.bin_hz = 2.0;
    s.fft_length = 12;
    s.averages = 4;
    return s;
  }
  std::mutex mu;
  SnapshotQuery last;
};

class FakeAnnotations : public AnnotationProvider {
 public:
  Result<std::vector<Annotation>> list(WallTimeMs from, WallTimeMs to, size_t limit) override {
    std::lock_guard<std::mutex> lock(mu);
    std::vector<Annotation> out;
    for (const auto& a : notes)
      if (a.t >= from && a.t <= to && out.size() < limit) out.push_back(a);
    return out;
  }
  Result<int64_t> add(const Annotation& a) override {
    std::lock_guard<std::mutex> lock(mu);
    notes.push_back(a);
    notes.back().id = static_cast<int64_t>(notes.size());
    return notes.back().id;
  }
  std::mutex mu;
  std::vector<Annotation> notes;
};

struct Fakes {
  FakeStatus status;
  FakeLive live;
  FakeTrends trends;
  FakeAlarms alarms;
  FakeSnapshots snapshots;
  FakeAnnotations annotations;
  Providers providers() {
    Providers p;
    p.status = &status;
    p.live = &live;
    p.trends = &trends;
    p.alarms = &alarms;
    p.snapshots = &snapshots;
    p.annotations = &annotations;
    return p;
  }
};

inline AssetMap test_assets() {
  AssetMap m;
  m["/index.html"] = {"text/html; charset=utf-8", "<!doctype html><title>dash</title>"};
  m["/app.js"] = {"text/javascript; charset=utf-8", "console.log('dash');"};
  return m;
}

// A started server on 127.0.0.1 with an ephemeral port, the fakes, and a client.
class HttpServerTest : public ::testing::Test {
 protected:
  void SetUp() override { start_server(config()); }
  void TearDown() override {
    if (server) server->stop();
  }
  virtual ServerConfig config() {
    ServerConfig c;
    c.port = 0;
    c.token = kToken;
    c.version = "9.8.7";
    c.max_event_streams = 2;
    return c;
  }
  void start_server(const ServerConfig& c) {
    auto created = Server::create(c, fakes.providers(), test_assets());
    ASSERT_TRUE(created.ok()) << created.error().message;
    server = std::move(created).value();
    auto st = server->start();
    ASSERT_TRUE(st.ok()) << st.error().message;
    ASSERT_GT(server->port(), 0);
    client = std::make_unique<httplib::Client>("127.0.0.1", server->port());
    client->set_read_timeout(5, 0);
    client->set_connection_timeout(2, 0);
  }
  httplib::Headers auth() const { return {{"Authorization", std::string("Bearer ") + kToken}}; }

  httplib::Result get(const std::string& path) { return client->Get(path); }
  httplib::Result post(const std::string& path, const std::string& body, bool with_token = true) {
    return client->Post(path, with_token ? auth() : httplib::Headers{}, body,
                        "application/json");
  }
  // Asserts the JSON error shape and returns its "error" object.
  static json error_of(const httplib::Result& r, int status) {
    EXPECT_TRUE(r) << "no response";
    if (!r) return json::object();
    EXPECT_EQ(r->status, status) << r->body;
    EXPECT_EQ(r->get_header_value("Content-Type"), "application/json");
    json j = json::parse(r->body, nullptr, false);
    EXPECT_TRUE(j.is_object() && j.contains("error")) << r->body;
    if (!j.is_object() || !j.contains("error")) return json::object();
    EXPECT_TRUE(j["error"].contains("code"));
    EXPECT_TRUE(j["error"].contains("message"));
    return j["error"];
  }
  static json body_of(const httplib::Result& r, int status = 200) {
    EXPECT_TRUE(r) << "no response";
    if (!r) return json::object();
    EXPECT_EQ(r->status, status) << r->body;
    return json::parse(r->body, nullptr, false);
  }

  Fakes fakes;
  std::unique_ptr<Server> server;
  std::unique_ptr<httplib::Client> client;
};

}  // namespace tonewarden::http::fixture
