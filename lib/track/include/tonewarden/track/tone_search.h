// ToneSearch: finds the strongest tone inside a frequency window of a one-sided power spectrum
// and reads its exact frequency and power with dsp's window-aware interpolator; also a robust
// floor (median power) over a band. Shared by the spectral speed estimate and the targets.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::track {

// How a spectrum handed to track was made (must match the analyzer that made it).
struct SpectrumLayout {
  double sample_rate_hz = 48000.0;  // > 0
  size_t block = 8192;              // samples per frame (the window length), >= 2
  size_t fft_length = 8192;         // >= block (zero padding at the end)
  dsp::WindowSpec window;           // the analysis window
};

struct ToneHit {
  bool found = false;       // true: a local maximum inside the window was interpolated
  double frequency_hz = 0;  // interpolated (or the max bin's centre when !found)
  double power = 0;         // tone power, unit² RMS² (or the max bin's power when !found)
  size_t max_bin = 0;
};

class ToneSearch {
 public:
  static base::Result<ToneSearch> create(const SpectrumLayout& layout);

  size_t num_bins() const noexcept { return layout_.fft_length / 2 + 1; }
  double bin_hz() const noexcept { return layout_.sample_rate_hz / layout_.fft_length; }
  double nyquist_hz() const noexcept { return layout_.sample_rate_hz / 2.0; }
  // ENBW in bins of this (possibly padded) spectrum: what band_rms expects.
  double enbw_fft_bins() const noexcept;
  const SpectrumLayout& layout() const noexcept { return layout_; }
  const dsp::Window& window() const noexcept { return window_; }

  // Strongest bin in [center − half_width, center + half_width] (at least the nearest bin;
  // DC and Nyquist excluded), interpolated when it is a local maximum.
  // power.size() must be num_bins(); a mismatch returns found=false, power 0. Allocation-free.
  ToneHit search(std::span<const float> power, double center_hz,
                 double half_width_hz) const noexcept;

  // Median bin power over [low_hz, high_hz] (DC excluded). Allocation-free; not const because
  // it uses an internal scratch buffer (one object per thread).
  double median_power(std::span<const float> power, double low_hz, double high_hz) noexcept;

 private:
  ToneSearch(SpectrumLayout layout, dsp::Window window, dsp::PeakFinder finder)
      : layout_(layout), window_(std::move(window)), finder_(std::move(finder)) {}
  SpectrumLayout layout_;
  dsp::Window window_;
  dsp::PeakFinder finder_;
  std::vector<float> scratch_;
};

}  // namespace tonewarden::track
