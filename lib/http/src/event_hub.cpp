// EventHub: bounded per-subscriber queues with the drop-oldest overflow policy (event_hub.h).
#include "tonewarden/http/event_hub.h"

#include <condition_variable>
#include <deque>
#include <mutex>

#include "json_codec.h"

namespace tonewarden::http {
namespace detail {

struct SubscriberQueue {
  std::deque<StreamEvent> events;
  uint64_t dropped = 0;
  bool in_use = false;
};

// Shared by the hub and its subscriptions, so that either may go first.
struct HubCore {
  explicit HubCore(size_t capacity) : capacity(capacity) {}
  const size_t capacity;
  mutable std::mutex mu;
  std::condition_variable cv;  // one for all: publishes are rare (about 1 Hz per rig)
  std::vector<SubscriberQueue> slots;  // reused; index held by each subscription
  std::atomic<size_t> num_subscribers{0};
  uint64_t next_seq = 1;
  uint64_t published = 0;
  uint64_t dropped = 0;
  bool closed = false;
};

}  // namespace detail

EventSubscription::EventSubscription(std::shared_ptr<detail::HubCore> core, size_t index)
    : core_(std::move(core)), index_(index) {}

EventSubscription::~EventSubscription() {
  std::lock_guard<std::mutex> lock(core_->mu);
  auto& slot = core_->slots[index_];
  slot.events.clear();
  slot.dropped = 0;
  slot.in_use = false;
  core_->num_subscribers.fetch_sub(1);
}

bool EventSubscription::wait_and_take(std::vector<StreamEvent>* out,
                                      std::chrono::milliseconds timeout) {
  std::unique_lock<std::mutex> lock(core_->mu);
  core_->cv.wait_for(lock, timeout,
                     [&] { return core_->closed || !core_->slots[index_].events.empty(); });
  if (core_->closed) return false;
  auto& q = core_->slots[index_].events;
  for (auto& e : q) out->push_back(std::move(e));
  q.clear();
  return true;
}

uint64_t EventSubscription::num_dropped() const {
  std::lock_guard<std::mutex> lock(core_->mu);
  return core_->slots[index_].dropped;
}

EventHub::EventHub(size_t queue_capacity)
    : core_(std::make_shared<detail::HubCore>(queue_capacity == 0 ? 1 : queue_capacity)) {}

EventHub::~EventHub() { close(); }

std::unique_ptr<EventSubscription> EventHub::subscribe() {
  std::lock_guard<std::mutex> lock(core_->mu);
  if (core_->closed) return nullptr;
  size_t index = 0;
  while (index < core_->slots.size() && core_->slots[index].in_use) ++index;
  if (index == core_->slots.size()) core_->slots.emplace_back();
  core_->slots[index].in_use = true;
  core_->num_subscribers.fetch_add(1);
  return std::make_unique<EventSubscription>(core_, index);
}

void EventHub::publish(std::string_view type, std::string data_json) {
  if (core_->num_subscribers.load() == 0) return;
  {
    std::lock_guard<std::mutex> lock(core_->mu);
    if (core_->closed) return;
    StreamEvent event{core_->next_seq++, std::string(type), std::move(data_json)};
    ++core_->published;
    for (auto& slot : core_->slots) {
      if (!slot.in_use) continue;
      if (slot.events.size() >= core_->capacity) {  // drop-oldest
        slot.events.pop_front();
        ++slot.dropped;
        ++core_->dropped;
      }
      slot.events.push_back(event);
    }
  }
  core_->cv.notify_all();
}

void EventHub::publish_readings(const std::vector<Reading>& readings) {
  if (core_->num_subscribers.load() == 0) return;  // skip formatting when nobody listens
  detail::Json list = detail::Json::array();
  for (const auto& r : readings) list.push_back(detail::to_json(r));
  publish("readings", detail::dump(detail::Json{{"readings", std::move(list)}}));
}

void EventHub::publish_alarm(const AlarmEvent& event) {
  if (core_->num_subscribers.load() == 0) return;
  publish("alarm", detail::dump(detail::to_json(event)));
}

void EventHub::close() {
  {
    std::lock_guard<std::mutex> lock(core_->mu);
    core_->closed = true;
  }
  core_->cv.notify_all();
}

size_t EventHub::num_subscribers() const { return core_->num_subscribers.load(); }

uint64_t EventHub::num_published() const {
  std::lock_guard<std::mutex> lock(core_->mu);
  return core_->published;
}

uint64_t EventHub::num_dropped() const {
  std::lock_guard<std::mutex> lock(core_->mu);
  return core_->dropped;
}

}  // namespace tonewarden::http
