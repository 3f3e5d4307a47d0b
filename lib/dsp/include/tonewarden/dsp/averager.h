// SpectrumAverager: averages power spectra (averaging power, never magnitude or dB).
// Linear: the mean of N frames, then starts over. Exponential: a first-order filter with a
// time constant. Peak hold: the per-bin maximum since reset().
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"

namespace tonewarden::dsp {

enum class AverageMode { kLinear, kExponential, kPeakHold };

struct AverageConfig {
  AverageMode mode = AverageMode::kLinear;
  size_t linear_frames = 1;         // kLinear: N >= 1
  double time_constant_s = 1.0;     // kExponential: > 0
  double frame_period_s = 0.1;      // hop / fs; > 0 (kExponential uses it)
  size_t num_bins = 0;              // > 0
};

// Parses "linear:N", "exp:SECONDS", "peak" (the CLI's --average).
base::Result<AverageConfig> parse_average_spec(std::string_view text);

class SpectrumAverager {
 public:
  static base::Result<SpectrumAverager> create(const AverageConfig& config);

  // Adds one power spectrum. Returns true when result() holds a completed average:
  // every N frames for linear, every frame for exponential and peak hold.
  bool push(std::span<const float> power) noexcept;
  std::span<const float> result() const noexcept { return out_; }
  size_t frames_in_result() const noexcept { return frames_in_result_; }
  void reset() noexcept;

 private:
  AverageConfig config_;
  double alpha_ = 1.0;
  std::vector<double> acc_;
  std::vector<float> out_;
  size_t count_ = 0;
  size_t frames_in_result_ = 0;
};

}  // namespace tonewarden::dsp
