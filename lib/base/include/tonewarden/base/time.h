// Time types: monotonic instants for durations and pacing, wall time for records.
// They are distinct types so that one can never be passed where the other is meant.
#pragma once

#include <chrono>
#include <cstdint>
#include <string>

namespace tonewarden::base {

// Monotonic time; never goes backwards; meaningless across processes.
using MonoClock = std::chrono::steady_clock;
using MonoTime = MonoClock::time_point;
inline MonoTime mono_now() noexcept { return MonoClock::now(); }

// Wall-clock time as milliseconds since the unix epoch (UTC).
struct WallTimeMs {
  int64_t unix_ms = 0;
  friend auto operator<=>(const WallTimeMs&, const WallTimeMs&) = default;
};
WallTimeMs wall_now() noexcept;

// Wall time `samples` after `start` at `sample_rate_hz` (timestamps follow the sample count).
WallTimeMs wall_after_samples(WallTimeMs start, int64_t samples, double sample_rate_hz) noexcept;

// RFC 3339 UTC with milliseconds, e.g. "2026-12-02T03:00:00.000Z".
std::string format_rfc3339(WallTimeMs t);
// Accepts RFC 3339 ("2026-12-02T03:00:00Z", fractional seconds, +hh:mm offsets)
// or an integer of unix milliseconds. Returns false on anything else.
bool parse_time(const std::string& text, WallTimeMs* out);

}  // namespace tonewarden::base
