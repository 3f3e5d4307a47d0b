// ChannelTracker: turns one channel's averaged spectra and frame statistics into readings:
// target amplitudes and frequencies (with harmonics and ± speed sidebands), velocity RMS in
// the ISO 20816 band, RMS, peak, crest factor and kurtosis.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/levels.h"
#include "tonewarden/track/reading_set.h"
#include "tonewarden/track/speed.h"
#include "tonewarden/track/target.h"
#include "tonewarden/track/tone_search.h"

namespace tonewarden::track {

// Rig-wide speed reading name, in rpm; invalid while the speed is unknown.
inline constexpr const char* kSpeedReadingName = "speed_rpm";

struct ChannelTrackConfig {
  std::string channel;               // [A-Za-z0-9_-]+; prefixes every reading name
  std::string unit = "g";            // the channel's engineering unit
  SpectrumLayout spectrum;           // plain spectrum
  bool has_envelope = false;         // envelope targets need it
  SpectrumLayout envelope;           // envelope spectrum (its own block/pad/window)
  std::vector<TargetConfig> targets;
  // Velocity RMS over [low, high] Hz (ISO 20816 uses 10–1000 Hz), in mm/s. Only when `unit`
  // is an acceleration unit (g, m/s²); ignored otherwise.
  bool velocity = true;
  double velocity_low_hz = 10.0;
  double velocity_high_hz = 1000.0;
  // The SNR reading compares a target's power to the median of this many bins either side.
  size_t floor_half_width_bins = 50;
};

// One period's input. `power` is the averaged one-sided power spectrum (unit², size
// spectrum.fft_length/2+1). `envelope_power` is empty or the envelope power spectrum
// (size envelope.fft_length/2+1). `stats` is null when no time statistics are at hand.
struct ChannelInput {
  std::span<const float> power;
  std::span<const float> envelope_power;
  const dsp::TimeStats* stats = nullptr;
};

class ChannelTracker {
 public:
  // Validates, allocates, and registers this channel's readings in `readings`. Config errors
  // register nothing; a name clash with readings already in the set (e.g. the same channel
  // twice) fails part-way, so discard that set.
  static base::Result<ChannelTracker> create(const ChannelTrackConfig& config,
                                             ReadingSet& readings);

  // Writes this channel's readings into `out` (the set passed to create(), or a copy of it).
  // Readings it cannot measure this period are marked invalid. Allocation-free, noexcept.
  void process(const ChannelInput& input, SpeedEstimate speed, ReadingSet& out) noexcept;

  uint64_t num_periods() const noexcept { return periods_; }
  uint64_t num_rejected() const noexcept { return rejected_; }  // spectra of the wrong size
  std::string describe() const;

 private:
  struct Slot {
    TargetConfig config;
    BearingOrders orders;
    size_t amplitude = 0, frequency = 0, snr = 0;
    std::vector<size_t> harmonic_amplitudes;  // h = 2..N
    size_t sideband_lower = 0, sideband_upper = 0;
  };
  ChannelTracker() = default;
  void track_target(const Slot& slot, std::span<const float> power, ToneSearch& search,
                    SpeedEstimate speed, ReadingSet& out) noexcept;

  ChannelTrackConfig config_;
  std::vector<ToneSearch> searches_;  // [0] plain, [1] envelope when present
  std::vector<Slot> slots_;
  std::vector<float> velocity_scratch_;
  double accel_to_mm_per_s_ = 0.0;     // 0: no velocity reading
  size_t rms_ = 0, peak_ = 0, crest_ = 0, kurtosis_ = 0, velocity_ = 0;
  uint64_t periods_ = 0, rejected_ = 0;
};

}  // namespace tonewarden::track
