// Focus: Server-Sent Events: a pushed event reaches an open stream; the stream cap answers
// 503; stop() ends open streams instead of waiting for them.
#include <atomic>
#include <condition_variable>
#include <thread>

#include "http_fixture.h"

namespace tonewarden::http::fixture {
namespace {

using StreamTest = HttpServerTest;
using Clock = std::chrono::steady_clock;

// Collects a stream's bytes on its own thread, until told to stop or the stream ends.
class StreamReader {
 public:
  explicit StreamReader(int port) : client_("127.0.0.1", port) {
    client_.set_read_timeout(30, 0);
    thread_ = std::thread([this] {
      auto r = client_.Get("/api/v1/stream", [this](const char* data, size_t n) {
        std::lock_guard<std::mutex> lock(mu_);
        text_.append(data, n);
        cv_.notify_all();
        return !stop_.load();
      });
      std::lock_guard<std::mutex> lock(mu_);
      status_ = r ? r->status : -1;
      ended_ = true;
      cv_.notify_all();
    });
  }
  ~StreamReader() {
    stop_ = true;
    if (thread_.joinable()) thread_.join();
  }
  // Waits (bounded) until the text holds `needle`; returns whether it does.
  bool wait_for(const std::string& needle, std::chrono::seconds limit = std::chrono::seconds(10)) {
    std::unique_lock<std::mutex> lock(mu_);
    return cv_.wait_for(lock, limit,
                        [&] { return text_.find(needle) != std::string::npos || ended_; }) &&
           text_.find(needle) != std::string::npos;
  }
  bool wait_ended(std::chrono::seconds limit = std::chrono::seconds(10)) {
    std::unique_lock<std::mutex> lock(mu_);
    return cv_.wait_for(lock, limit, [&] { return ended_; });
  }
  std::string text() {
    std::lock_guard<std::mutex> lock(mu_);
    return text_;
  }
  void request_stop() { stop_ = true; }

 private:
  httplib::Client client_;
  std::thread thread_;
  std::mutex mu_;
  std::condition_variable cv_;
  std::string text_;
  int status_ = 0;
  bool ended_ = false;
  std::atomic<bool> stop_{false};
};

// Polls (never sleeps blindly) until the hub has `n` subscribers, up to 10 s.
bool wait_subscribers(Server& server, size_t n) {
  const auto deadline = Clock::now() + std::chrono::seconds(10);
  while (server.events().num_subscribers() != n) {
    if (Clock::now() > deadline) return false;
    std::this_thread::sleep_for(std::chrono::milliseconds(2));
  }
  return true;
}

TEST_F(StreamTest, PushedReadingArrivesAsEvent) {
  StreamReader reader(server->port());
  ASSERT_TRUE(reader.wait_for(": stream open")) << reader.text();
  ASSERT_TRUE(wait_subscribers(*server, 1));
  server->events().publish_readings(
      {{kMotorSeries, "bay4", "motor_de", "bpfo", "amplitude", "g", 0.75, WallTimeMs{kT0Ms}}});
  ASSERT_TRUE(reader.wait_for("\n\n", std::chrono::seconds(10)));
  ASSERT_TRUE(reader.wait_for("event: readings\n")) << reader.text();
  ASSERT_TRUE(reader.wait_for("}\n\n")) << reader.text();
  const std::string text = reader.text();
  EXPECT_NE(text.find("retry: 3000\n"), std::string::npos);  // kEventRetryMs
  EXPECT_NE(text.find("id: 1\nevent: readings\ndata: {"), std::string::npos) << text;
  const auto data_at = text.find("data: ") + 6;
  const json j = json::parse(text.substr(data_at, text.find('\n', data_at) - data_at));
  EXPECT_EQ(j["readings"][0]["value"], 0.75);
  EXPECT_EQ(j["readings"][0]["t"], "2026-12-02T00:00:00.000Z");

  AlarmEvent e;
  e.id = 5;
  e.alarm = "motor_bpfo_level@motor_de";
  e.state = "unacknowledged";
  server->events().publish_alarm(e);
  ASSERT_TRUE(reader.wait_for("id: 2\nevent: alarm\n")) << reader.text();
  reader.request_stop();
  server->events().publish("nudge", "{}");  // wakes the writer so the client sees stop
}

TEST_F(StreamTest, StreamsBeyondTheCapGet503) {
  // The fixture caps streams at 2.
  StreamReader a(server->port()), b(server->port());
  ASSERT_TRUE(wait_subscribers(*server, 2));
  const auto r = get("/api/v1/stream");
  const json e = error_of(r, 503);
  EXPECT_EQ(e["code"], "too_many_streams");
  EXPECT_EQ(r->get_header_value("Retry-After"), "5");
  EXPECT_EQ(server->stats().streams_refused, 1u);
  EXPECT_EQ(server->stats().event_streams_open, 2u);
  // Ordinary requests still get threads while both streams are open.
  EXPECT_EQ(get("/api/v1/status")->status, 200);
  a.request_stop();
  b.request_stop();
  server->events().publish("nudge", "{}");
  ASSERT_TRUE(a.wait_ended());
  ASSERT_TRUE(b.wait_ended());
}

TEST_F(StreamTest, StopEndsOpenStreams) {
  StreamReader a(server->port()), b(server->port());
  ASSERT_TRUE(wait_subscribers(*server, 2));
  server->stop();  // must not wait for the clients (they never stop on their own)
  EXPECT_FALSE(server->is_running());
  EXPECT_TRUE(a.wait_ended());
  EXPECT_TRUE(b.wait_ended());
}

}  // namespace
}  // namespace tonewarden::http::fixture
