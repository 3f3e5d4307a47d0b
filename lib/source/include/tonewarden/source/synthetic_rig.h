// SyntheticRig: a Source that plays the invented demo scenario (DESIGN.md, "Demo scenario"):
// an end-suction pump with a 6-vane impeller, driven near 2975 rpm by a 2-pole motor on 50 Hz
// mains, watched by two accelerometers; an outer-race defect on the motor drive-end bearing
// grows from a set story time.
//
// Output units: volts at the audio interface input, ±full_scale_v (default ±1.0 float =
// ±1 V peak). At the default 100 mV/g this is ±10 g; samples beyond full scale clip, as an
// ADC would, and are counted. Channel 0: motor drive-end bearing. Channel 1: pump bearing
// housing. Channel 2 (optional): tach, one pulse per revolution, tach_v high for tach_duty
// of each revolution starting at shaft phase 0, else 0 V.
//
// Two clocks are kept apart. Pace decides how fast samples are delivered (real time or as
// fast as possible). Story speed decides how fast the scenario unfolds: story time =
// story_start_s + story_speed * (frames / sample_rate_hz). Speed drift and defect growth
// follow story time; tones, impacts and noise follow signal time. Story time 0 is the start
// of the overnight test (19:30 in the story); the defect appears at 01:30 (21600 s).
// A demo that shows the defect grow within two minutes: story_start_s = 21540,
// story_speed = 30 (the 1800 s growth then takes one minute).
//
// Deterministic: the same config (seed included) gives byte-identical samples.
// Generation allocates nothing; tones use phase accumulators and rotators refreshed every
// 64 frames, noise a small xoshiro generator.
#pragma once

#include <array>
#include <cstdint>
#include <memory>
#include <span>
#include <string>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"
#include "tonewarden/source/pacer.h"
#include "tonewarden/source/source.h"
#include "tonewarden/source/source_health.h"

namespace tonewarden::source {

// What one accelerometer sees, in g (peak amplitudes of tones, RMS of noise).
struct RigChannelMix {
  std::array<double, 3> order_g{};  // shaft orders 1x, 2x, 3x
  double vane_pass_g = 0.0;         // impeller vanes x shaft speed
  double hum_g = 0.0;               // 2x mains (magnetic forces in the motor)
  double noise_g_rms = 0.0;         // broadband, white up to fs/2
  double defect_gain = 0.0;         // share of the bearing impacts reaching this sensor
  double bpfo_line_g = 0.0;         // plain-spectrum BPFO line at full defect size
};

struct SyntheticRigConfig {
  // Signal and clocks.
  double sample_rate_hz = 48000.0;  // [8000, 384000]
  bool tach_channel = false;        // adds channel 2
  Pace pace = Pace::kRealTime;
  double story_speed = 1.0;    // (0, 1e6]: story seconds per signal second
  double story_start_s = 0.0;  // >= 0: story time of frame 0
  double duration_s = 0.0;     // signal seconds until kFinished; 0 = endless
  uint64_t seed = 1;
  base::WallTimeMs start_time{};  // unix_ms 0: the wall clock at start()

  // The machine. Speed = nominal + a slow drift (a few rpm, deterministic in story time).
  double mains_hz = 50.0;               // 50 or 60 typically; hum at 2x
  double nominal_speed_rpm = 2975.0;    // (0, 60000]
  double speed_drift_rpm = 4.0;         // [0, nominal/10]
  double speed_drift_period_s = 900.0;  // story seconds, > 0
  int impeller_vanes = 6;               // [1, 64]

  // Motor drive-end deep-groove ball bearing and its outer-race defect.
  int bearing_balls = 9;             // [3, 64]
  double ball_diameter_mm = 7.94;    // d > 0, d < pitch
  double pitch_diameter_mm = 39.04;  // D
  double contact_angle_deg = 0.0;    // [0, 60)
  double defect_onset_s = 21600.0;   // story time when impacts begin
  double defect_growth_s = 1800.0;   // story seconds from onset to full size, > 0
  double defect_impact_g = 0.8;      // full-size impact peak at gain 1, g
  double defect_jitter = 0.01;       // relative std-dev of impact intervals (slip), [0, 0.1]
  double resonance_hz = 3500.0;      // structural resonance the impacts ring, < 0.45 fs
  double resonance_damping = 0.03;   // damping ratio, (0, 0.5)

  // Sensors and interface.
  double sensitivity_v_per_g = 0.1;  // 100 mV/g
  double full_scale_v = 1.0;         // clip level, volts (float ±1.0 = ±1 V)
  double tach_v = 0.5;               // tach pulse height, volts
  double tach_duty = 0.1;            // (0, 1): fraction of a revolution the pulse is high
  // Plausible levels for a healthy pump of this size (common practice: about 1.5 mm/s RMS
  // at 1x is a smooth machine of 15-300 kW); vane pass stronger at the pump.
  std::array<RigChannelMix, 2> channels{{
      {{0.08, 0.035, 0.015}, 0.03, 0.04, 0.015, 1.0, 0.01},   // motor drive end
      {{0.06, 0.030, 0.012}, 0.12, 0.012, 0.02, 0.2, 0.002},  // pump bearing housing
  }};
};

class SyntheticRig final : public Source {
 public:
  static base::Result<std::unique_ptr<SyntheticRig>> create(const SyntheticRigConfig& config);
  ~SyntheticRig() override;

  // Source.
  SourceCapabilities capabilities() const override;
  base::Status start() override;
  base::Result<size_t> read(std::span<float> out_interleaved, BlockInfo* info) override;
  void stop() noexcept override;
  SourceHealth health() const override { return health_.snapshot(); }
  std::string describe() const override;

  // Writes the next out.size()/channels frames without pacing (benchmarks, batch use).
  // out.size() must be a multiple of num_channels(). Allocation-free.
  void generate(std::span<float> out) noexcept;
  size_t num_channels() const noexcept { return config_.tach_channel ? 3 : 2; }
  int64_t next_frame() const noexcept { return frame_; }
  uint64_t num_clipped() const noexcept { return clipped_; }  // samples held at full scale
  uint64_t num_impacts() const noexcept { return impacts_; }  // defect impacts so far
  // Times read() slept to hold real time (always 0 when fast).
  uint64_t num_pacing_sleeps() const noexcept { return pacer_.num_sleeps(); }

  // Ground truth of the scenario, for tests and the demo's explanations.
  const SyntheticRigConfig& config() const noexcept { return config_; }
  double story_time_at(int64_t frame) const noexcept;
  double speed_hz_at(double story_s) const noexcept;
  // BPFO / shaft frequency = n/2 (1 - d/D cos phi): Randall & Antoni 2011, Eq. (2).
  double bpfo_order() const noexcept { return bpfo_order_; }
  double bpfo_hz_at(double story_s) const noexcept { return bpfo_order_ * speed_hz_at(story_s); }
  double bpfo_hz() const noexcept { return bpfo_order_ * config_.nominal_speed_rpm / 60.0; }
  double vane_pass_hz_at(double story_s) const noexcept;
  double hum_hz() const noexcept { return 2.0 * config_.mains_hz; }
  // Impact peak in g at defect_gain 1 (0 before onset, a smooth ramp to defect_impact_g).
  double defect_amplitude_g_at(double story_s) const noexcept;

 private:
  // exp(j 2 pi phase), advanced by exp(j 2 pi inc) per frame.
  struct Rotator {
    double re = 1.0, im = 0.0, wre = 1.0, wim = 0.0;
    void set(double phase_cycles, double inc_cycles) noexcept;
    void step() noexcept {
      const double r = re * wre - im * wim;
      im = re * wim + im * wre;
      re = r;
    }
  };

  explicit SyntheticRig(const SyntheticRigConfig& config);
  void refresh_chunk() noexcept;
  void generate_chunk(float* out, size_t frames) noexcept;
  double next_normal() noexcept;
  uint64_t next_u64() noexcept;

  SyntheticRigConfig config_;
  Pacer pacer_;
  HealthTracker health_;
  bool started_ = false;
  base::WallTimeMs start_wall_{};
  double bpfo_order_ = 0.0;
  double hum_phase_cycles_per_frame_ = 0.0;
  // Phase offsets per channel, as (cos, sin) times amplitude in volts: [ch][1x,2x,3x,vane].
  std::array<std::array<double, 4>, 2> tone_c_{};
  std::array<std::array<double, 4>, 2> tone_s_{};
  std::array<double, 2> hum_c_{}, hum_s_{};
  // Resonator y[n] = a1 y[n-1] + a2 y[n-2] + x[n] - 2 x[n-1] + x[n-2], x = impacts scaled
  // by res_norm_ so that one impact's response peaks at its amplitude.
  double res_a1_ = 0.0, res_a2_ = 0.0, res_y1_ = 0.0, res_y2_ = 0.0, res_norm_ = 1.0;
  double res_x1_ = 0.0, res_x2_ = 0.0;
  // Running state.
  int64_t frame_ = 0;
  double shaft_phase_ = 0.0;  // cycles in [0, 1)
  double hum_phase_ = 0.0;    // cycles in [0, 1)
  double bpfo_phase_ = 0.0;   // cycles since the last rebase
  double next_impact_ = 1.0;  // bpfo_phase_ at which the next impact falls
  double shaft_inc_ = 0.0;   // cycles per frame, refreshed per chunk
  double bpfo_inc_ = 0.0;
  double defect_v_ = 0.0;    // impact peak in volts at gain 1
  double line_scale_ = 0.0;  // defect size relative to full
  Rotator shaft_rot_, vane_rot_, hum_rot_, bpfo_rot_;
  std::array<uint64_t, 4> rng_{};
  uint64_t clipped_ = 0;
  uint64_t impacts_ = 0;
};

}  // namespace tonewarden::source
