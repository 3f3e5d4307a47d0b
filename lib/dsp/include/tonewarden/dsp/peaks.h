// PeakFinder: tonal peaks in a one-sided power spectrum, with frequency and amplitude from
// a window-aware interpolator (it fits the window's own transform to the bins around each
// maximum, so it holds for any window and pad factor).
// Detection: a local maximum whose level stands `min_prominence_db` above a robust noise
// floor (a running median over `floor_window_bins`, converted to the mean noise power per
// bin), at least `min_spacing_hz` from any stronger peak, and standing `leakage_margin_db`
// above the sidelobe leakage that the window predicts from every stronger peak (so the
// sidelobes of a strong tone are not reported as tones). Maxima within one main-lobe
// half-width of DC or Nyquist are never reported (leakage of the frame's mean, or its mirror).
// find() allocates nothing.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {

struct Peak {
  double frequency_hz = 0;   // interpolated
  double power = 0;          // interpolated tone power, unit² (RMS²) - the 'power' scale
  double bin = 0;            // interpolated position in fft bins
  double floor_power = 0;    // mean noise power per bin at the peak, unit² (0 from interpolate())
};

struct PeakConfig {
  double sample_rate_hz = 48000.0;
  size_t fft_length = 8192;          // as used by the analyzer
  size_t max_peaks = 10;
  double min_prominence_db = 10.0;   // above the running-median floor
  double min_spacing_hz = 0.0;       // 0: one true resolution width
  size_t floor_window_bins = 63;     // odd, >= 3, in UNPADDED bins: the median spans
                                     // this × fft_length/block padded bins, and at least 6
                                     // main-lobe half-widths so a tone cannot lift its floor
  double leakage_margin_db = 6.0;    // >= 0; see above
  double min_frequency_hz = 0.0;     // ignore below (DC region)
  double max_frequency_hz = 0.0;     // 0: up to Nyquist
};

class PeakFinder {
 public:
  // `window` is the analysis window (its length is the block); it is copied.
  static base::Result<PeakFinder> create(const PeakConfig& config, const Window& window);

  // power.size() == fft_length/2+1 (else returns 0). Writes up to min(out.size(), max_peaks)
  // peaks, strongest first.
  size_t find(std::span<const float> power, std::span<Peak> out) noexcept;

  // Interpolates one peak around bin `max_bin` (a local maximum of `power`). At DC and
  // Nyquist (no neighbour on one side) it returns the bin centre and its power.
  Peak interpolate(std::span<const float> power, size_t max_bin) const noexcept;

  // The per-bin floor (mean noise power, unit²) from the last find().
  std::span<const float> floor() const noexcept { return floor_; }
  size_t num_bins() const noexcept { return config_.fft_length / 2 + 1; }

 private:
  PeakConfig config_;
  Window window_;
  double pad_ = 1.0;               // P = fft_length / block (not always an integer)
  double lobe_bins_ = 1.0;         // main-lobe half-width (first null), unpadded bins
  double top_offset_bins_ = 0.0;   // where |W| peaks: 0, or off centre for flat-tops
  double search_bins_ = 0.5;       // how far from the maximum bin the tone may lie
  size_t ratio_step_ = 1;          // padded bins between the maximum and the fitted pair
  size_t floor_window_ = 63;       // effective floor window (odd)
  size_t floor_stride_ = 1;        // bins between floor reads
  double spacing_bins_ = 1.0;      // min spacing in padded bins
  std::vector<double> scan_minus_, scan_plus_;  // K(x ∓ pair) on interpolate()'s root-scan grid
  std::vector<double> kernel_re_, kernel_im_;  // Kaiser: tabulated transform, step kTableStep
  std::vector<float> skirt_;       // max of |W|/|W(0)| beyond ν, step kSkirtStep (leakage bound)
  double leakage_ratio_ = 4.0;     // 10^(leakage_margin_db/10)
  std::vector<float> floor_;       // per-bin floor
  std::vector<uint32_t> floor_counts_;  // running-median histogram, empty between calls
  std::vector<uint32_t> floor_keys_;    // each bin's histogram bucket
  std::vector<size_t> candidates_;
  std::vector<size_t> merged_;     // maxima dropped by the spacing rule (still leak)
  PeakFinder(const PeakConfig& c, Window w) : config_(c), window_(std::move(w)) {}

  double kernel(double nu_bins) const noexcept;  // |W(ν)|/|W(0)|, table-backed for Kaiser
  double fit_residual(std::span<const float> power, size_t max_bin, double offset) const noexcept;
  void estimate_floor(std::span<const float> power) noexcept;
};

}  // namespace tonewarden::dsp
