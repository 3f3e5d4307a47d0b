// Notifier: bounded queue, one worker thread, retries with backoff per sink.
#include "tonewarden/notify/notifier.h"

#include <nlohmann/json.hpp>

#include <cmath>
#include <condition_variable>
#include <deque>
#include <mutex>
#include <thread>

#include "tonewarden/alarm/alarm_state.h"
#include "tonewarden/base/log.h"

namespace tonewarden::notify {
namespace {

int severity_rank(const std::string& s) { return s == "critical" ? 2 : (s == "warning" ? 1 : 0); }

}  // namespace

NotifyEvent make_notify_event(const std::string& rig, const alarm::AlarmEvent& e) {
  NotifyEvent n;
  n.t = e.t;
  n.rig = rig;
  n.rule = std::string(e.rule);
  n.reading = std::string(e.reading);
  n.channel = std::string(e.channel);
  n.severity = alarm::severity_name(e.severity);
  n.state = alarm::alarm_state_name(e.state);
  n.previous_state = alarm::alarm_state_name(e.previous_state);
  n.cause = alarm::event_cause_name(e.cause);
  n.value = e.value;
  n.threshold = e.threshold;
  n.user = std::string(e.user.view());
  n.comment = std::string(e.comment.view());
  return n;
}

std::string to_json(const NotifyEvent& e) {
  auto num = [](double v) { return std::isfinite(v) ? nlohmann::json(v) : nlohmann::json(nullptr); };
  nlohmann::json j = {{"t", base::format_rfc3339(e.t)},
                      {"rig", e.rig},
                      {"rule", e.rule},
                      {"reading", e.reading},
                      {"channel", e.channel},
                      {"severity", e.severity},
                      {"state", e.state},
                      {"previous_state", e.previous_state},
                      {"cause", e.cause},
                      {"value", num(e.value)},
                      {"threshold", num(e.threshold)},
                      {"user", e.user},
                      {"comment", e.comment},
                      {"evidence", e.evidence.empty() ? nlohmann::json(nullptr) : nlohmann::json(e.evidence)}};
  return j.dump();
}

struct Notifier::Impl {
  std::vector<std::unique_ptr<Sink>> sinks;
  std::mutex mu;
  std::condition_variable cv;
  std::deque<NotifyEvent> queue;
  bool stopping = false;
  bool busy = false;
  uint64_t delivered = 0, failed = 0, dropped = 0;
  std::thread worker;

  void run() {
    while (true) {
      NotifyEvent e;
      {
        std::unique_lock lock(mu);
        cv.wait(lock, [&] { return stopping || !queue.empty(); });
        if (stopping) return;
        e = std::move(queue.front());
        queue.pop_front();
        busy = true;
      }
      for (auto& sink : sinks) {
        if (severity_rank(e.severity) < severity_rank(sink->min_severity) &&
            e.state != "normal" && e.cause == "condition") {
          continue;  // below the sink's severity (returns to normal are always sent)
        }
        deliver_with_retries(*sink, e);
      }
      {
        std::lock_guard lock(mu);
        busy = false;
      }
      cv.notify_all();
    }
  }

  void deliver_with_retries(Sink& sink, const NotifyEvent& e) {
    auto backoff = kRetryBackoffInitial;
    for (int attempt = 1;; ++attempt) {
      const base::Status st = sink.deliver(e);
      if (st.ok()) {
        std::lock_guard lock(mu);
        ++delivered;
        return;
      }
      if (attempt >= sink.max_attempts()) {
        base::log_warn("notify: " + sink.describe() + ": giving up on " + e.rule + " after " +
                       std::to_string(attempt) + " attempt(s): " + st.error().message);
        std::lock_guard lock(mu);
        ++failed;
        return;
      }
      std::unique_lock lock(mu);
      if (cv.wait_for(lock, backoff, [&] { return stopping; })) {
        ++failed;
        return;
      }
      backoff *= 2;
    }
  }
};

Notifier::Notifier(std::vector<std::unique_ptr<Sink>> sinks) : impl_(std::make_unique<Impl>()) {
  impl_->sinks = std::move(sinks);
  impl_->worker = std::thread([this] { impl_->run(); });
}

Notifier::~Notifier() { stop(); }

void Notifier::post(NotifyEvent event) {
  if (impl_->sinks.empty()) return;
  {
    std::lock_guard lock(impl_->mu);
    if (impl_->stopping) return;
    if (impl_->queue.size() >= kQueueCapacity) {
      impl_->queue.pop_front();
      ++impl_->dropped;
    }
    impl_->queue.push_back(std::move(event));
  }
  impl_->cv.notify_all();
}

void Notifier::stop() {
  {
    std::lock_guard lock(impl_->mu);
    if (impl_->stopping) return;
    impl_->stopping = true;
    impl_->dropped += impl_->queue.size();
    impl_->queue.clear();
  }
  impl_->cv.notify_all();
  if (impl_->worker.joinable()) impl_->worker.join();
}

bool Notifier::wait_idle(std::chrono::milliseconds timeout) {
  std::unique_lock lock(impl_->mu);
  return impl_->cv.wait_for(lock, timeout, [&] { return impl_->queue.empty() && !impl_->busy; });
}

uint64_t Notifier::num_delivered() const { std::lock_guard l(impl_->mu); return impl_->delivered; }
uint64_t Notifier::num_failed() const { std::lock_guard l(impl_->mu); return impl_->failed; }
uint64_t Notifier::num_dropped() const { std::lock_guard l(impl_->mu); return impl_->dropped; }
size_t Notifier::num_sinks() const { return impl_->sinks.size(); }

}  // namespace tonewarden::notify
