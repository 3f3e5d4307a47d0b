// EnvelopeAnalyzer: the envelope (demodulated) spectrum used for bearing faults.
// Steps per frame: FFT of the frame -> keep only [band_low_hz, band_high_hz] of the positive
// frequencies, doubled (analytic signal) -> inverse complex FFT -> squared magnitude (the
// squared envelope) -> mean removed -> window -> zero padding -> one-sided power spectrum in
// the same scaling as SpectrumAnalyzer. process() allocates nothing.
#pragma once

#include <cstddef>
#include <memory>
#include <span>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::dsp {

struct EnvelopeConfig {
  double sample_rate_hz = 48000.0;
  size_t block = 8192;
  size_t pad_factor = 1;
  double band_low_hz = 1000.0;   // 0 <= low < high <= fs/2
  double band_high_hz = 5000.0;
  WindowSpec window;             // applied to the squared envelope
  FftPlanning planning = FftPlanning::kAuto;
};

class EnvelopeAnalyzer {
 public:
  static base::Result<EnvelopeAnalyzer> create(const EnvelopeConfig& config);
  EnvelopeAnalyzer(EnvelopeAnalyzer&&) noexcept;
  EnvelopeAnalyzer& operator=(EnvelopeAnalyzer&&) noexcept;
  ~EnvelopeAnalyzer();

  // frame.size() == block; power_out.size() == num_bins(). Units: (unit²)² RMS² — the
  // power spectrum of the squared envelope.
  bool process(std::span<const float> frame, std::span<float> power_out) noexcept;

  size_t fft_length() const noexcept;
  size_t num_bins() const noexcept { return fft_length() / 2 + 1; }
  double bin_hz() const noexcept;
  const Window& window() const noexcept;

 private:
  struct Impl;
  explicit EnvelopeAnalyzer(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::dsp
