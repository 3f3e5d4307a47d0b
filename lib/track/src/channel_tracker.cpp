// ChannelTracker: per-period readings of one channel.
#include "tonewarden/track/channel_tracker.h"

#include <cmath>

#include "tonewarden/base/units.h"
#include "tonewarden/dsp/integrate.h"

namespace tonewarden::track {
namespace {

base::Error bad(const std::string& what) {
  return base::make_error(base::ErrorCode::kInvalidArgument, what);
}

std::string amplitude_unit(const std::string& unit, SearchSpectrum spectrum,
                           AmplitudeScale scale) {
  // The envelope spectrum is the spectrum of the squared envelope: its RMS is in unit².
  const int power = (spectrum == SearchSpectrum::kEnvelope ? 2 : 1) *
                    (scale == AmplitudeScale::kPower ? 2 : 1);
  return power == 1 ? unit : unit + "^" + std::to_string(power);
}

double scaled_amplitude(double power, AmplitudeScale scale) noexcept {
  switch (scale) {
    case AmplitudeScale::kRms: return std::sqrt(power);
    case AmplitudeScale::kPeak: return std::sqrt(2.0 * power);  // a sine's peak is √2·RMS
    case AmplitudeScale::kPower: return power;
  }
  return 0.0;
}

}  // namespace

base::Result<ChannelTracker> ChannelTracker::create(const ChannelTrackConfig& config,
                                                    ReadingSet& readings) {
  const std::string ch = config.channel;
  TargetConfig name_probe;
  name_probe.name = ch;
  name_probe.frequency_hz = 1.0;
  if (!validate_target(name_probe, "channel").ok()) {
    return bad("channel name '" + ch + "' must be 1-64 characters of [A-Za-z0-9_-]");
  }
  ChannelTracker t;
  t.config_ = config;
  auto plain = ToneSearch::create(config.spectrum);
  if (!plain) return std::move(plain).error().with_context("channel " + ch);
  t.searches_.push_back(std::move(*plain));
  if (config.has_envelope) {
    auto env = ToneSearch::create(config.envelope);
    if (!env) return std::move(env).error().with_context("channel " + ch + " envelope");
    t.searches_.push_back(std::move(*env));
  }
  for (size_t i = 0; i < config.targets.size(); ++i) {
    const TargetConfig& tc = config.targets[i];
    const std::string what = "channel " + ch + " target " + tc.name;
    auto st = validate_target(tc, what);
    if (!st) return std::move(st).error();
    if (tc.spectrum == SearchSpectrum::kEnvelope && !config.has_envelope) {
      return bad(what + ": searches the envelope spectrum but the channel has none");
    }
    for (size_t j = 0; j < i; ++j) {
      if (config.targets[j].name == tc.name) return bad(what + ": name used twice");
    }
  }
  if (config.velocity) {
    if (auto accel = base::parse_accel_unit(config.unit)) {
      if (!(config.velocity_low_hz > 0.0) || !(config.velocity_high_hz > config.velocity_low_hz)) {
        return bad("channel " + ch + ": velocity band [" + std::to_string(config.velocity_low_hz) +
                   ", " + std::to_string(config.velocity_high_hz) + "] Hz must have 0 < low < high");
      }
      // g or m/s² -> m/s², then m/s -> mm/s.
      t.accel_to_mm_per_s_ = base::accel_unit_in_mps2(*accel) * 1000.0;
      t.velocity_scratch_.assign(t.searches_[0].num_bins(), 0.0f);
    }
  }

  // Everything is valid: register the readings.
  auto add = [&](const std::string& suffix, const std::string& unit) -> base::Result<size_t> {
    return readings.add(ch + "." + suffix, unit, ch);
  };
#define TW_ADD(dest, suffix, unit)                  \
  do {                                              \
    auto r_ = add(suffix, unit);                    \
    if (!r_) return std::move(r_).error();          \
    dest = *r_;                                     \
  } while (0)
  TW_ADD(t.rms_, "rms", config.unit);
  TW_ADD(t.peak_, "peak", config.unit);
  TW_ADD(t.crest_, "crest_factor", "");
  TW_ADD(t.kurtosis_, "kurtosis", "");
  if (t.accel_to_mm_per_s_ > 0.0) TW_ADD(t.velocity_, "velocity_rms", "mm/s");
  for (const TargetConfig& tc : config.targets) {
    Slot s;
    s.config = tc;
    if (tc.kind == TargetKind::kBearing) s.orders = *bearing_orders(tc.bearing);
    const std::string unit = amplitude_unit(config.unit, tc.spectrum, tc.scale);
    TW_ADD(s.amplitude, tc.name + ".amplitude", unit);
    TW_ADD(s.frequency, tc.name + ".frequency_hz", "Hz");
    TW_ADD(s.snr, tc.name + ".snr_db", "dB");
    for (int h = 2; h <= tc.harmonics; ++h) {
      size_t idx = 0;
      TW_ADD(idx, tc.name + ".h" + std::to_string(h) + ".amplitude", unit);
      s.harmonic_amplitudes.push_back(idx);
    }
    if (tc.sidebands) {
      TW_ADD(s.sideband_lower, tc.name + ".sideband_lower.amplitude", unit);
      TW_ADD(s.sideband_upper, tc.name + ".sideband_upper.amplitude", unit);
    }
    t.slots_.push_back(std::move(s));
  }
#undef TW_ADD
  return t;
}

void ChannelTracker::track_target(const Slot& slot, std::span<const float> power,
                                  ToneSearch& search, SpeedEstimate speed,
                                  ReadingSet& out) noexcept {
  const TargetConfig& tc = slot.config;
  auto invalidate = [&] {
    out.invalidate(slot.amplitude);
    out.invalidate(slot.frequency);
    out.invalidate(slot.snr);
    for (size_t idx : slot.harmonic_amplitudes) out.invalidate(idx);
    if (tc.sidebands) {
      out.invalidate(slot.sideband_lower);
      out.invalidate(slot.sideband_upper);
    }
  };
  const double f = target_expected_hz(tc, slot.orders, speed);
  const double tol = std::max(tc.tolerance_hz, f * tc.tolerance_percent / 100.0);
  if (!(f > 0.0) || power.size() != search.num_bins() || f + tol >= search.nyquist_hz()) {
    invalidate();
    return;
  }
  const ToneHit hit = search.search(power, f, tol);
  out.set(slot.amplitude, scaled_amplitude(hit.power, tc.scale));
  out.set(slot.frequency, hit.frequency_hz);
  const double half = static_cast<double>(config_.floor_half_width_bins) * search.bin_hz();
  const double floor = search.median_power(power, f - half, f + half);
  if (floor > 0.0 && hit.power > 0.0) {
    out.set(slot.snr, 10.0 * std::log10(hit.power / floor));
  } else {
    out.invalidate(slot.snr);
  }
  for (size_t i = 0; i < slot.harmonic_amplitudes.size(); ++i) {
    const double k = static_cast<double>(i + 2);
    if (k * (f + tol) >= search.nyquist_hz()) {
      out.invalidate(slot.harmonic_amplitudes[i]);
      continue;
    }
    const ToneHit h = search.search(power, k * f, k * tol);
    out.set(slot.harmonic_amplitudes[i], scaled_amplitude(h.power, tc.scale));
  }
  if (tc.sidebands) {
    const double fr = speed.hz();
    if (!speed.valid || fr <= tol || f + fr + tol >= search.nyquist_hz()) {
      out.invalidate(slot.sideband_lower);
      out.invalidate(slot.sideband_upper);
    } else {
      // Centred on the measured tone, so that a slipping defect tone keeps its sidebands.
      const double fc = hit.found ? hit.frequency_hz : f;
      out.set(slot.sideband_lower, scaled_amplitude(search.search(power, fc - fr, tol).power, tc.scale));
      out.set(slot.sideband_upper, scaled_amplitude(search.search(power, fc + fr, tol).power, tc.scale));
    }
  }
}

void ChannelTracker::process(const ChannelInput& input, SpeedEstimate speed,
                             ReadingSet& out) noexcept {
  ++periods_;
  if (input.stats != nullptr) {
    out.set(rms_, input.stats->rms);
    out.set(peak_, input.stats->peak);
    out.set(crest_, input.stats->crest_factor);
    out.set(kurtosis_, input.stats->kurtosis);
  } else {
    out.invalidate(rms_);
    out.invalidate(peak_);
    out.invalidate(crest_);
    out.invalidate(kurtosis_);
  }
  ToneSearch& plain = searches_[0];
  const bool plain_ok = input.power.size() == plain.num_bins();
  const bool env_ok = searches_.size() > 1 && input.envelope_power.size() == searches_[1].num_bins();
  if (!plain_ok || (!input.envelope_power.empty() && !env_ok)) ++rejected_;
  if (accel_to_mm_per_s_ > 0.0) {
    if (plain_ok) {
      dsp::integrate_power_spectrum(input.power, plain.bin_hz(), config_.velocity_low_hz,
                                    dsp::IntegrationOrder::kVelocity, accel_to_mm_per_s_,
                                    velocity_scratch_);
      const double high = std::min(config_.velocity_high_hz, plain.nyquist_hz());
      out.set(velocity_, dsp::band_rms(velocity_scratch_, plain.bin_hz(), plain.enbw_fft_bins(),
                                       config_.velocity_low_hz, high));
    } else {
      out.invalidate(velocity_);
    }
  }
  for (const Slot& slot : slots_) {
    if (slot.config.spectrum == SearchSpectrum::kEnvelope) {
      track_target(slot, env_ok ? input.envelope_power : std::span<const float>{}, searches_[1],
                   speed, out);
    } else {
      track_target(slot, plain_ok ? input.power : std::span<const float>{}, plain, speed, out);
    }
  }
}

std::string ChannelTracker::describe() const {
  const SpectrumLayout& l = config_.spectrum;
  std::string s = "channel " + config_.channel + " (" + config_.unit + "): " +
                  std::to_string(slots_.size()) + " targets, spectrum " +
                  dsp::window_name(l.window) + " block " + std::to_string(l.block) + " fft " +
                  std::to_string(l.fft_length) + " at " + std::to_string(l.sample_rate_hz) + " Hz";
  if (config_.has_envelope) s += ", envelope spectrum";
  if (accel_to_mm_per_s_ > 0.0) s += ", velocity RMS " + std::to_string(config_.velocity_low_hz) +
                                     "-" + std::to_string(config_.velocity_high_hz) + " Hz";
  return s;
}

}  // namespace tonewarden::track
