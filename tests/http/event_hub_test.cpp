// Focus: the event hub's bounded per-subscriber queue with the drop-oldest policy.
#include "tonewarden/http/event_hub.h"

#include <gtest/gtest.h>
#include <nlohmann/json.hpp>

#include <thread>

namespace tonewarden::http {
namespace {

using std::chrono::milliseconds;

TEST(EventHubTest, DeliversInOrderWithSequenceNumbers) {
  EventHub hub(8);
  auto sub = hub.subscribe();
  ASSERT_NE(sub, nullptr);
  hub.publish("note", R"({"n":1})");
  hub.publish("note", R"({"n":2})");
  std::vector<StreamEvent> got;
  ASSERT_TRUE(sub->wait_and_take(&got, milliseconds(0)));
  ASSERT_EQ(got.size(), 2u);
  EXPECT_EQ(got[0].seq, 1u);
  EXPECT_EQ(got[1].seq, 2u);
  EXPECT_EQ(got[1].data, R"({"n":2})");
  EXPECT_EQ(hub.num_published(), 2u);
}

TEST(EventHubTest, OverflowDropsOldestAndCounts) {
  // Capacity 3, 5 events published without reading: events 1 and 2 are dropped,
  // 3, 4, 5 remain; 2 drops counted for the subscriber and the hub.
  EventHub hub(3);
  auto sub = hub.subscribe();
  for (int i = 1; i <= 5; ++i) hub.publish("n", std::to_string(i));
  std::vector<StreamEvent> got;
  ASSERT_TRUE(sub->wait_and_take(&got, milliseconds(0)));
  ASSERT_EQ(got.size(), 3u);
  EXPECT_EQ(got[0].data, "3");
  EXPECT_EQ(got[0].seq, 3u);  // the gap 1..2 is visible to the client
  EXPECT_EQ(got[2].data, "5");
  EXPECT_EQ(sub->num_dropped(), 2u);
  EXPECT_EQ(hub.num_dropped(), 2u);
}

TEST(EventHubTest, SlowSubscriberDoesNotAffectFastOne) {
  EventHub hub(2);
  auto slow = hub.subscribe();
  auto fast = hub.subscribe();
  std::vector<StreamEvent> got;
  for (int i = 1; i <= 4; ++i) {
    hub.publish("n", std::to_string(i));
    ASSERT_TRUE(fast->wait_and_take(&got, milliseconds(0)));
  }
  EXPECT_EQ(got.size(), 4u);
  EXPECT_EQ(fast->num_dropped(), 0u);
  EXPECT_EQ(slow->num_dropped(), 2u);
}

TEST(EventHubTest, NothingQueuedWithoutSubscribers) {
  EventHub hub(4);
  hub.publish("n", "1");
  EXPECT_EQ(hub.num_published(), 0u);
  auto sub = hub.subscribe();
  EXPECT_EQ(hub.num_subscribers(), 1u);
  sub.reset();
  EXPECT_EQ(hub.num_subscribers(), 0u);
}

TEST(EventHubTest, CloseWakesWaitersAndRefusesNewSubscribers) {
  EventHub hub(4);
  auto sub = hub.subscribe();
  bool result = true;
  std::thread waiter([&] {
    std::vector<StreamEvent> got;
    result = sub->wait_and_take(&got, milliseconds(60000));
  });
  // The waiter may or may not be waiting yet; either way close() must end it.
  hub.close();
  waiter.join();
  EXPECT_FALSE(result);
  EXPECT_EQ(hub.subscribe(), nullptr);
}

TEST(EventHubTest, ReadingsAndAlarmEventsAreJson) {
  EventHub hub(4);
  auto sub = hub.subscribe();
  hub.publish_readings({{"s1", "bay4", "motor_de", "bpfo", "amplitude", "g", 0.5,
                         WallTimeMs{1'000'000'000'000}}});
  AlarmEvent e;
  e.id = 3;
  e.alarm = "a1";
  e.state = "acknowledged";
  e.user = "night shift";
  hub.publish_alarm(e);
  std::vector<StreamEvent> got;
  ASSERT_TRUE(sub->wait_and_take(&got, milliseconds(0)));
  ASSERT_EQ(got.size(), 2u);
  EXPECT_EQ(got[0].type, "readings");
  const auto r = nlohmann::json::parse(got[0].data);
  EXPECT_EQ(r["readings"][0]["series"], "s1");
  EXPECT_EQ(r["readings"][0]["value"], 0.5);
  EXPECT_EQ(r["readings"][0]["t"], "2001-09-09T01:46:40.000Z");  // 1e12 ms, see base tests
  EXPECT_EQ(got[1].type, "alarm");
  EXPECT_EQ(nlohmann::json::parse(got[1].data)["user"], "night shift");
}

}  // namespace
}  // namespace tonewarden::http
