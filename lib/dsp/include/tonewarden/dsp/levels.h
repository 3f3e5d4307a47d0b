// Levels: band RMS from a power spectrum, and time-domain statistics of a frame.
#pragma once

#include <cstddef>
#include <span>

namespace tonewarden::dsp {

// RMS over [low_hz, high_hz] of a one-sided power spectrum (unit²): sqrt(Σ P / ENBW_bins)
// over the bins whose centres lie in the band. ENBW_bins is in unpadded bins, so for a
// padded spectrum pass enbw_bins · pad (the ENBW measured in padded bins).
double band_rms(std::span<const float> power, double bin_hz, double enbw_fft_bins,
                double low_hz, double high_hz) noexcept;

struct TimeStats {
  double mean = 0;
  double rms = 0;            // of the signal with its mean removed
  double peak = 0;           // max |x - mean|
  double crest_factor = 0;   // peak / rms; sine -> sqrt(2)
  double kurtosis = 0;       // Pearson (Gaussian -> 3, sine -> 1.5); not excess
};

TimeStats time_stats(std::span<const float> x) noexcept;

}  // namespace tonewarden::dsp
