// Framer: blocks of `block` samples every `hop` samples from a sample stream of any chunking.
#include "tonewarden/dsp/framer.h"

#include <algorithm>
#include <cstring>
#include <string>

namespace tonewarden::dsp {

base::Result<Framer> Framer::create(const FramerConfig& config) {
  if (config.block < 2) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "framer block " + std::to_string(config.block) +
                                " samples is too short (need >= 2)");
  }
  if (config.hop < 1) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "framer hop 0 samples is invalid (need >= 1)");
  }
  Framer f;
  f.config_ = config;
  f.buf_.assign(config.block, 0.0f);
  return f;
}

size_t Framer::push(std::span<const float> samples) noexcept {
  size_t used = 0;
  // Samples between frames when hop > block are dropped without being buffered.
  if (skip_ > 0) {
    const size_t n = std::min(skip_, samples.size());
    skip_ -= n;
    used += n;
  }
  const size_t room = config_.block - fill_;
  const size_t n = std::min(room, samples.size() - used);
  if (n > 0) {
    std::memcpy(buf_.data() + fill_, samples.data() + used, n * sizeof(float));
    fill_ += n;
    used += n;
  }
  return used;
}

bool Framer::next_frame(std::span<float> out, int64_t* first_sample_index) noexcept {
  if (fill_ < config_.block || out.size() != config_.block) return false;
  std::memcpy(out.data(), buf_.data(), config_.block * sizeof(float));
  if (first_sample_index) *first_sample_index = next_index_;
  ++frames_;
  if (config_.hop < config_.block) {
    // Keep the overlapping tail at the front of the buffer.
    const size_t keep = config_.block - config_.hop;
    std::memmove(buf_.data(), buf_.data() + config_.hop, keep * sizeof(float));
    fill_ = keep;
  } else {
    fill_ = 0;
    skip_ = config_.hop - config_.block;
  }
  next_index_ += static_cast<int64_t>(config_.hop);
  return true;
}

void Framer::reset() noexcept {
  fill_ = 0;
  skip_ = 0;
  next_index_ = 0;
  frames_ = 0;
}

}  // namespace tonewarden::dsp
