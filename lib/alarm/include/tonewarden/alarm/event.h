// Alarm events (one per state or severity change) and the bounded buffer evaluate() fills.
#pragma once

#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <span>
#include <string_view>
#include <vector>

#include "tonewarden/alarm/alarm_state.h"
#include "tonewarden/base/time.h"

namespace tonewarden::alarm {

// A fixed-capacity string, so events and commands copy without allocating. Longer input is
// truncated to N bytes.
template <size_t N>
class FixedText {
 public:
  FixedText() = default;
  explicit FixedText(std::string_view s) noexcept { assign(s); }
  void assign(std::string_view s) noexcept {
    size_ = static_cast<uint16_t>(std::min(s.size(), N));
    std::copy_n(s.data(), size_, data_);
  }
  std::string_view view() const noexcept { return {data_, size_}; }
  bool empty() const noexcept { return size_ == 0; }
  static constexpr size_t capacity() noexcept { return N; }

 private:
  char data_[N] = {};
  uint16_t size_ = 0;
};

inline constexpr size_t kMaxUserBytes = 64;
inline constexpr size_t kMaxCommentBytes = 256;

enum class EventCause {
  kCondition,    // the reading crossed a level (after hysteresis and delays)
  kAcknowledge,  // an operator acknowledged
  kShelve,       // an operator shelved
  kUnshelve,     // an operator unshelved
  kShelfExpired, // the shelf time ran out
};

const char* event_cause_name(EventCause cause) noexcept;

// The string views point into the engine's rule table and stay valid while the AlarmEngine
// that made the event lives; copy them to keep an event longer.
struct AlarmEvent {
  base::WallTimeMs t{};
  uint32_t rule_index = 0;
  std::string_view rule;
  std::string_view reading;
  std::string_view channel;
  double value = 0.0;        // the reading's value at the event (NaN when invalid)
  double threshold = 0.0;    // the level that was crossed (absolute, baseline applied); NaN if none
  Severity severity = Severity::kNone;           // severity of the condition after the event
  Severity previous_severity = Severity::kNone;
  AlarmState state = AlarmState::kNormal;        // new state
  AlarmState previous_state = AlarmState::kNormal;
  EventCause cause = EventCause::kCondition;
  FixedText<kMaxUserBytes> user;        // acknowledge/shelve: who
  FixedText<kMaxCommentBytes> comment;  // acknowledge/shelve: why
};

// A bounded buffer the caller owns and drains after each evaluate().
// Overflow policy: drop-newest. A full buffer rejects the event and counts it.
class EventBuffer {
 public:
  explicit EventBuffer(size_t capacity) { events_.reserve(capacity); capacity_ = capacity; }
  bool push(const AlarmEvent& e) noexcept {
    if (events_.size() >= capacity_) {
      ++dropped_;
      return false;
    }
    events_.push_back(e);  // within reserved capacity: no allocation
    return true;
  }
  std::span<const AlarmEvent> events() const noexcept { return events_; }
  size_t size() const noexcept { return events_.size(); }
  void clear() noexcept { events_.clear(); }
  uint64_t num_dropped() const noexcept { return dropped_; }

 private:
  std::vector<AlarmEvent> events_;
  size_t capacity_ = 0;
  uint64_t dropped_ = 0;
};

}  // namespace tonewarden::alarm
