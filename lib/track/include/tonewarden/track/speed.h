// Shaft speed: from a tach channel (pulse edges), from configuration (fixed rpm), or estimated
// from the spectrum (strongest peak in an rpm range, confirmed by its harmonics).
// "Speed unknown" is a state of its own (valid = false) that readings and rules can see.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/track/tone_search.h"

namespace tonewarden::track {

struct SpeedEstimate {
  double rpm = 0.0;
  bool valid = false;
  double hz() const noexcept { return rpm / 60.0; }
  static SpeedEstimate fixed(double rpm) noexcept { return {rpm, rpm > 0.0}; }
};

struct TachConfig {
  double sample_rate_hz = 48000.0;  // > 0
  double threshold = 0.5;           // rising edge when the signal reaches this (signal units)
  double hysteresis = 0.1;          // >= 0; re-armed only after falling below threshold - this
  int pulses_per_rev = 1;           // >= 1 (e.g. 1 for a keyway, 60 for a toothed wheel)
  double min_rpm = 10.0;            // > 0; no edge for longer than one revolution at this
                                    // speed makes the speed unknown
  double max_rpm = 100000.0;        // > min_rpm; faster estimates are rejected as glitches
};

// Rising-edge tach decoder. Edge instants are interpolated linearly between the two samples
// around the crossing, and speed is measured over the last full revolution (the last
// pulses_per_rev edge intervals), so an uneven pulse wheel still reads its true speed.
// State carries across blocks. process() is allocation-free; one object per thread.
class SpeedFromTach {
 public:
  static base::Result<SpeedFromTach> create(const TachConfig& config);

  void process(std::span<const float> samples) noexcept;
  SpeedEstimate current() const noexcept;
  void reset() noexcept;

  uint64_t num_edges() const noexcept { return edges_; }
  uint64_t num_rejected() const noexcept { return rejected_; }  // revolutions above max_rpm

 private:
  explicit SpeedFromTach(const TachConfig& c) : config_(c) {}
  TachConfig config_;
  std::vector<double> edge_times_;  // ring of the last pulses_per_rev + 1 edges, in samples
  size_t ring_head_ = 0;
  uint64_t edges_ = 0;
  uint64_t rejected_ = 0;
  int64_t sample_index_ = 0;        // absolute index of the next sample
  float last_sample_ = 0.0f;
  bool have_last_ = false;
  bool armed_ = false;
  double rpm_ = 0.0;
  bool rpm_valid_ = false;
};

struct SpectralSpeedConfig {
  double min_rpm = 600.0;       // > 0: search range for the 1× peak
  double max_rpm = 3600.0;      // > min_rpm
  int harmonics_required = 3;   // >= 1: 2×..N× must stand above the floor (1 = none checked)
  double min_prominence_db = 6.0;  // each harmonic's power over the median floor
  double harmonic_tolerance_percent = 1.0;  // search window of the k× harmonic: ± this % of k·f
  size_t max_candidates = 5;    // strongest local maxima in the range tried in turn
};

// Spectral speed estimate from a plain power spectrum. process() is allocation-free.
class SpeedFromSpectrum {
 public:
  static base::Result<SpeedFromSpectrum> create(const SpectralSpeedConfig& config,
                                                const SpectrumLayout& layout);
  SpeedEstimate process(std::span<const float> power) noexcept;
  uint64_t num_unconfirmed() const noexcept { return unconfirmed_; }

 private:
  SpeedFromSpectrum(const SpectralSpeedConfig& c, ToneSearch s)
      : config_(c), search_(std::move(s)) {}
  SpectralSpeedConfig config_;
  ToneSearch search_;
  std::vector<size_t> candidates_;
  uint64_t unconfirmed_ = 0;
};

}  // namespace tonewarden::track
