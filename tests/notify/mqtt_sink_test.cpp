// Focus: the MQTT sink against a private mosquitto broker: alarm JSON on <prefix>/<rig>/alarm,
// retained online/offline status and the Last Will, queueing while the broker is down with
// drop-oldest, the readings rate limit, password files, and clear errors for bad settings.
// Expected values come from the MQTT 3.1.1 rules (OASIS standard: §4.7 topic names, §3.1.2.5
// Will, §3.3.1.3 RETAIN; section numbers from memory) and from the events and settings each test builds.
#include "tonewarden/notify/mqtt_sink.h"

#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <nlohmann/json.hpp>

#include "notify/mqtt_test_broker.h"
#include "notify/sample_event.h"
#include "support/subprocess.h"
#include "support/temp_dir.h"

namespace tonewarden::notify {
namespace {

using testing::sample_event;

using namespace std::chrono_literals;
using testing::eventually;
using testing::MqttBroker;
using testing::MqttMessage;
using testing::MqttSubscriber;
using testing::TempDir;

constexpr char kAlarmTopic[] = "tw-test/site1/bay4/alarm";
constexpr char kReadingTopic[] = "tw-test/site1/bay4/reading";
constexpr char kStatusTopic[] = "tw-test/site1/bay4/status";

MqttConfig config_for(int port) {
  MqttConfig c;
  c.port = port;
  c.topic_prefix = "tw-test/site1/";  // the trailing '/' is dropped: no empty topic level
  c.client_id = "tw-test-" + std::to_string(::getpid());
  c.rigs = {"bay4"};
  c.keepalive_s = 5;
  c.reconnect_min = 50ms;  // short, so that the tests see retries quickly
  c.reconnect_max = 400ms;
  return c;
}

std::unique_ptr<MqttSink> make_sink(const MqttConfig& c) {
  auto s = make_mqtt_sink(c);
  EXPECT_TRUE(s.ok()) << s.error().message;
  return s.ok() ? std::move(s).value() : nullptr;
}

// A broker on a free port and a sink connected to it (members end in reverse order).
struct Connected {
  TempDir dir{"tw_mqtt"};
  MqttBroker broker{dir.path(), testing::free_tcp_port(), {}};
  std::unique_ptr<MqttSink> sink;
};

void connect(Connected& c) {
  ASSERT_TRUE(c.broker.start()) << c.broker.log();
  c.sink = make_sink(config_for(c.broker.port()));
  ASSERT_TRUE(c.sink);
  ASSERT_TRUE(eventually([&] { return c.sink->connected(); })) << c.broker.log();
}

bool has_payload(const std::vector<MqttMessage>& ms, const std::string& payload) {
  for (const auto& m : ms) {
    if (m.payload == payload) return true;
  }
  return false;
}

std::vector<std::string> rules_of(const std::vector<MqttMessage>& ms) {
  std::vector<std::string> rules;
  for (const auto& m : ms)
    rules.push_back(nlohmann::json::parse(m.payload).at("rule").get<std::string>());
  return rules;
}

TEST(MqttSinkTest, AlarmEventArrivesOnTheRigsAlarmTopicAsJson) {
  Connected up;
  ASSERT_NO_FATAL_FAILURE(connect(up));
  auto& [dir, broker, sink] = up;
  MqttSubscriber sub(broker.port(), "tw-test/#");
  ASSERT_TRUE(sub.ok()) << sub.error();

  ASSERT_TRUE(sink->deliver(sample_event()).ok());
  ASSERT_TRUE(sub.wait_on(kAlarmTopic, [](auto& ms) { return !ms.empty(); })) << broker.log();
  const MqttMessage m = sub.on_topic(kAlarmTopic).at(0);
  EXPECT_FALSE(m.retained);  // events are not retained: a late subscriber must not see old ones
  const auto j = nlohmann::json::parse(m.payload);
  EXPECT_EQ(j.at("t"), "2001-09-09T01:46:40.000Z");
  EXPECT_EQ(j.at("rig"), "bay4");
  EXPECT_EQ(j.at("rule"), "de-bpfo");
  EXPECT_EQ(j.at("reading"), "motor-de.bpfo.amplitude");
  EXPECT_EQ(j.at("channel"), "motor-de");
  EXPECT_EQ(j.at("severity"), "critical");
  EXPECT_EQ(j.at("state"), "unacknowledged");
  EXPECT_EQ(j.at("previous_state"), "normal");
  EXPECT_EQ(j.at("cause"), "condition");
  EXPECT_DOUBLE_EQ(j.at("value").get<double>(), 0.25);
  EXPECT_DOUBLE_EQ(j.at("threshold").get<double>(), 0.2);
  // QoS 1: counted as sent once the broker's PUBACK is in.
  EXPECT_TRUE(eventually([&] { return sink->counters().alarms_sent == 1; }));
  EXPECT_EQ(sink->counters().alarms_dropped, 0u);

  // An event for a rig the sink was not built for is refused with its name, not lost quietly.
  NotifyEvent other = sample_event();
  other.rig = "bay9";
  const auto st = sink->deliver(other);
  ASSERT_FALSE(st.ok());
  EXPECT_NE(st.error().message.find("'bay9'"), std::string::npos) << st.error().message;
}

TEST(MqttSinkTest, RigNamesBecomeSingleTopicLevels) {
  // MQTT 3.1.1 §4.7: '/' separates levels, '+' and '#' are wildcards, '$' topics are the broker's.
  EXPECT_EQ(mqtt_topic_segment("bay4-pump"), "bay4-pump");
  EXPECT_EQ(mqtt_topic_segment("hall/b+#"), "hall_b__");
  EXPECT_EQ(mqtt_topic_segment("$SYS"), "_SYS");
  EXPECT_EQ(mqtt_topic_segment(""), "_");
}

TEST(MqttSinkTest, StatusIsRetainedOnlineThenOfflineAfterStop) {
  Connected up;
  ASSERT_NO_FATAL_FAILURE(connect(up));
  auto& [dir, broker, sink] = up;

  // A subscriber that arrives later gets "online" from the broker's retained store (§3.3.1.3).
  MqttSubscriber before(broker.port(), kStatusTopic);
  ASSERT_TRUE(before.ok()) << before.error();
  ASSERT_TRUE(before.wait_on(kStatusTopic, [](auto& ms) { return has_payload(ms, "online"); }));
  EXPECT_TRUE(before.on_topic(kStatusTopic).at(0).retained);

  sink->stop();
  EXPECT_FALSE(sink->connected());
  ASSERT_TRUE(before.wait_on(kStatusTopic, [](auto& ms) { return has_payload(ms, "offline"); }));
  MqttSubscriber after(broker.port(), kStatusTopic);
  ASSERT_TRUE(after.ok()) << after.error();
  ASSERT_TRUE(after.wait_on(kStatusTopic, [](auto& ms) { return !ms.empty(); }));
  EXPECT_EQ(after.on_topic(kStatusTopic).at(0).payload, "offline");
  EXPECT_TRUE(after.on_topic(kStatusTopic).at(0).retained);
  sink->stop();  // idempotent
}

int thread_count() {
  std::ifstream in("/proc/self/status");
  std::string line;
  while (std::getline(in, line)) {
    if (line.rfind("Threads:", 0) == 0) return std::stoi(line.substr(8));
  }
  return -1;
}

TEST(MqttSinkTest, LastWillMarksTheRigOfflineWhenItsProcessDies) {
  TempDir dir("tw_mqtt");
  MqttBroker broker(dir.path(), testing::free_tcp_port(), {});
  ASSERT_TRUE(broker.start()) << broker.log();
  // fork() copies only the calling thread: safe while it is the only one.
  ASSERT_EQ(thread_count(), 1);
  const pid_t child = ::fork();
  ASSERT_GE(child, 0);
  if (child == 0) {
    ::alarm(60);  // never outlive a parent that failed before killing us
    auto s = make_mqtt_sink(config_for(broker.port()));
    if (!s) ::_exit(3);
    for (;;) ::pause();  // hold the connection until SIGKILL; stop() never runs
  }
  MqttSubscriber sub(broker.port(), kStatusTopic);
  ASSERT_TRUE(sub.ok()) << sub.error();
  const bool online = sub.wait_on(kStatusTopic, [](auto& ms) { return has_payload(ms, "online"); });
  ::kill(child, SIGKILL);
  int status = 0;
  ::waitpid(child, &status, 0);
  ASSERT_TRUE(online) << broker.log();
  ASSERT_TRUE(WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL)
      << "child ended on its own: " << status;

  // The socket closed without DISCONNECT: the broker publishes the Will (§3.1.2.5), retained.
  ASSERT_TRUE(sub.wait_on(kStatusTopic, [](auto& ms) { return has_payload(ms, "offline"); }));
  const auto seen = sub.on_topic(kStatusTopic);
  EXPECT_EQ(seen.front().payload, "online");
  EXPECT_EQ(seen.back().payload, "offline");
  MqttSubscriber late(broker.port(), kStatusTopic);
  ASSERT_TRUE(late.ok()) << late.error();
  ASSERT_TRUE(late.wait_on(kStatusTopic, [](auto& ms) { return !ms.empty(); }));
  EXPECT_EQ(late.on_topic(kStatusTopic).at(0).payload, "offline");
  EXPECT_TRUE(late.on_topic(kStatusTopic).at(0).retained);
}

// A broker that holds a persistent session subscribed to the alarm topic, then goes down: events
// published after it comes back wait in that session, so no subscriber has to win a race with
// the sink's reconnect.
const testing::MqttSubscriberOptions kPersistentSub{"tw-test-sub", false, "", ""};

void subscribe_then_stop(MqttBroker& broker) {
  ASSERT_TRUE(broker.start()) << broker.log();
  {
    MqttSubscriber sub(broker.port(), kAlarmTopic, kPersistentSub);
    ASSERT_TRUE(sub.ok()) << sub.error();
  }
  broker.stop();
}

TEST(MqttSinkTest, EventsQueuedWhileTheBrokerIsDownArriveAfterItStarts) {
  TempDir dir("tw_mqtt");
  MqttBroker broker(dir.path(), testing::free_tcp_port(), {.persistence = true});
  subscribe_then_stop(broker);
  ASSERT_FALSE(HasFatalFailure());

  auto sink = make_sink(config_for(broker.port()));
  ASSERT_TRUE(sink);
  for (const char* rule : {"r0", "r1", "r2"}) ASSERT_TRUE(sink->deliver(sample_event(rule)).ok());
  ASSERT_TRUE(eventually([&] { return sink->counters().connect_failures >= 2; }));  // retried
  EXPECT_FALSE(sink->connected());
  EXPECT_EQ(sink->counters().alarms_sent, 0u);

  ASSERT_TRUE(broker.start()) << broker.log();
  ASSERT_TRUE(eventually([&] { return sink->counters().alarms_sent == 3; })) << broker.log();
  MqttSubscriber sub(broker.port(), kAlarmTopic, kPersistentSub);
  ASSERT_TRUE(sub.ok()) << sub.error();
  ASSERT_TRUE(sub.wait_on(kAlarmTopic, [](auto& ms) { return ms.size() >= 3; })) << broker.log();
  EXPECT_EQ(rules_of(sub.on_topic(kAlarmTopic)), (std::vector<std::string>{"r0", "r1", "r2"}));
  EXPECT_EQ(sink->counters().alarms_dropped, 0u);
  EXPECT_EQ(sink->counters().connects, 1u);
}

TEST(MqttSinkTest, QueueOverflowDropsTheOldestAndCountsThem) {
  TempDir dir("tw_mqtt");
  MqttBroker broker(dir.path(), testing::free_tcp_port(), {.persistence = true});
  subscribe_then_stop(broker);
  ASSERT_FALSE(HasFatalFailure());

  MqttConfig c = config_for(broker.port());
  c.max_queued_alarms = 3;
  auto sink = make_sink(c);
  ASSERT_TRUE(sink);
  for (const char* rule : {"r0", "r1", "r2", "r3", "r4"})
    ASSERT_TRUE(sink->deliver(sample_event(rule)).ok());
  EXPECT_EQ(sink->counters().alarms_dropped, 2u);  // 5 events into 3 places

  ASSERT_TRUE(broker.start()) << broker.log();
  ASSERT_TRUE(eventually([&] { return sink->counters().alarms_sent == 3; })) << broker.log();
  MqttSubscriber sub(broker.port(), kAlarmTopic, kPersistentSub);
  ASSERT_TRUE(sub.ok()) << sub.error();
  ASSERT_TRUE(sub.wait_on(kAlarmTopic, [](auto& ms) { return ms.size() >= 3; })) << broker.log();
  EXPECT_EQ(rules_of(sub.on_topic(kAlarmTopic)), (std::vector<std::string>{"r2", "r3", "r4"}));
  EXPECT_EQ(sink->counters().alarms_dropped, 2u);
}

TEST(MqttSinkTest, ReconnectsAfterTheBrokerRestartsAndSaysOnlineAgain) {
  Connected up;
  ASSERT_NO_FATAL_FAILURE(connect(up));
  auto& [dir, broker, sink] = up;
  broker.stop();  // without persistence the retained "online" goes with it
  ASSERT_TRUE(eventually([&] { return !sink->connected(); }));
  ASSERT_TRUE(broker.start()) << broker.log();
  ASSERT_TRUE(eventually([&] { return sink->counters().connects == 2; })) << broker.log();
  MqttSubscriber sub(broker.port(), kStatusTopic);
  ASSERT_TRUE(sub.ok()) << sub.error();
  ASSERT_TRUE(sub.wait_on(kStatusTopic, [](auto& ms) { return has_payload(ms, "online"); }));
}

TEST(MqttSinkTest, NothingQueuedIsLostSilentlyAtStop) {
  auto sink = make_sink(config_for(testing::free_tcp_port()));  // nothing listens there
  ASSERT_TRUE(sink);
  ASSERT_TRUE(sink->deliver(sample_event("r0")).ok());
  ASSERT_TRUE(sink->deliver(sample_event("r1")).ok());
  sink->stop();
  ASSERT_TRUE(sink->deliver(sample_event("r2")).ok());  // after stop: counted, never sent
  const MqttCounters c = sink->counters();
  EXPECT_EQ(c.alarms_sent, 0u);
  EXPECT_EQ(c.alarms_dropped, 3u);
}

track::ReadingSet two_readings() {
  track::ReadingSet r;
  EXPECT_TRUE(r.add("motor-de.rms", "g", "motor-de").ok());
  EXPECT_TRUE(r.add("speed.rpm", "rpm", "").ok());
  return r;
}

TEST(MqttSinkTest, ReadingsAreRateLimitedToOnePerInterval) {
  TempDir dir("tw_mqtt");
  MqttBroker broker(dir.path(), testing::free_tcp_port(), {});
  ASSERT_TRUE(broker.start()) << broker.log();
  MqttSubscriber sub(broker.port(), kReadingTopic);
  ASSERT_TRUE(sub.ok()) << sub.error();
  MqttConfig c = config_for(broker.port());
  c.publish_readings = true;
  c.readings_interval = 400ms;  // well above the link's 100 ms loop tick

  const auto t0 = std::chrono::steady_clock::now();
  auto sink = make_sink(c);
  ASSERT_TRUE(sink);
  track::ReadingSet r = two_readings();
  r.invalidate(1);  // speed unknown: sent as null
  // Offer far faster than the interval (every ms against 400 ms), as an analysis thread with
  // short periods would, for at least 4 intervals and until three sets have arrived, however
  // long a loaded machine takes. Without the limit a set would go out on every loop tick.
  uint64_t offered = 0;
  bool arrived = false;
  for (const auto deadline = t0 + testing::kMqttWait;
       !arrived && std::chrono::steady_clock::now() < deadline;) {
    r.set(0, 0.5 + 0.001 * static_cast<double>(offered));
    r.set_time(base::WallTimeMs{1'000'000'000'000 + static_cast<int64_t>(offered)});
    sink->offer_readings("bay4", r);
    ++offered;
    std::this_thread::sleep_for(1ms);
    arrived = sub.on_topic(kReadingTopic).size() >= 3 &&
              std::chrono::steady_clock::now() - t0 >= 4 * c.readings_interval;
  }
  sink->stop();
  const auto elapsed = std::chrono::steady_clock::now() - t0;
  ASSERT_TRUE(arrived) << broker.log();

  // The link publishes only when the interval has passed since its last publish, so n sets need
  // at least (n - 1) intervals: n <= elapsed / interval + 1 over the sink's whole life.
  const uint64_t bound = static_cast<uint64_t>(elapsed / c.readings_interval) + 1;
  const MqttCounters k = sink->counters();
  EXPECT_LE(k.readings_sent, bound) << "offered " << offered << " in " << (elapsed / 1ms) << " ms";
  EXPECT_LE(sub.on_topic(kReadingTopic).size(), k.readings_sent);
  EXPECT_GE(offered, k.readings_sent + k.readings_skipped);

  const auto j = nlohmann::json::parse(sub.on_topic(kReadingTopic).at(0).payload);
  EXPECT_EQ(j.at("rig"), "bay4");
  EXPECT_TRUE(j.at("values").at("motor-de.rms").is_number());
  EXPECT_TRUE(j.at("values").at("speed.rpm").is_null());
  EXPECT_EQ(j.at("units").at("motor-de.rms"), "g");
  EXPECT_EQ(j.at("units").at("speed.rpm"), "rpm");
  EXPECT_EQ(j.at("t").get<std::string>().rfind("2001-09-09T01:46:", 0), 0u) << j.at("t");
}

TEST(MqttSinkTest, ReadingsAreNotPublishedUnlessAskedFor) {
  Connected up;  // publish_readings = false
  ASSERT_NO_FATAL_FAILURE(connect(up));
  auto& [dir, broker, sink] = up;
  MqttSubscriber sub(broker.port(), "tw-test/#");
  ASSERT_TRUE(sub.ok()) << sub.error();
  track::ReadingSet r = two_readings();
  r.set(0, 1.0);
  r.set(1, 1500.0);
  for (int i = 0; i < 100; ++i) sink->offer_readings("bay4", r);
  // The loop pass that publishes this event would publish a due reading set right after it,
  // before the broker's PUBACK can come back in a later pass.
  ASSERT_TRUE(sink->deliver(sample_event()).ok());
  ASSERT_TRUE(eventually([&] { return sink->counters().alarms_sent == 1; }));
  EXPECT_EQ(sink->counters().readings_sent, 0u);
  EXPECT_TRUE(sub.on_topic(kReadingTopic).empty());
}

void write_file(const std::filesystem::path& p, const std::string& text) {
  std::ofstream(p, std::ios::binary) << text;
}

TEST(MqttSinkTest, PasswordFileLogsInAndAWrongPasswordIsRefused) {
  TempDir dir("tw_mqtt");
  const std::string passwd = (dir / "passwd").string();
  const auto made = testing::run_process(
      {testing::kMosquittoPasswd, "-c", "-b", passwd, "tw-user", "correct horse"});
  ASSERT_EQ(made.exit_code, 0) << made.stderr_text;
  MqttBroker broker(dir.path(), testing::free_tcp_port(), {.password_file = passwd});
  ASSERT_TRUE(broker.start()) << broker.log();
  MqttSubscriber sub(broker.port(), "tw-test/#", {"", true, "tw-user", "correct horse"});
  ASSERT_TRUE(sub.ok()) << sub.error();

  write_file(dir / "good", "correct horse\n");  // one trailing newline, as editors write it
  MqttConfig good = config_for(broker.port());
  good.username = "tw-user";
  good.password_file = (dir / "good").string();
  auto ok_sink = make_sink(good);
  ASSERT_TRUE(ok_sink);
  ASSERT_TRUE(sub.wait_on(kStatusTopic, [](auto& ms) { return has_payload(ms, "online"); }))
      << broker.log();

  write_file(dir / "bad", "wrong horse\n");
  MqttConfig bad = good;
  bad.rigs = {"bay5"};
  bad.password_file = (dir / "bad").string();
  auto refused = make_sink(bad);
  ASSERT_TRUE(refused);
  ASSERT_TRUE(eventually([&] { return refused->counters().connect_failures >= 2; }))
      << broker.log();
  EXPECT_FALSE(refused->connected());
  EXPECT_EQ(refused->counters().connects, 0u);
  EXPECT_TRUE(sub.on_topic("tw-test/site1/bay5/status").empty());
  EXPECT_EQ(refused->describe().find("horse"), std::string::npos);  // the password is never shown
}

TEST(MqttSinkTest, BadSettingsGetClearErrors) {
  TempDir dir("tw_mqtt");
  write_file(dir / "empty", "\n");
  write_file(dir / "two-lines", "first\nsecond\n");
  const std::string missing = (dir / "missing").string();
  struct Case {
    std::function<void(MqttConfig&)> change;
    std::string expected;  // part of the message
  };
  const std::vector<Case> cases = {
      {[](MqttConfig& c) { c.topic_prefix = "site/+/x"; },
       "topic_prefix 'site/+/x' must not contain '+', '#' or NUL"},
      {[](MqttConfig& c) { c.topic_prefix = "site/#"; },
       "topic_prefix 'site/#' must not contain '+', '#' or NUL"},
      {[](MqttConfig& c) { c.topic_prefix = "$SYS/x"; }, "must not start with '$'"},
      {[](MqttConfig& c) { c.topic_prefix = "site\xff"; }, "is not valid UTF-8"},
      {[](MqttConfig& c) { c.host = ""; }, "host is empty"},
      {[](MqttConfig& c) { c.port = 0; }, "port 0 is outside [1, 65535]"},
      {[](MqttConfig& c) { c.qos = 3; }, "qos 3 is outside [0, 2]"},
      {[](MqttConfig& c) { c.keepalive_s = 1; }, "keepalive_s 1 is outside [5, 65535] s"},
      {[](MqttConfig& c) { c.password_file = "/etc/hostname"; }, "password_file needs a username"},
      {[](MqttConfig& c) { c.rigs.clear(); }, "no rigs"},
      {[](MqttConfig& c) {
         c.rigs = {"a/b", "a_b"};
       },
       "rigs 'a/b' and 'a_b' would share the topic level 'a_b'"},
      {[](MqttConfig& c) { c.min_severity = "info"; },
       "min_severity 'info' is not warning or critical"},
      {[](MqttConfig& c) { c.reconnect_max = 10ms; }, "reconnect backoff needs 1 ms <= min <= max"},
      {[](MqttConfig& c) { c.readings_interval = 0ms; }, "readings_interval must be >= 1 ms"},
      {[](MqttConfig& c) { c.max_queued_alarms = 0; }, "max_queued_alarms must be >= 1"},
      {[&](MqttConfig& c) {
         c.username = "u";
         c.password_file = missing;
       },
       "password_file '" + missing + "': cannot read: No such file or directory"},
      {[&](MqttConfig& c) {
         c.username = "u";
         c.password_file = (dir / "empty").string();
       },
       "is empty"},
      {[&](MqttConfig& c) {
         c.username = "u";
         c.password_file = (dir / "two-lines").string();
       },
       "must hold the password on one line"},
  };
  for (const Case& k : cases) {
    MqttConfig c = config_for(1883);
    k.change(c);
    auto s = make_mqtt_sink(c);
    ASSERT_FALSE(s.ok()) << k.expected;
    EXPECT_EQ(s.error().message.rfind("mqtt: ", 0), 0u) << s.error().message;
    EXPECT_NE(s.error().message.find(k.expected), std::string::npos)
        << "got: " << s.error().message << "\nwanted: " << k.expected;
  }
}

}  // namespace
}  // namespace tonewarden::notify
