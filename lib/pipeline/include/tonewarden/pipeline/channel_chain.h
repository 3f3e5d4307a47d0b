// ChannelChain: the per-channel analysis path. Samples in; on every completed averaging
// period, an averaged power spectrum, its peaks, the averaged envelope spectrum (optional)
// and time-domain statistics out.
//   samples -> Framer -> SpectrumAnalyzer -> SpectrumAverager -> PeakFinder
//                     -> EnvelopeAnalyzer -> SpectrumAverager (when an envelope band is set)
//                     -> time_stats (per frame; the period keeps the latest and the maxima)
// Thread: one analysis thread per chain. Allocation happens in create() only.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/averager.h"
#include "tonewarden/dsp/envelope.h"
#include "tonewarden/dsp/framer.h"
#include "tonewarden/dsp/levels.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/spectrum_analyzer.h"

namespace tonewarden::pipeline {

struct ChannelChainConfig {
  dsp::SpectrumConfig spectrum;          // sample rate, block, pad, window, planning
  size_t hop = 0;                        // samples between frames; 0: block/2
  dsp::AverageConfig average;            // num_bins and frame_period_s are filled in create()
  dsp::PeakConfig peaks;                 // sample rate and fft length are filled in create()
  std::optional<std::pair<double, double>> envelope_band_hz;  // [low, high]
  double full_scale = 1.0;               // |sample| >= 0.999·full_scale counts as clipped
};

// One completed averaging period.
struct ChannelPeriod {
  std::span<const float> power;           // averaged one-sided power spectrum, unit²
  std::span<const float> envelope_power;  // empty without an envelope band
  std::span<const dsp::Peak> peaks;       // strongest first
  dsp::TimeStats stats;                   // of the period's last frame
  double max_peak = 0;                    // largest |x - mean| over the period's frames
  int64_t first_sample = 0;               // stream index of the period's first frame
  int64_t last_sample_end = 0;            // one past the period's last frame
  size_t frames = 0;
  uint64_t clipped_samples = 0;           // over the period
};

class ChannelChain {
 public:
  static base::Result<ChannelChain> create(const ChannelChainConfig& config);
  ChannelChain(ChannelChain&&) noexcept;
  ChannelChain& operator=(ChannelChain&&) noexcept;
  ~ChannelChain();

  // Feeds samples of this channel. For each completed averaging period, calls
  // `on_period(const ChannelPeriod&)` before returning. noexcept as long as the callback is.
  template <typename F>
  void push(std::span<const float> samples, F&& on_period) {
    while (!samples.empty()) {
      const size_t used = framer().push(samples);
      samples = samples.subspan(used);
      while (const ChannelPeriod* p = next_period()) on_period(*p);
    }
  }
  // Restarts framing and averaging (after a discontinuity); keeps plans and buffers.
  void reset() noexcept;

  const dsp::SpectrumAnalyzer& analyzer() const noexcept;
  const dsp::EnvelopeAnalyzer* envelope() const noexcept;  // null without a band
  const ChannelChainConfig& config() const noexcept;
  uint64_t num_frames() const noexcept;
  uint64_t num_periods() const noexcept;

 private:
  struct Impl;
  explicit ChannelChain(std::unique_ptr<Impl> impl);
  dsp::Framer& framer() noexcept;
  // Processes one buffered frame if there is one; returns a completed period or null.
  const ChannelPeriod* next_period() noexcept;
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::pipeline
