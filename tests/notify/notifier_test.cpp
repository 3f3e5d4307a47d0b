// Focus: the webhook against a real local HTTP server (up, failing and down), the exec hook's
// environment and time limit, and that post() never blocks the caller.
#include "tonewarden/notify/notifier.h"

#include <gtest/gtest.h>
#include <httplib.h>

#include <atomic>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <thread>

#include "notify/sample_event.h"

namespace tonewarden::notify {
namespace {

using testing::sample_event;

using namespace std::chrono_literals;

// A local server that records POST bodies; answers `status` (changeable).
class TestServer {
 public:
  TestServer() {
    svr_.Post("/hook", [this](const httplib::Request& req, httplib::Response& res) {
      std::lock_guard lock(mu_);
      bodies_.push_back(req.body);
      res.status = status_.load();
    });
    port_ = svr_.bind_to_any_port("127.0.0.1");
    thread_ = std::thread([this] { svr_.listen_after_bind(); });
    for (int i = 0; i < 500 && !svr_.is_running(); ++i) std::this_thread::sleep_for(2ms);
  }
  ~TestServer() {
    svr_.stop();
    thread_.join();
  }
  std::string url() const { return "http://127.0.0.1:" + std::to_string(port_) + "/hook"; }
  std::vector<std::string> bodies() {
    std::lock_guard lock(mu_);
    return bodies_;
  }
  std::atomic<int> status_{200};

 private:
  httplib::Server svr_;
  int port_ = 0;
  std::thread thread_;
  std::mutex mu_;
  std::vector<std::string> bodies_;
};

std::vector<std::unique_ptr<Sink>> one(base::Result<std::unique_ptr<Sink>> s) {
  EXPECT_TRUE(s.ok());
  std::vector<std::unique_ptr<Sink>> v;
  v.push_back(std::move(s).value());
  return v;
}

TEST(NotifierTest, WebhookPostsTheEventAsJson) {
  TestServer server;
  Notifier n(one(make_webhook_sink({server.url(), 2000ms, 0, "warning"})));
  n.post(sample_event());
  ASSERT_TRUE(n.wait_idle(5s));
  const auto bodies = server.bodies();
  ASSERT_EQ(bodies.size(), 1u);
  EXPECT_NE(bodies[0].find("\"rule\":\"de-bpfo\""), std::string::npos) << bodies[0];
  EXPECT_NE(bodies[0].find("\"t\":\"2001-09-09T01:46:40.000Z\""), std::string::npos) << bodies[0];
  EXPECT_NE(bodies[0].find("\"evidence\":null"), std::string::npos) << bodies[0];  // no clip
  EXPECT_EQ(n.num_delivered(), 1u);
  EXPECT_EQ(n.num_failed(), 0u);
}

TEST(NotifierTest, WebhookRetriesAFailingServerThenGivesUp) {
  TestServer server;
  server.status_ = 500;
  Notifier n(one(make_webhook_sink({server.url(), 2000ms, 2, "warning"})));
  n.post(sample_event());
  ASSERT_TRUE(n.wait_idle(10s));
  EXPECT_EQ(server.bodies().size(), 3u);  // the first attempt and two retries
  EXPECT_EQ(n.num_failed(), 1u);
  EXPECT_EQ(n.num_delivered(), 0u);
}

TEST(NotifierTest, WebhookToAServerThatIsDownFailsWithoutBlockingThePoster) {
  // Bind and close a port so that nothing listens there.
  int port = 0;
  {
    httplib::Server tmp;
    port = tmp.bind_to_any_port("127.0.0.1");
  }
  Notifier n(one(make_webhook_sink({"http://127.0.0.1:" + std::to_string(port) + "/hook", 500ms, 1, "warning"})));
  const auto t0 = std::chrono::steady_clock::now();
  for (int i = 0; i < 100; ++i) n.post(sample_event());
  EXPECT_LT(std::chrono::steady_clock::now() - t0, 200ms);  // post() only queues
  n.stop();
  EXPECT_EQ(n.num_delivered(), 0u);
  EXPECT_EQ(n.num_failed() + n.num_dropped(), 100u);  // every event accounted for
}

TEST(NotifierTest, SeverityFilterSkipsWarningsForACriticalOnlySink) {
  TestServer server;
  Notifier n(one(make_webhook_sink({server.url(), 2000ms, 0, "critical"})));
  n.post(sample_event("de-bpfo", "warning"));
  n.post(sample_event("de-bpfo", "critical"));
  ASSERT_TRUE(n.wait_idle(5s));
  EXPECT_EQ(server.bodies().size(), 1u);
}

TEST(NotifierTest, RejectsBadWebhookSettings) {
  EXPECT_FALSE(make_webhook_sink({"ftp://x", 1000ms, 0, "warning"}).ok());
  EXPECT_FALSE(make_webhook_sink({"http://x", 1000ms, 99, "warning"}).ok());
}

TEST(NotifierTest, ExecHookGetsTheEventInItsEnvironment) {
  const auto out = std::filesystem::temp_directory_path() / ("tw_exec_" + std::to_string(::getpid()));
  Notifier n(one(make_exec_sink(
      {{"/bin/sh", "-c", "printf '%s|%s|%s|%s' \"$TONEWARDEN_RULE\" \"$TONEWARDEN_SEVERITY\" \"$TONEWARDEN_VALUE\" \"$TONEWARDEN_EVIDENCE\" > " + out.string()},
       5000ms, "warning"})));
  NotifyEvent e = sample_event();
  e.evidence = "/var/lib/tonewarden/evidence/bay4/20010909T014640.000Z-de-bpfo.flac";
  n.post(e);
  ASSERT_TRUE(n.wait_idle(5s));
  std::ifstream in(out);
  std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  EXPECT_EQ(text, "de-bpfo|critical|0.25|/var/lib/tonewarden/evidence/bay4/20010909T014640.000Z-de-bpfo.flac");
  EXPECT_EQ(n.num_delivered(), 1u);
  std::filesystem::remove(out);
}

TEST(NotifierTest, ExecHookPastItsTimeLimitIsStoppedAndCounted) {
  Notifier n(one(make_exec_sink({{"/bin/sleep", "30"}, 200ms, "warning"})));
  const auto t0 = std::chrono::steady_clock::now();
  n.post(sample_event());
  ASSERT_TRUE(n.wait_idle(5s));
  EXPECT_LT(std::chrono::steady_clock::now() - t0, 3s);  // SIGTERM at 200 ms ends sleep
  EXPECT_EQ(n.num_failed(), 1u);
}

TEST(NotifierTest, ExecHookNeedsAnAbsolutePath) {
  auto s = make_exec_sink({{"sleep", "1"}, 1000ms, "warning"});
  ASSERT_FALSE(s.ok());
  EXPECT_NE(s.error().message.find("absolute path"), std::string::npos);
}

}  // namespace
}  // namespace tonewarden::notify
