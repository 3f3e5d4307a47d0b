// SpscRing: a bounded lock-free single-producer/single-consumer queue of trivially
// copyable items. Built for audio callbacks: push/pop never allocate, lock or log.
//
// Overflow policy: reject-newest. A push that does not fit writes nothing and
// returns false; the producer counts it. Old data already queued is never lost.
#pragma once

#include <algorithm>
#include <atomic>
#include <cstddef>
#include <cstring>
#include <memory>
#include <span>
#include <type_traits>

#include "tonewarden/base/check.h"

namespace tonewarden::base {

template <typename T>
class SpscRing {
  static_assert(std::is_trivially_copyable_v<T>);

 public:
  // capacity_items >= 1; the storage is allocated here, once.
  explicit SpscRing(size_t capacity_items)
      : capacity_(capacity_items), buf_(std::make_unique<T[]>(capacity_items + 1)) {
    TW_CHECK(capacity_items >= 1);
  }

  size_t capacity() const noexcept { return capacity_; }

  // Producer thread only. All-or-nothing: writes every item or none.
  bool push(std::span<const T> items) noexcept {
    const size_t n = items.size();
    const size_t head = head_.load(std::memory_order_relaxed);
    const size_t tail = tail_.load(std::memory_order_acquire);
    const size_t slots = capacity_ + 1;
    const size_t used = (head + slots - tail) % slots;
    if (n > capacity_ - used) return false;
    const size_t first = std::min(n, slots - head);
    std::memcpy(&buf_[head], items.data(), first * sizeof(T));
    std::memcpy(&buf_[0], items.data() + first, (n - first) * sizeof(T));
    head_.store((head + n) % slots, std::memory_order_release);
    return true;
  }

  // Consumer thread only. Copies up to out.size() items; returns how many.
  size_t pop(std::span<T> out) noexcept {
    const size_t tail = tail_.load(std::memory_order_relaxed);
    const size_t head = head_.load(std::memory_order_acquire);
    const size_t slots = capacity_ + 1;
    const size_t avail = (head + slots - tail) % slots;
    const size_t n = std::min(avail, out.size());
    const size_t first = std::min(n, slots - tail);
    std::memcpy(out.data(), &buf_[tail], first * sizeof(T));
    std::memcpy(out.data() + first, &buf_[0], (n - first) * sizeof(T));
    tail_.store((tail + n) % slots, std::memory_order_release);
    return n;
  }

  // Either thread; a snapshot that may be stale by the time it is used.
  size_t size() const noexcept {
    const size_t slots = capacity_ + 1;
    return (head_.load(std::memory_order_acquire) + slots -
            tail_.load(std::memory_order_acquire)) % slots;
  }

 private:
  const size_t capacity_;
  std::unique_ptr<T[]> buf_;
  alignas(64) std::atomic<size_t> head_{0};  // next write slot (producer)
  alignas(64) std::atomic<size_t> tail_{0};  // next read slot (consumer)
};

}  // namespace tonewarden::base
