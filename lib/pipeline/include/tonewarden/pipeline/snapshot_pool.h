// SnapshotPool<T>: publishes immutable snapshots from one writer thread to many readers
// without locks on the read side and without allocation in steady state.
//
// The writer asks for a free slot (one no reader holds), fills it, and publishes it with an
// atomic swap. Readers take a shared_ptr to the current snapshot and keep it as long as they
// like; a slot is reused only when its use count shows no reader holds it. If every slot is
// held (readers slower than publishing), acquire() returns null and the writer skips that
// publication (counted) rather than blocking or allocating: overflow policy "skip-newest".
#pragma once

#include <atomic>
#include <cstdint>
#include <functional>
#include <memory>
#include <vector>

namespace tonewarden::pipeline {

template <typename T>
class SnapshotPool {
 public:
  // `slots` >= 2; `init` prepares each slot once (sizes its buffers).
  SnapshotPool(size_t slots, const std::function<void(T&)>& init) {
    for (size_t i = 0; i < slots; ++i) {
      auto p = std::make_shared<T>();
      init(*p);
      slots_.push_back(std::move(p));
    }
  }

  // Writer thread: a slot no reader holds, or null (publication skipped, counted).
  T* acquire() noexcept {
    const T* current = current_.load(std::memory_order_acquire).get();
    for (auto& s : slots_) {
      // use_count 1: only the pool holds it (the published one is held by current_ too).
      if (s.get() != current && s.use_count() == 1) return s.get();
    }
    skipped_.fetch_add(1, std::memory_order_relaxed);
    return nullptr;
  }

  // Writer thread: publishes a slot returned by acquire().
  void publish(T* slot) noexcept {
    for (auto& s : slots_) {
      if (s.get() == slot) {
        current_.store(std::shared_ptr<const T>(s), std::memory_order_release);
        published_.fetch_add(1, std::memory_order_relaxed);
        return;
      }
    }
  }

  // Any thread: the latest snapshot, or null before the first publish.
  std::shared_ptr<const T> current() const noexcept {
    return current_.load(std::memory_order_acquire);
  }

  uint64_t num_published() const noexcept { return published_.load(std::memory_order_relaxed); }
  uint64_t num_skipped() const noexcept { return skipped_.load(std::memory_order_relaxed); }

 private:
  std::vector<std::shared_ptr<T>> slots_;
  std::atomic<std::shared_ptr<const T>> current_;
  std::atomic<uint64_t> published_{0};
  std::atomic<uint64_t> skipped_{0};
};

}  // namespace tonewarden::pipeline
