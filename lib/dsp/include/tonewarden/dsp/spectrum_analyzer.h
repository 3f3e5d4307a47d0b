// SpectrumAnalyzer: one frame in, one one-sided power spectrum out.
// Steps: optional mean removal -> window -> zero padding at the END to
// fft_length = fast_length(block·pad) -> real FFT -> |X|²/(Σw)², doubled except DC/Nyquist.
// This is scipy's periodogram(scaling='spectrum') convention: a 1.0 sine reads 0.5 unit².
// process() allocates nothing and is noexcept; one object per thread.
#pragma once

#include <cstddef>
#include <memory>
#include <span>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {

struct SpectrumConfig {
  double sample_rate_hz = 48000.0;  // > 0
  size_t block = 8192;              // samples per frame, >= 2 (any length; prime is fine)
  size_t pad_factor = 1;            // >= 1; fft_length = fast_length(block * pad_factor)
  WindowSpec window;
  bool remove_mean = true;          // subtract the frame mean before windowing
  FftPlanning planning = FftPlanning::kAuto;
};

class SpectrumAnalyzer {
 public:
  static base::Result<SpectrumAnalyzer> create(const SpectrumConfig& config);
  SpectrumAnalyzer(SpectrumAnalyzer&&) noexcept;
  SpectrumAnalyzer& operator=(SpectrumAnalyzer&&) noexcept;
  ~SpectrumAnalyzer();

  // frame.size() == block; power_out.size() == num_bins(). Returns false (and counts it)
  // on a size mismatch.
  bool process(std::span<const float> frame, std::span<float> power_out) noexcept;

  const SpectrumConfig& config() const noexcept;
  const Window& window() const noexcept;
  size_t fft_length() const noexcept;
  size_t num_bins() const noexcept { return fft_length() / 2 + 1; }
  double bin_hz() const noexcept;         // fs / fft_length
  double resolution_hz() const noexcept;  // ENBW_bins · fs / block (true resolution)
  double enbw_hz() const noexcept;        // same figure, used for PSD scaling
  uint64_t num_frames() const noexcept;
  uint64_t num_rejected() const noexcept;

 private:
  struct Impl;
  explicit SpectrumAnalyzer(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::dsp
