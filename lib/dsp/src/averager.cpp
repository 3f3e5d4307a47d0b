// SpectrumAverager: linear (block mean), exponential and peak-hold averaging of power spectra.
#include "tonewarden/dsp/averager.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <string>
#include <system_error>

namespace tonewarden::dsp {
namespace {

constexpr size_t kMaxLinearFrames = 1'000'000;
constexpr const char* kSpecHelp = "expected linear:N, exp:SECONDS or peak";

base::Error invalid(std::string message) {
  return base::make_error(base::ErrorCode::kInvalidArgument, std::move(message));
}

}  // namespace

base::Result<AverageConfig> parse_average_spec(std::string_view text) {
  const std::string quoted = "average '" + std::string(text) + "'";
  AverageConfig config;
  if (text == "peak") {
    config.mode = AverageMode::kPeakHold;
    return config;
  }
  if (text.starts_with("linear:")) {
    const std::string_view num = text.substr(7);
    size_t n = 0;
    const auto [ptr, ec] = std::from_chars(num.data(), num.data() + num.size(), n);
    if (num.empty() || ec != std::errc() || ptr != num.data() + num.size()) {
      return invalid(quoted + ": N must be a whole number of frames, e.g. linear:8");
    }
    if (n < 1 || n > kMaxLinearFrames) {
      return invalid(quoted + ": N must be in [1, " + std::to_string(kMaxLinearFrames) + "] frames");
    }
    config.mode = AverageMode::kLinear;
    config.linear_frames = n;
    return config;
  }
  if (text.starts_with("exp:")) {
    const std::string_view num = text.substr(4);
    double tau = 0;
    const auto [ptr, ec] = std::from_chars(num.data(), num.data() + num.size(), tau);
    if (num.empty() || ec != std::errc() || ptr != num.data() + num.size() || !std::isfinite(tau)) {
      return invalid(quoted + ": the time constant must be a number of seconds, e.g. exp:2.5");
    }
    if (!(tau > 0)) return invalid(quoted + ": the time constant must be > 0 s");
    config.mode = AverageMode::kExponential;
    config.time_constant_s = tau;
    return config;
  }
  return invalid("unknown " + quoted + "; " + kSpecHelp);
}

base::Result<SpectrumAverager> SpectrumAverager::create(const AverageConfig& config) {
  if (config.num_bins == 0) return invalid("averager needs num_bins > 0");
  if (config.mode == AverageMode::kLinear &&
      (config.linear_frames < 1 || config.linear_frames > kMaxLinearFrames)) {
    return invalid("linear average of " + std::to_string(config.linear_frames) +
                   " frames is outside [1, " + std::to_string(kMaxLinearFrames) + "]");
  }
  if (config.mode == AverageMode::kExponential) {
    if (!(config.time_constant_s > 0) || !std::isfinite(config.time_constant_s)) {
      return invalid("exponential average time constant " + std::to_string(config.time_constant_s) +
                     " s must be > 0");
    }
    if (!(config.frame_period_s > 0) || !std::isfinite(config.frame_period_s)) {
      return invalid("exponential average frame period " + std::to_string(config.frame_period_s) +
                     " s must be > 0");
    }
  }
  SpectrumAverager a;
  a.config_ = config;
  // First-order low-pass sampled every frame period: y += alpha·(x - y) with
  // alpha = 1 - exp(-T/tau), so a step reaches 63 % after tau seconds.
  if (config.mode == AverageMode::kExponential) {
    a.alpha_ = 1.0 - std::exp(-config.frame_period_s / config.time_constant_s);
  }
  a.acc_.assign(config.num_bins, 0.0);
  a.out_.assign(config.num_bins, 0.0f);
  return a;
}

bool SpectrumAverager::push(std::span<const float> power) noexcept {
  const size_t bins = acc_.size();
  if (power.size() != bins) return false;
  switch (config_.mode) {
    case AverageMode::kLinear: {
      for (size_t k = 0; k < bins; ++k) acc_[k] += power[k];
      if (++count_ < config_.linear_frames) return false;
      const double inv = 1.0 / static_cast<double>(count_);
      for (size_t k = 0; k < bins; ++k) {
        out_[k] = static_cast<float>(acc_[k] * inv);
        acc_[k] = 0.0;
      }
      frames_in_result_ = count_;
      count_ = 0;
      return true;
    }
    case AverageMode::kExponential: {
      // The first frame seeds the filter, so the output does not ramp up from zero.
      if (count_ == 0) {
        for (size_t k = 0; k < bins; ++k) acc_[k] = power[k];
      } else {
        for (size_t k = 0; k < bins; ++k) acc_[k] += alpha_ * (power[k] - acc_[k]);
      }
      break;
    }
    case AverageMode::kPeakHold: {
      if (count_ == 0) {
        for (size_t k = 0; k < bins; ++k) acc_[k] = power[k];
      } else {
        for (size_t k = 0; k < bins; ++k) acc_[k] = std::max<double>(acc_[k], power[k]);
      }
      break;
    }
  }
  ++count_;
  frames_in_result_ = count_;
  for (size_t k = 0; k < bins; ++k) out_[k] = static_cast<float>(acc_[k]);
  return true;
}

void SpectrumAverager::reset() noexcept {
  std::fill(acc_.begin(), acc_.end(), 0.0);
  std::fill(out_.begin(), out_.end(), 0.0f);
  count_ = 0;
  frames_in_result_ = 0;
}

}  // namespace tonewarden::dsp
