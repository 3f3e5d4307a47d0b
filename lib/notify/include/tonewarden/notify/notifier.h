// Notifier: delivers alarm events to the outside world (a webhook, an exec hook) without ever
// blocking the analysis thread that raises them.
//
// DESIGN: post() copies the event into a bounded queue and returns at once; one worker thread
// per Notifier drains it and calls each sink in turn. Overflow policy: drop-oldest (a storm
// keeps the newest events), counted in num_dropped(). A sink that fails retries with backoff
// up to its own limit, then gives up on that event (counted in num_failed()).
//
// tonewarden is a monitoring aid. An exec hook may stop a rig, but a rig's safety must rest on
// certified protection designed to local codes, never on this hook.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "tonewarden/alarm/event.h"
#include "tonewarden/base/result.h"

namespace tonewarden::notify {

// An alarm event with its own copies of every string (alarm::AlarmEvent only borrows them).
struct NotifyEvent {
  base::WallTimeMs t;
  std::string rig;
  std::string rule;
  std::string reading;
  std::string channel;
  std::string severity;        // none, warning, critical
  std::string state;           // ISA-18.2 state entered
  std::string previous_state;
  std::string cause;           // condition, acknowledge, shelve, ...
  double value = 0;            // NaN when the reading was invalid
  double threshold = 0;        // NaN when none
  std::string user;
  std::string comment;
  std::string evidence;        // path of the raw clip written for this activation; "" if none
};

NotifyEvent make_notify_event(const std::string& rig, const alarm::AlarmEvent& e);
// The event as one JSON object (the webhook's body).
std::string to_json(const NotifyEvent& e);

// One way out. Called on the notifier's worker thread only.
class Sink {
 public:
  virtual ~Sink() = default;
  // One attempt; an Error is retried by the caller within the sink's retry budget.
  virtual base::Status deliver(const NotifyEvent& e) = 0;
  virtual int max_attempts() const = 0;                 // >= 1
  virtual std::string describe() const = 0;
  // Events below this severity are not sent ("warning" sends warning and critical).
  std::string min_severity = "warning";
};

struct WebhookConfig {
  std::string url;                          // http:// or https://
  std::chrono::milliseconds timeout{5000};  // per attempt, connect included
  int retries = 3;                          // extra attempts after the first, [0, 20]
  std::string min_severity = "warning";
};
base::Result<std::unique_ptr<Sink>> make_webhook_sink(const WebhookConfig& config);

struct ExecConfig {
  std::vector<std::string> argv;            // argv[0] is an absolute path; no shell involved
  std::chrono::milliseconds timeout{10000}; // then SIGTERM, and SIGKILL a second later
  std::string min_severity = "warning";
};
// The command gets the event in TONEWARDEN_* environment variables (see exec_sink.cpp).
base::Result<std::unique_ptr<Sink>> make_exec_sink(const ExecConfig& config);

class Notifier {
 public:
  static constexpr size_t kQueueCapacity = 1024;
  static constexpr auto kRetryBackoffInitial = std::chrono::milliseconds(200);

  explicit Notifier(std::vector<std::unique_ptr<Sink>> sinks);
  ~Notifier();  // stop(): waits for the event in flight, drops the rest (counted)

  // Any thread; never blocks on delivery.
  void post(NotifyEvent event);
  void stop();
  // Waits until the queue is empty and nothing is in flight, or the timeout passes.
  bool wait_idle(std::chrono::milliseconds timeout);

  uint64_t num_delivered() const;
  uint64_t num_failed() const;
  uint64_t num_dropped() const;
  size_t num_sinks() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::notify
