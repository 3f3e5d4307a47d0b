// Baseline learning: median and 1.4826·MAD over a period.
#include "tonewarden/alarm/baseline.h"

#include <algorithm>
#include <cmath>

#include "tonewarden/base/check.h"

namespace tonewarden::alarm {
namespace {

// Median of v[0..n) by partial sort, in place. n >= 1.
double median_in_place(std::vector<double>& v, size_t n) noexcept {
  auto mid = v.begin() + static_cast<std::ptrdiff_t>(n / 2);
  std::nth_element(v.begin(), mid, v.begin() + static_cast<std::ptrdiff_t>(n));
  const double upper = *mid;
  if (n % 2 == 1) return upper;
  const double lower = *std::max_element(v.begin(), mid);
  return 0.5 * (lower + upper);
}

// 1/Φ⁻¹(3/4): makes the MAD a consistent estimator of σ for Gaussian data.
constexpr double kMadToSigma = 1.482602218505602;

}  // namespace

Baseline::Baseline(int64_t learn_ms, size_t capacity) : learn_ms_(learn_ms) {
  TW_CHECK(learn_ms > 0 && capacity >= 3);
  samples_.assign(capacity, 0.0);
}

void Baseline::restart() noexcept {
  count_ = 0;
  learned_ = false;
  median_ = spread_ = 0.0;
}

void Baseline::set(double median, double spread) noexcept {
  median_ = median;
  spread_ = spread;
  learned_ = true;
}

bool Baseline::add(double value, base::WallTimeMs t) noexcept {
  if (learned_ || !std::isfinite(value)) return false;
  if (count_ == 0) start_ms_ = t.unix_ms;
  samples_[count_++] = value;
  if (count_ >= 3 && (t.unix_ms - start_ms_ >= learn_ms_ || count_ == samples_.size())) {
    finish();
    return true;
  }
  return false;
}

void Baseline::finish() noexcept {
  median_ = median_in_place(samples_, count_);
  for (size_t i = 0; i < count_; ++i) samples_[i] = std::fabs(samples_[i] - median_);
  spread_ = kMadToSigma * median_in_place(samples_, count_);
  learned_ = true;
}

}  // namespace tonewarden::alarm
