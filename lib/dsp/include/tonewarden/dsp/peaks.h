// PeakFinder: tonal peaks in a one-sided power spectrum, with frequency and amplitude from
// a window-aware interpolator (it fits the window's own transform to the bins around each
// maximum, so it holds for any window and pad factor).
// Detection: a local maximum whose level stands `min_prominence_db` above a robust noise
// floor (a running median over `floor_window_bins`), at least `min_spacing_hz` from any
// stronger peak. find() allocates nothing.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {

struct Peak {
  double frequency_hz = 0;   // interpolated
  double power = 0;          // interpolated tone power, unit² (RMS²) - the 'power' scale
  double bin = 0;            // interpolated position in fft bins
  double floor_power = 0;    // noise floor estimate at the peak, unit²
};

struct PeakConfig {
  double sample_rate_hz = 48000.0;
  size_t fft_length = 8192;          // as used by the analyzer
  size_t max_peaks = 10;
  double min_prominence_db = 10.0;   // above the running-median floor
  double min_spacing_hz = 0.0;       // 0: one true resolution width
  size_t floor_window_bins = 63;     // odd, >= 3
  double min_frequency_hz = 0.0;     // ignore below (DC region)
  double max_frequency_hz = 0.0;     // 0: up to Nyquist
};

class PeakFinder {
 public:
  // `window` is the analysis window (its length is the block); it is copied.
  static base::Result<PeakFinder> create(const PeakConfig& config, const Window& window);

  // power.size() == fft_length/2+1. Writes up to out.size() peaks, strongest first.
  size_t find(std::span<const float> power, std::span<Peak> out) noexcept;

  // Interpolates one peak around bin `max_bin` (a local maximum of `power`).
  Peak interpolate(std::span<const float> power, size_t max_bin) const noexcept;

 private:
  PeakConfig config_;
  Window window_;
  size_t pad_num_ = 1;  // fft_length / block as a ratio: P = fft_length / block
  double pad_ = 1.0;
  std::vector<float> floor_;       // per-bin floor
  std::vector<float> scratch_;     // median workspace
  std::vector<size_t> candidates_;
  PeakFinder(const PeakConfig& c, Window w) : config_(c), window_(std::move(w)) {}
};

}  // namespace tonewarden::dsp
