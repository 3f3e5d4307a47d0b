// A server with fake providers for load measurements with an external client; not a
// Google Benchmark case. Usage: http_server_bench [port]   (default 8378; 0 = any free port)
// It prints "listening on 127.0.0.1:PORT" and serves until SIGINT or SIGTERM. Measure with e.g.
//   wrk -t2 -c32 -d10s --latency http://127.0.0.1:8378/api/v1/status
#include <signal.h>

#include <cstdio>
#include <algorithm>
#include <cstdlib>
#include <string>

#include "tonewarden/http/server.h"

namespace {

using namespace tonewarden;
using namespace tonewarden::http;

class BenchStatus : public StatusProvider {
 public:
  StatusInfo status() override {
    StatusInfo s;
    s.version = "bench";
    s.uptime_s = 1;
    for (int i = 0; i < 2; ++i) {
      SourceStatus src;
      src.name = "source_" + std::to_string(i);
      src.state = "running";
      src.sample_rate_hz = 48000;
      src.frames = 123456;
      s.sources.push_back(src);
    }
    return s;
  }
  ConfigView config() override {
    ConfigView c;
    c.rigs = {{"bay4", "bench rig", 2975}};
    c.channels = {{"motor_de", "bay4", "g", 100, 48000}};
    return c;
  }
  Status request_reload() override { return Status::success(); }
};

class BenchLive : public LiveProvider {
 public:
  Result<LiveSpectrum> spectrum(const std::string& channel) override {
    LiveSpectrum s;
    s.channel = channel;
    s.unit = "g";
    s.bin_hz = 0.5;
    s.magnitudes.assign(32768, 1e-3f);
    s.magnitudes[1234] = 1.0f;
    return s;
  }
  // A full history: 600 rows of 1024 points, as the daemon keeps at most.
  Result<Spectrogram> spectrogram(const std::string& channel, size_t max_rows) override {
    Spectrogram g;
    g.channel = channel;
    g.unit = "g";
    g.bin_hz = 0.5;
    g.num_bins = 32768;
    g.capacity = 600;
    for (size_t i = 0; i < 1024; ++i) g.frequency_hz.push_back(static_cast<double>(i * 32) * 0.5);
    const size_t n = std::min<size_t>(max_rows, 600);
    for (size_t r = 0; r < n; ++r) {
      SpectrogramRow row{base::WallTimeMs{1796169600000 + static_cast<int64_t>(r) * 680}, {}};
      row.db.assign(1024, -61.7f);
      row.db[38] = -3.2f;
      g.rows.push_back(std::move(row));
    }
    return g;
  }
  std::vector<Reading> readings() override {
    return {{"bay4.motor_de.velocity_rms", "bay4", "motor_de", "", "velocity_rms", "mm/s", 2.8,
             base::wall_now()}};
  }
};

}  // namespace

int main(int argc, char** argv) {
  // Block the stop signals before any thread starts, so that only sigwait() sees them.
  sigset_t stop_signals;
  sigemptyset(&stop_signals);
  sigaddset(&stop_signals, SIGINT);
  sigaddset(&stop_signals, SIGTERM);
  pthread_sigmask(SIG_BLOCK, &stop_signals, nullptr);

  BenchStatus status;
  BenchLive live;
  Providers providers;
  providers.status = &status;
  providers.live = &live;
  ServerConfig config;
  config.port = argc > 1 ? std::atoi(argv[1]) : 8378;
  config.version = "bench";
  auto server = Server::create(config, providers);
  if (!server) {
    std::fprintf(stderr, "http_server_bench: %s\n", server.error().message.c_str());
    return 2;
  }
  if (auto st = (*server)->start(); !st) {
    std::fprintf(stderr, "http_server_bench: %s\n", st.error().message.c_str());
    return 1;
  }
  std::printf("listening on 127.0.0.1:%d (%s)\n", (*server)->port(),
              (*server)->describe().c_str());
  std::fflush(stdout);
  int sig = 0;
  sigwait(&stop_signals, &sig);
  (*server)->stop();
  const HttpStats s = (*server)->stats();
  std::printf("stopped; responses 2xx=%llu 4xx=%llu 5xx=%llu\n",
              static_cast<unsigned long long>(s.responses_by_class[1]),
              static_cast<unsigned long long>(s.responses_by_class[3]),
              static_cast<unsigned long long>(s.responses_by_class[4]));
  return 0;
}
