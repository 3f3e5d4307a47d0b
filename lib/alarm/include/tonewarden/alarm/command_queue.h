// CommandQueue: operator commands (acknowledge, shelve, unshelve) from any thread to the
// analysis thread that owns the AlarmEngine.
// Overflow policy: reject-newest. push() on a full queue stores nothing, returns false and
// counts it; the caller reports "busy" (HTTP 503) and the operator retries.
// Producers may block briefly on a mutex; the consumer's drain() only try-locks, so the
// analysis thread never waits (a contended drain is simply retried next period).
#pragma once

#include <cstddef>
#include <cstdint>
#include <mutex>
#include <span>
#include <vector>

#include "tonewarden/alarm/event.h"
#include "tonewarden/base/time.h"

namespace tonewarden::alarm {

enum class CommandKind { kAcknowledge, kShelve, kUnshelve };

struct AlarmCommand {
  CommandKind kind = CommandKind::kAcknowledge;
  uint32_t rule_index = 0;
  base::WallTimeMs t{};
  int64_t duration_ms = 0;  // kShelve
  FixedText<kMaxUserBytes> user;
  FixedText<kMaxCommentBytes> comment;
};

class CommandQueue {
 public:
  explicit CommandQueue(size_t capacity);  // capacity >= 1; allocates once

  // Any thread. False when full (nothing stored).
  bool push(const AlarmCommand& command) noexcept;
  // Consumer only. Moves up to out.size() commands, oldest first; 0 if the lock is busy.
  size_t drain(std::span<AlarmCommand> out) noexcept;
  // As drain(), but waits for the lock: for a queue whose producers have moved on (a reload).
  size_t drain_waiting(std::span<AlarmCommand> out) noexcept;

  size_t capacity() const noexcept { return ring_.size(); }
  uint64_t num_rejected() const noexcept;

 private:
  size_t take(std::span<AlarmCommand> out) noexcept;  // with mutex_ held

  mutable std::mutex mutex_;
  std::vector<AlarmCommand> ring_;
  size_t head_ = 0;   // oldest
  size_t count_ = 0;
  uint64_t rejected_ = 0;
};

}  // namespace tonewarden::alarm
