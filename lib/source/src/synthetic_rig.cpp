// SyntheticRig: the demo scenario as a signal generator. Per-frame work is a few rotator
// multiplies, one resonator step and two noise draws; slow quantities (speed, defect size)
// are refreshed every kChunk frames, at frame indices that are multiples of kChunk, so the
// output does not depend on how the caller splits it into blocks.
#include "tonewarden/source/synthetic_rig.h"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>

namespace tonewarden::source {
namespace {

constexpr int64_t kChunk = 64;
constexpr double kTwoPi = 2.0 * std::numbers::pi;
// Relative spread of impact strength from one impact to the next (common practice for
// simulated bearing faults: a few to ten percent).
constexpr double kImpactSpread = 0.1;
// bpfo_phase_ is rebased past this many cycles to keep its double precision.
constexpr double kRebaseCycles = 1024.0;

uint64_t splitmix64(uint64_t& x) {
  uint64_t z = (x += 0x9e3779b97f4a7c15ULL);
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
  return z ^ (z >> 31);
}

inline uint64_t rotl(uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }

base::Error bad(const std::string& what) {
  return base::make_error(base::ErrorCode::kInvalidArgument, "synthetic rig: " + what);
}

std::string fmt(double v) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%g", v);
  return buf;
}

base::Status validate(const SyntheticRigConfig& c) {
  auto range = [](const char* name, double v, double lo, double hi, bool lo_open) -> base::Status {
    const bool ok = std::isfinite(v) && (lo_open ? v > lo : v >= lo) && v <= hi;
    if (ok) return base::Status::success();
    return bad(std::string(name) + " " + fmt(v) + " out of range " + (lo_open ? "(" : "[") +
               fmt(lo) + ", " + fmt(hi) + "]");
  };
  for (const base::Status& s : {
           range("sample_rate_hz", c.sample_rate_hz, 8000, 384000, false),
           range("story_speed", c.story_speed, 0, 1e6, true),
           range("story_start_s", c.story_start_s, 0, 1e9, false),
           range("duration_s", c.duration_s, 0, 1e9, false),
           range("mains_hz", c.mains_hz, 0, 1000, true),
           range("nominal_speed_rpm", c.nominal_speed_rpm, 0, 60000, true),
           range("speed_drift_rpm", c.speed_drift_rpm, 0, c.nominal_speed_rpm / 10, false),
           range("speed_drift_period_s", c.speed_drift_period_s, 0, 1e9, true),
           range("impeller_vanes", c.impeller_vanes, 1, 64, false),
           range("bearing_balls", c.bearing_balls, 3, 64, false),
           range("ball_diameter_mm", c.ball_diameter_mm, 0, 1e4, true),
           range("pitch_diameter_mm", c.pitch_diameter_mm, c.ball_diameter_mm, 1e5, true),
           range("contact_angle_deg", c.contact_angle_deg, 0, 59.999, false),
           range("defect_onset_s", c.defect_onset_s, 0, 1e9, false),
           range("defect_growth_s", c.defect_growth_s, 0, 1e9, true),
           range("defect_impact_g", c.defect_impact_g, 0, 1e3, false),
           range("defect_jitter", c.defect_jitter, 0, 0.1, false),
           range("resonance_hz", c.resonance_hz, 0, 0.45 * c.sample_rate_hz, true),
           range("resonance_damping", c.resonance_damping, 0, 0.5, true),
           range("sensitivity_v_per_g", c.sensitivity_v_per_g, 0, 1e3, true),
           range("full_scale_v", c.full_scale_v, 0, 1e3, true),
           range("tach_v", c.tach_v, 0, c.full_scale_v, false),
           range("tach_duty", c.tach_duty, 0, 0.999, true),
       }) {
    if (!s.ok()) return s;
  }
  const double top_hz = c.nominal_speed_rpm / 60.0 * std::max(3, c.impeller_vanes);
  if (top_hz >= 0.45 * c.sample_rate_hz) {
    return bad("vane pass " + fmt(top_hz) + " Hz is too close to fs/2 = " +
               fmt(c.sample_rate_hz / 2) + " Hz");
  }
  for (size_t ch = 0; ch < c.channels.size(); ++ch) {
    const RigChannelMix& m = c.channels[ch];
    for (double v : {m.order_g[0], m.order_g[1], m.order_g[2], m.vane_pass_g, m.hum_g,
                     m.noise_g_rms, m.defect_gain, m.bpfo_line_g}) {
      if (!std::isfinite(v) || v < 0 || v > 1e3) {
        return bad("channel " + std::to_string(ch) + " mix value " + fmt(v) +
                   " out of range [0, 1000]");
      }
    }
  }
  return base::Status::success();
}

}  // namespace

base::Result<std::unique_ptr<SyntheticRig>> SyntheticRig::create(const SyntheticRigConfig& config) {
  if (base::Status s = validate(config); !s.ok()) return std::move(s).error();
  return std::unique_ptr<SyntheticRig>(new SyntheticRig(config));
}

SyntheticRig::SyntheticRig(const SyntheticRigConfig& config)
    : config_(config), pacer_(config.pace, config.sample_rate_hz) {
  const SyntheticRigConfig& c = config_;
  const double cos_phi = std::cos(c.contact_angle_deg * std::numbers::pi / 180.0);
  // Randall & Antoni 2011, Eq. (2): BPFO = n fr / 2 (1 - d/D cos phi).
  bpfo_order_ = c.bearing_balls / 2.0 * (1.0 - c.ball_diameter_mm / c.pitch_diameter_mm * cos_phi);
  hum_phase_cycles_per_frame_ = 2.0 * c.mains_hz / c.sample_rate_hz;

  uint64_t seed = c.seed;
  for (uint64_t& s : rng_) s = splitmix64(seed);
  // Seeded phases for every tone, so channels are not phase-locked copies of each other.
  auto phase = [&] { return kTwoPi * static_cast<double>(next_u64() >> 11) * 0x1.0p-53; };
  for (size_t ch = 0; ch < 2; ++ch) {
    const RigChannelMix& m = c.channels[ch];
    const std::array<double, 4> amp_g = {m.order_g[0], m.order_g[1], m.order_g[2], m.vane_pass_g};
    for (size_t k = 0; k < 4; ++k) {
      const double p = phase();
      const double a = amp_g[k] * c.sensitivity_v_per_g;
      tone_c_[ch][k] = a * std::cos(p);
      tone_s_[ch][k] = a * std::sin(p);
    }
    const double p = phase();
    hum_c_[ch] = m.hum_g * c.sensitivity_v_per_g * std::cos(p);
    hum_s_[ch] = m.hum_g * c.sensitivity_v_per_g * std::sin(p);
  }
  // Two-pole resonator for a damped mode: poles r e^{±j wd}, r = e^{-zeta wn / fs}.
  const double wn = kTwoPi * c.resonance_hz / c.sample_rate_hz;
  const double wd = wn * std::sqrt(1.0 - c.resonance_damping * c.resonance_damping);
  const double r = std::exp(-c.resonance_damping * wn);
  res_a1_ = 2.0 * r * std::cos(wd);
  res_a2_ = -r * r;
  // Impacts enter through (1 - z^-1)^2, a double zero at DC: an accelerometer sees a force
  // impulse through a mode as acceleration, which has no DC response, so the impact train
  // adds (almost) nothing at BPFO itself in the plain spectrum. Scale so that one impact's
  // response peaks at exactly its amplitude (found by running the filter once here).
  {
    double y1 = 0.0, y2 = 0.0, peak = 0.0;
    const double drive[3] = {1.0, -2.0, 1.0};
    for (int n = 0; n < 4096; ++n) {
      const double y = res_a1_ * y1 + res_a2_ * y2 + (n < 3 ? drive[n] : 0.0);
      peak = std::max(peak, std::fabs(y));
      y2 = y1;
      y1 = y;
    }
    res_norm_ = 1.0 / peak;
  }
  next_impact_ = 1.0 + c.defect_jitter * next_normal();
}

SyntheticRig::~SyntheticRig() = default;

uint64_t SyntheticRig::next_u64() noexcept {
  // xoshiro256** (Blackman & Vigna 2018).
  const uint64_t result = rotl(rng_[1] * 5, 7) * 9;
  const uint64_t t = rng_[1] << 17;
  rng_[2] ^= rng_[0];
  rng_[3] ^= rng_[1];
  rng_[1] ^= rng_[2];
  rng_[0] ^= rng_[3];
  rng_[2] ^= t;
  rng_[3] = rotl(rng_[3], 45);
  return result;
}

double SyntheticRig::next_normal() noexcept {
  // Irwin-Hall sum of four 16-bit uniforms: mean 2, variance 4/12, so (sum - 2) * sqrt(3)
  // has unit variance. Close to Gaussian (kurtosis 2.7) and far cheaper than Box-Muller.
  const uint64_t r = next_u64();
  const double sum = static_cast<double>((r & 0xffff) + ((r >> 16) & 0xffff) +
                                         ((r >> 32) & 0xffff) + (r >> 48)) *
                     (1.0 / 65536.0);
  return (sum - 2.0) * 1.7320508075688772;
}

double SyntheticRig::story_time_at(int64_t frame) const noexcept {
  return config_.story_start_s +
         config_.story_speed * static_cast<double>(frame) / config_.sample_rate_hz;
}

double SyntheticRig::speed_hz_at(double story_s) const noexcept {
  // Two incommensurate slow swings; |drift| <= speed_drift_rpm.
  const double p = config_.speed_drift_period_s;
  const double drift = 0.8 * std::sin(kTwoPi * story_s / p) +
                       0.2 * std::sin(kTwoPi * story_s / (0.29 * p) + 1.3);
  return (config_.nominal_speed_rpm + config_.speed_drift_rpm * drift) / 60.0;
}

double SyntheticRig::vane_pass_hz_at(double story_s) const noexcept {
  return config_.impeller_vanes * speed_hz_at(story_s);
}

double SyntheticRig::defect_amplitude_g_at(double story_s) const noexcept {
  const double x = (story_s - config_.defect_onset_s) / config_.defect_growth_s;
  if (x <= 0.0) return 0.0;
  if (x >= 1.0) return config_.defect_impact_g;
  return config_.defect_impact_g * x * x * (3.0 - 2.0 * x);  // smoothstep: no jump at onset
}

SourceCapabilities SyntheticRig::capabilities() const {
  SourceCapabilities caps;
  caps.sample_rate_hz = config_.sample_rate_hz;
  caps.channels = num_channels();
  caps.is_live = false;
  caps.paced = config_.pace == Pace::kRealTime;
  caps.can_loop = false;
  return caps;
}

base::Status SyntheticRig::start() {
  if (started_) {
    return base::make_error(base::ErrorCode::kInternal, "synthetic rig: start() called twice");
  }
  started_ = true;
  start_wall_ = config_.start_time.unix_ms != 0 ? config_.start_time : base::wall_now();
  pacer_.start();
  health_.set_state(SourceState::kRunning);
  return base::Status::success();
}

void SyntheticRig::stop() noexcept {
  pacer_.stop();
  health_.set_state(SourceState::kFinished);
}

base::Result<size_t> SyntheticRig::read(std::span<float> out, BlockInfo* info) {
  if (!started_) {
    return base::make_error(base::ErrorCode::kInternal, "synthetic rig: read() before start()");
  }
  const size_t nch = num_channels();
  if (out.size() < nch) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "synthetic rig: read buffer of " + std::to_string(out.size()) +
                                " samples is smaller than one frame of " + std::to_string(nch));
  }
  int64_t frames = static_cast<int64_t>(out.size() / nch);
  if (config_.duration_s > 0.0) {
    const int64_t total = std::llround(config_.duration_s * config_.sample_rate_hz);
    frames = std::min(frames, total - frame_);
    if (frames <= 0) {
      health_.set_state(SourceState::kFinished);
      return size_t{0};
    }
  }
  if (!pacer_.wait_until_due(frame_ + frames)) {
    health_.set_state(SourceState::kFinished);
    return size_t{0};
  }
  if (info != nullptr) {
    info->first_frame = frame_;
    info->frames = static_cast<size_t>(frames);
    info->t_first = base::wall_after_samples(start_wall_, frame_, config_.sample_rate_hz);
    info->discontinuity = false;
  }
  generate(out.first(static_cast<size_t>(frames) * nch));
  health_.add_frames(static_cast<uint64_t>(frames));
  return static_cast<size_t>(frames);
}

void SyntheticRig::generate(std::span<float> out) noexcept {
  const size_t nch = num_channels();
  size_t frames = out.size() / nch;
  float* p = out.data();
  while (frames > 0) {
    // Never cross a chunk boundary, so refreshes happen at the same frames for any split.
    const size_t n = std::min<size_t>(frames, static_cast<size_t>(kChunk - frame_ % kChunk));
    generate_chunk(p, n);
    p += n * nch;
    frames -= n;
  }
}

void SyntheticRig::refresh_chunk() noexcept {
  const SyntheticRigConfig& c = config_;
  const double story_s = story_time_at(frame_);
  shaft_inc_ = speed_hz_at(story_s) / c.sample_rate_hz;
  bpfo_inc_ = bpfo_order_ * shaft_inc_;
  defect_v_ = defect_amplitude_g_at(story_s) * c.sensitivity_v_per_g;
  line_scale_ = c.defect_impact_g > 0.0 ? defect_v_ / (c.defect_impact_g * c.sensitivity_v_per_g)
                                        : 0.0;
  if (bpfo_phase_ >= kRebaseCycles) {
    const double whole = std::floor(bpfo_phase_);
    bpfo_phase_ -= whole;
    next_impact_ -= whole;
  }
  // Rotators restart from the exact phase accumulators, so rounding never builds up.
  const double vane_phase = c.impeller_vanes * shaft_phase_;
  shaft_rot_.set(shaft_phase_, shaft_inc_);
  vane_rot_.set(vane_phase - std::floor(vane_phase), c.impeller_vanes * shaft_inc_);
  hum_rot_.set(hum_phase_, hum_phase_cycles_per_frame_);
  bpfo_rot_.set(bpfo_phase_ - std::floor(bpfo_phase_), bpfo_inc_);
}

void SyntheticRig::Rotator::set(double phase_cycles, double inc_cycles) noexcept {
  re = std::cos(kTwoPi * phase_cycles);
  im = std::sin(kTwoPi * phase_cycles);
  wre = std::cos(kTwoPi * inc_cycles);
  wim = std::sin(kTwoPi * inc_cycles);
}

void SyntheticRig::generate_chunk(float* out, size_t frames) noexcept {
  const SyntheticRigConfig& c = config_;
  const size_t nch = num_channels();
  const float full_scale = static_cast<float>(c.full_scale_v);
  const RigChannelMix& m0 = c.channels[0];
  const RigChannelMix& m1 = c.channels[1];
  const double v_per_g = c.sensitivity_v_per_g;
  const double noise0 = m0.noise_g_rms * v_per_g, noise1 = m1.noise_g_rms * v_per_g;
  const double line0 = m0.bpfo_line_g * v_per_g, line1 = m1.bpfo_line_g * v_per_g;

  for (size_t i = 0; i < frames; ++i) {
    if (frame_ % kChunk == 0) refresh_chunk();
    // Shaft orders from one rotator: z^2 and z^3 by complex products.
    const double c1 = shaft_rot_.re, s1 = shaft_rot_.im;
    const double c2 = c1 * c1 - s1 * s1, s2 = 2.0 * c1 * s1;
    const double c3 = c2 * c1 - s2 * s1, s3 = s2 * c1 + c2 * s1;
    const double cv = vane_rot_.re, sv = vane_rot_.im;
    const double ch_ = hum_rot_.re, sh = hum_rot_.im;
    const double sb = bpfo_rot_.im;

    // Outer-race impacts: one each time the BPFO phase passes the next (jittered) mark.
    bpfo_phase_ += bpfo_inc_;
    double x = 0.0;
    if (bpfo_phase_ >= next_impact_) {
      const double spread = 1.0 + kImpactSpread * next_normal();
      next_impact_ += std::max(0.5, 1.0 + c.defect_jitter * next_normal());
      if (defect_v_ > 0.0) {
        x = defect_v_ * spread * res_norm_;
        ++impacts_;
      }
    }
    const double y = res_a1_ * res_y1_ + res_a2_ * res_y2_ + x - 2.0 * res_x1_ + res_x2_;
    res_x2_ = res_x1_;
    res_x1_ = x;
    res_y2_ = res_y1_;
    res_y1_ = y;

    double v[2];
    for (size_t ch = 0; ch < 2; ++ch) {
      const auto& tc = tone_c_[ch];
      const auto& ts = tone_s_[ch];
      // a sin(theta + p) = (a cos p) sin(theta) + (a sin p) cos(theta)
      v[ch] = tc[0] * s1 + ts[0] * c1 + tc[1] * s2 + ts[1] * c2 + tc[2] * s3 + ts[2] * c3 +
              tc[3] * sv + ts[3] * cv + hum_c_[ch] * sh + hum_s_[ch] * ch_;
    }
    v[0] += m0.defect_gain * y + line0 * line_scale_ * sb + noise0 * next_normal();
    v[1] += m1.defect_gain * y + line1 * line_scale_ * sb + noise1 * next_normal();

    for (size_t ch = 0; ch < 2; ++ch) {
      float s = static_cast<float>(v[ch]);
      if (s > full_scale || s < -full_scale) {
        s = std::clamp(s, -full_scale, full_scale);
        ++clipped_;
      }
      out[ch] = s;
    }
    if (nch == 3) out[2] = shaft_phase_ < c.tach_duty ? static_cast<float>(c.tach_v) : 0.0f;
    out += nch;

    shaft_phase_ += shaft_inc_;
    if (shaft_phase_ >= 1.0) shaft_phase_ -= 1.0;
    hum_phase_ += hum_phase_cycles_per_frame_;
    if (hum_phase_ >= 1.0) hum_phase_ -= 1.0;
    shaft_rot_.step();
    vane_rot_.step();
    hum_rot_.step();
    bpfo_rot_.step();
    ++frame_;
  }
}

std::string SyntheticRig::describe() const {
  const SyntheticRigConfig& c = config_;
  char buf[320];
  std::snprintf(buf, sizeof buf,
                "synthetic rig: %zu ch%s at %g Hz, %s, %g rpm, %d vanes, BPFO %.4fx = %.2f Hz, "
                "story x%g from %g s (defect at %g s), seed %llu",
                num_channels(), c.tach_channel ? " (ch 2 tach)" : "", c.sample_rate_hz,
                to_string(c.pace), c.nominal_speed_rpm, c.impeller_vanes, bpfo_order_, bpfo_hz(),
                c.story_speed, c.story_start_s, c.defect_onset_s,
                static_cast<unsigned long long>(c.seed));
  return buf;
}

}  // namespace tonewarden::source
