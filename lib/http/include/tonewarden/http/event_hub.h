// EventHub: fans events (readings, alarm changes) out to the open Server-Sent Event streams.
// Each subscriber has a bounded queue of kEventQueueCapacity events.
// Overflow policy: DROP-OLDEST. A slow client loses its oldest queued events, never blocks the
// publisher; every loss is counted (per subscriber and in total), and the event ids carry a
// sequence number, so a client sees the gap.
//
// Threads: publish*() and subscribe() are thread-safe. publish*() takes one mutex, costs
// O(subscribers), and formats JSON only when someone is subscribed; it allocates, so call it
// from a thread that may (the daemon's live publisher), not from the analysis hot path.
#pragma once

#include <atomic>
#include <chrono>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/http/limits.h"
#include "tonewarden/http/providers.h"

namespace tonewarden::http {

struct StreamEvent {
  uint64_t seq = 0;   // 1, 2, 3... across the hub; sent as the SSE "id"
  std::string type;   // SSE "event": "readings", "alarm", or a caller's own type
  std::string data;   // one JSON document
};

namespace detail {
struct HubCore;
}

// One subscriber's queue. Destroying it unsubscribes.
class EventSubscription {
 public:
  explicit EventSubscription(std::shared_ptr<detail::HubCore> core, size_t index);
  ~EventSubscription();
  EventSubscription(const EventSubscription&) = delete;
  EventSubscription& operator=(const EventSubscription&) = delete;

  // Waits up to `timeout` for events, then appends all queued ones to *out (oldest first).
  // Returns false once the hub is closed (the stream should end).
  bool wait_and_take(std::vector<StreamEvent>* out, std::chrono::milliseconds timeout);
  // Events this subscriber lost to the drop-oldest policy.
  uint64_t num_dropped() const;

 private:
  std::shared_ptr<detail::HubCore> core_;
  size_t index_;
};

class EventHub {
 public:
  explicit EventHub(size_t queue_capacity = kEventQueueCapacity);
  ~EventHub();
  EventHub(const EventHub&) = delete;
  EventHub& operator=(const EventHub&) = delete;

  // Returns nullptr once the hub is closed.
  std::unique_ptr<EventSubscription> subscribe();

  // `data_json` must be one JSON document; `type` a short token ([a-z_]+ by convention).
  void publish(std::string_view type, std::string data_json);
  // Event "readings": {"readings":[{series, rig, channel, target, metric, unit, value, t}]}.
  void publish_readings(const std::vector<Reading>& readings);
  // Event "alarm": one alarm event (same shape as in /api/v1/alarms/events).
  void publish_alarm(const AlarmEvent& event);

  // Wakes every subscriber and refuses new ones; streams then end. Idempotent.
  void close();

  size_t num_subscribers() const;
  uint64_t num_published() const;  // events accepted while someone was subscribed
  uint64_t num_dropped() const;    // events lost to overflow, all subscribers together

 private:
  std::shared_ptr<detail::HubCore> core_;
};

}  // namespace tonewarden::http
