// Speed from a tach channel and from the spectrum.
#include "tonewarden/track/speed.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace tonewarden::track {
namespace {

base::Error bad(const std::string& what) {
  return base::make_error(base::ErrorCode::kInvalidArgument, what);
}

}  // namespace

base::Result<SpeedFromTach> SpeedFromTach::create(const TachConfig& c) {
  if (!(c.sample_rate_hz > 0.0) || !std::isfinite(c.sample_rate_hz)) {
    return bad("tach: sample_rate_hz = " + std::to_string(c.sample_rate_hz) + ", must be > 0");
  }
  if (!(c.hysteresis >= 0.0) || !std::isfinite(c.threshold)) {
    return bad("tach: hysteresis = " + std::to_string(c.hysteresis) +
               " must be >= 0 and threshold finite");
  }
  if (c.pulses_per_rev < 1 || c.pulses_per_rev > 100000) {
    return bad("tach: pulses_per_rev = " + std::to_string(c.pulses_per_rev) +
               ", must be in [1, 100000]");
  }
  if (!(c.min_rpm > 0.0) || !(c.max_rpm > c.min_rpm)) {
    return bad("tach: min_rpm = " + std::to_string(c.min_rpm) + ", max_rpm = " +
               std::to_string(c.max_rpm) + "; need 0 < min_rpm < max_rpm");
  }
  SpeedFromTach t(c);
  t.edge_times_.assign(static_cast<size_t>(c.pulses_per_rev) + 1, 0.0);
  return t;
}

void SpeedFromTach::reset() noexcept {
  std::fill(edge_times_.begin(), edge_times_.end(), 0.0);
  ring_head_ = 0;
  edges_ = 0;
  rejected_ = 0;
  sample_index_ = 0;
  have_last_ = false;
  armed_ = false;
  rpm_ = 0.0;
  rpm_valid_ = false;
}

void SpeedFromTach::process(std::span<const float> samples) noexcept {
  const double threshold = config_.threshold;
  const double rearm = config_.threshold - config_.hysteresis;
  const size_t ring = edge_times_.size();
  for (const float x : samples) {
    if (!have_last_) {
      have_last_ = true;
      armed_ = x < rearm;
    } else if (!armed_) {
      armed_ = x < rearm;
    } else if (x >= threshold) {
      // The crossing lies between the previous sample (below threshold) and this one.
      const double rise = static_cast<double>(x) - last_sample_;
      const double frac =
          rise > 0.0 ? std::clamp((threshold - last_sample_) / rise, 0.0, 1.0) : 0.0;
      const double t = static_cast<double>(sample_index_ - 1) + frac;
      edge_times_[ring_head_] = t;
      ring_head_ = (ring_head_ + 1) % ring;
      ++edges_;
      armed_ = false;
      if (edges_ >= ring) {
        // After the advance, ring_head_ holds the edge one full revolution back.
        const double rev_samples = t - edge_times_[ring_head_];
        const double rpm = rev_samples > 0.0 ? 60.0 * config_.sample_rate_hz / rev_samples : 0.0;
        if (rpm > config_.max_rpm) {
          ++rejected_;
        } else {
          rpm_ = rpm;
          rpm_valid_ = true;
        }
      }
    }
    last_sample_ = x;
    ++sample_index_;
  }
}

SpeedEstimate SpeedFromTach::current() const noexcept {
  if (!rpm_valid_ || edges_ == 0) return {rpm_, false};
  const size_t ring = edge_times_.size();
  const double last_edge = edge_times_[(ring_head_ + ring - 1) % ring];
  // No edge for a whole revolution at min_rpm: the shaft stopped or the tach was lost.
  const double max_gap = 60.0 * config_.sample_rate_hz / config_.min_rpm;
  const bool fresh = static_cast<double>(sample_index_) - last_edge <= max_gap;
  return {rpm_, fresh && rpm_ >= config_.min_rpm};
}

base::Result<SpeedFromSpectrum> SpeedFromSpectrum::create(const SpectralSpeedConfig& c,
                                                          const SpectrumLayout& layout) {
  if (!(c.min_rpm > 0.0) || !(c.max_rpm > c.min_rpm)) {
    return bad("spectral speed: min_rpm = " + std::to_string(c.min_rpm) + ", max_rpm = " +
               std::to_string(c.max_rpm) + "; need 0 < min_rpm < max_rpm");
  }
  if (c.harmonics_required < 1 || c.harmonics_required > 16) {
    return bad("spectral speed: harmonics_required = " + std::to_string(c.harmonics_required) +
               ", must be in [1, 16]");
  }
  if (!(c.harmonic_tolerance_percent >= 0.0) || c.max_candidates < 1 ||
      !std::isfinite(c.min_prominence_db)) {
    return bad("spectral speed: harmonic_tolerance_percent must be >= 0, max_candidates >= 1");
  }
  auto search = ToneSearch::create(layout);
  if (!search) return std::move(search).error().with_context("spectral speed");
  if (c.max_rpm / 60.0 * c.harmonics_required >= search->nyquist_hz()) {
    return bad("spectral speed: max_rpm = " + std::to_string(c.max_rpm) + " with " +
               std::to_string(c.harmonics_required) + " harmonics exceeds Nyquist " +
               std::to_string(search->nyquist_hz()) + " Hz");
  }
  SpeedFromSpectrum s(c, std::move(*search));
  s.candidates_.assign(c.max_candidates, 0);
  return s;
}

SpeedEstimate SpeedFromSpectrum::process(std::span<const float> power) noexcept {
  const size_t n = search_.num_bins();
  if (power.size() != n) {
    ++unconfirmed_;
    return {};
  }
  const double bw = search_.bin_hz();
  const size_t lo = std::max<size_t>(1, static_cast<size_t>(std::ceil(config_.min_rpm / 60.0 / bw)));
  const size_t hi = std::min<size_t>(n - 2, static_cast<size_t>(config_.max_rpm / 60.0 / bw));
  // Keep the strongest local maxima of the range, strongest first (insertion into a small
  // fixed array: no allocation).
  size_t count = 0;
  for (size_t k = lo; k <= hi; ++k) {
    if (!(power[k] > power[k - 1] && power[k] >= power[k + 1])) continue;
    size_t pos = count;
    while (pos > 0 && power[candidates_[pos - 1]] < power[k]) --pos;
    if (pos >= candidates_.size()) continue;
    const size_t last = std::min(count, candidates_.size() - 1);
    for (size_t i = last; i > pos; --i) candidates_[i] = candidates_[i - 1];
    candidates_[pos] = k;
    count = std::min(count + 1, candidates_.size());
  }
  const int h_max = config_.harmonics_required;
  const double floor = search_.median_power(power, config_.min_rpm / 60.0,
                                            config_.max_rpm / 60.0 * (h_max + 1));
  const double need = floor * std::pow(10.0, config_.min_prominence_db / 10.0);
  for (size_t c = 0; c < count; ++c) {
    const size_t k = candidates_[c];
    if (!(power[k] > need)) break;  // weaker candidates cannot pass either
    const ToneHit one = search_.search(power, static_cast<double>(k) * bw, 0.0);
    if (!one.found) continue;
    bool confirmed = true;
    for (int h = 2; h <= h_max && confirmed; ++h) {
      const double fh = h * one.frequency_hz;
      const double tol = std::max(fh * config_.harmonic_tolerance_percent / 100.0, 1.5 * bw);
      const ToneHit hh = search_.search(power, fh, tol);
      confirmed = hh.found && hh.power > need;
    }
    if (confirmed) return {one.frequency_hz * 60.0, true};
  }
  ++unconfirmed_;
  return {};
}

}  // namespace tonewarden::track
