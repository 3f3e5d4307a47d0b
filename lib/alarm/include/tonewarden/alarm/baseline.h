// Baseline: the median and spread of a reading over a learning period, learnt from the machine
// itself. spread = 1.4826·MAD (median absolute deviation), the scale that equals the standard
// deviation for Gaussian data (1/Φ⁻¹(3/4) = 1.4826; a standard robust-statistics identity).
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

#include "tonewarden/base/time.h"

namespace tonewarden::alarm {

class Baseline {
 public:
  // Allocates the sample buffer once. learn_ms > 0, capacity >= 3.
  Baseline(int64_t learn_ms, size_t capacity);

  // Adds a valid sample taken at `t`. Learning starts at the first sample and ends once
  // learn_ms has passed or the buffer is full; then median() and spread() hold.
  // Allocation-free. Returns true when this call finished the learning.
  bool add(double value, base::WallTimeMs t) noexcept;
  // Uses a stored baseline (e.g. restored after a restart) and stops learning.
  void set(double median, double spread) noexcept;
  void restart() noexcept;

  bool learned() const noexcept { return learned_; }
  size_t num_samples() const noexcept { return count_; }
  double median() const noexcept { return median_; }
  double spread() const noexcept { return spread_; }

 private:
  void finish() noexcept;
  int64_t learn_ms_;
  std::vector<double> samples_;
  size_t count_ = 0;
  int64_t start_ms_ = 0;
  bool learned_ = false;
  double median_ = 0.0, spread_ = 0.0;
};

}  // namespace tonewarden::alarm
