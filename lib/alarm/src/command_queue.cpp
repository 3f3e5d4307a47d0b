// CommandQueue: bounded, mutex-guarded ring; the consumer only try-locks.
#include "tonewarden/alarm/command_queue.h"

#include "tonewarden/base/check.h"

namespace tonewarden::alarm {

CommandQueue::CommandQueue(size_t capacity) : ring_(capacity) { TW_CHECK(capacity >= 1); }

bool CommandQueue::push(const AlarmCommand& command) noexcept {
  std::lock_guard<std::mutex> lock(mutex_);
  if (count_ == ring_.size()) {
    ++rejected_;
    return false;
  }
  ring_[(head_ + count_) % ring_.size()] = command;
  ++count_;
  return true;
}

size_t CommandQueue::drain(std::span<AlarmCommand> out) noexcept {
  std::unique_lock<std::mutex> lock(mutex_, std::try_to_lock);
  if (!lock.owns_lock()) return 0;
  return take(out);
}

size_t CommandQueue::drain_waiting(std::span<AlarmCommand> out) noexcept {
  std::lock_guard<std::mutex> lock(mutex_);
  return take(out);
}

size_t CommandQueue::take(std::span<AlarmCommand> out) noexcept {
  size_t n = 0;
  while (count_ > 0 && n < out.size()) {
    out[n++] = ring_[head_];
    head_ = (head_ + 1) % ring_.size();
    --count_;
  }
  return n;
}

uint64_t CommandQueue::num_rejected() const noexcept {
  std::lock_guard<std::mutex> lock(mutex_);
  return rejected_;
}

}  // namespace tonewarden::alarm
