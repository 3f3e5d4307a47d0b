// Framer: cuts a sample stream into blocks of `block` samples every `hop` samples
// (overlap = 1 - hop/block). Allocation happens in create() only.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "tonewarden/base/result.h"

namespace tonewarden::dsp {

struct FramerConfig {
  size_t block = 8192;  // samples per frame, >= 2
  size_t hop = 4096;    // samples between frame starts, 1 <= hop; hop > block skips samples
};

class Framer {
 public:
  static base::Result<Framer> create(const FramerConfig& config);

  // Appends samples; returns how many were consumed (stops early when a frame is ready,
  // so the caller drains frames with next_frame() and pushes the rest).
  size_t push(std::span<const float> samples) noexcept;
  // If a whole frame is buffered, copies it to `out` (size block) and returns true.
  // `*first_sample_index` receives the stream index of the frame's first sample.
  bool next_frame(std::span<float> out, int64_t* first_sample_index) noexcept;
  void reset() noexcept;

  const FramerConfig& config() const noexcept { return config_; }
  uint64_t num_frames() const noexcept { return frames_; }

 private:
  FramerConfig config_;
  std::vector<float> buf_;   // holds at most `block` samples
  size_t fill_ = 0;          // samples buffered
  size_t skip_ = 0;          // samples still to drop (hop > block)
  int64_t next_index_ = 0;   // stream index of buf_[0]
  uint64_t frames_ = 0;
};

}  // namespace tonewarden::dsp
