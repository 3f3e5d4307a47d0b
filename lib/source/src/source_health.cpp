// HealthTracker: error text under a lock, counters as relaxed atomics; to_string for states.
#include "tonewarden/source/source_health.h"

namespace tonewarden::source {

const char* to_string(SourceState state) noexcept {
  switch (state) {
    case SourceState::kRunning: return "running";
    case SourceState::kWaiting: return "waiting";
    case SourceState::kLost: return "lost";
    case SourceState::kFinished: return "finished";
  }
  return "lost";
}

void HealthTracker::report_error(std::string_view text) {
  errors_.fetch_add(1, std::memory_order_relaxed);
  std::lock_guard<std::mutex> lock(mu_);
  last_error_.assign(text);
}

SourceHealth HealthTracker::snapshot() const {
  SourceHealth h;
  h.state = state_.load(std::memory_order_relaxed);
  h.frames_delivered = frames_.load(std::memory_order_relaxed);
  h.overflows = overflows_.load(std::memory_order_relaxed);
  h.underruns = underruns_.load(std::memory_order_relaxed);
  h.errors = errors_.load(std::memory_order_relaxed);
  std::lock_guard<std::mutex> lock(mu_);
  h.last_error = last_error_;
  return h;
}

}  // namespace tonewarden::source
