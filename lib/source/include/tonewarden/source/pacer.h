// Pacer: holds a non-device source to real time (or not at all), on the monotonic clock.
// Frame k is due at anchor + k / sample_rate_hz; a block is released when its last frame is
// due, the way an audio interface hands over a block once it has been captured. A consumer
// that falls behind is served at once until it catches up: timestamps follow the sample
// count, never the reading time.
#pragma once

#include <chrono>
#include <condition_variable>
#include <cstdint>
#include <mutex>
#include <optional>
#include <string_view>

#include "tonewarden/base/time.h"

namespace tonewarden::source {

enum class Pace {
  kRealTime,  // one second of samples per second
  kFast,      // as fast as the CPU allows (tests, benchmarks, batch analysis)
};
const char* to_string(Pace pace) noexcept;
// "realtime" or "fast"; nullopt otherwise.
std::optional<Pace> parse_pace(std::string_view text) noexcept;

// Threads: one thread calls start()/wait_until_due()/sleep_for(); stop() from any thread.
class Pacer {
 public:
  // sample_rate_hz > 0.
  Pacer(Pace pace, double sample_rate_hz);

  Pace pace() const noexcept { return pace_; }
  // Anchors frame 0 at `anchor` (default: now).
  void start(base::MonoTime anchor = base::mono_now()) noexcept;
  // Re-anchors so that `frame` is due at `at` (after an idle gap that is not signal).
  void rebase(int64_t frame, base::MonoTime at = base::mono_now()) noexcept;
  // Returns once frame `frame` is due (immediately for kFast, or when already late).
  // Returns false if stop() was called before or during the wait.
  bool wait_until_due(int64_t frame);
  // Sleeps `duration` unless stopped first; false if stopped.
  bool sleep_for(std::chrono::nanoseconds duration);
  // Thread-safe, idempotent; wakes any wait.
  void stop() noexcept;
  bool stopped() const noexcept;

  // Monotonic instant at which `frame` is due.
  base::MonoTime due_time(int64_t frame) const noexcept;
  // Pacing waits that actually slept (0 for a fast pacer, ever); sleep_for() not counted.
  uint64_t num_sleeps() const noexcept { return sleeps_; }

 private:
  bool sleep_until(base::MonoTime deadline, bool pacing);

  Pace pace_;
  double ns_per_frame_;
  base::MonoTime anchor_{};
  uint64_t sleeps_ = 0;
  mutable std::mutex mu_;
  std::condition_variable cv_;
  bool stop_ = false;
};

}  // namespace tonewarden::source
