// HealthTracker: the thread-safe counters behind Source::health(). The capture thread
// updates them; status readers take snapshots from any thread.
#pragma once

#include <atomic>
#include <cstdint>
#include <mutex>
#include <string>
#include <string_view>

#include "tonewarden/source/source.h"

namespace tonewarden::source {

class HealthTracker {
 public:
  // Counter updates are lock-free and allocation-free.
  void set_state(SourceState state) noexcept { state_.store(state, std::memory_order_relaxed); }
  SourceState state() const noexcept { return state_.load(std::memory_order_relaxed); }
  void add_frames(uint64_t frames) noexcept {
    frames_.fetch_add(frames, std::memory_order_relaxed);
  }
  void add_overflows(uint64_t n) noexcept { overflows_.fetch_add(n, std::memory_order_relaxed); }
  void add_underruns(uint64_t n) noexcept { underruns_.fetch_add(n, std::memory_order_relaxed); }

  // Counts one error and keeps its text (takes a lock and copies: not for per-sample use).
  void report_error(std::string_view text);

  SourceHealth snapshot() const;

 private:
  std::atomic<SourceState> state_{SourceState::kWaiting};
  std::atomic<uint64_t> frames_{0};
  std::atomic<uint64_t> overflows_{0};
  std::atomic<uint64_t> underruns_{0};
  std::atomic<uint64_t> errors_{0};
  mutable std::mutex mu_;
  std::string last_error_;
};

}  // namespace tonewarden::source
