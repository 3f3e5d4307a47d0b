// Targets: named frequencies to follow - fixed Hz, an order of shaft speed, a bearing defect
// tone from geometry, gear mesh / vane pass (teeth × speed), electrical hum (mains, 2× mains).
#pragma once

#include <cstddef>
#include <string>

#include "tonewarden/base/result.h"
#include "tonewarden/track/bearing.h"
#include "tonewarden/track/speed.h"

namespace tonewarden::track {

enum class TargetKind { kFixedHz, kOrder, kBearing, kMesh, kHum };
enum class SearchSpectrum { kPlain, kEnvelope };
// How the amplitude reading is expressed: RMS (default), peak (√2·RMS, a sine's amplitude)
// or power (RMS², the spectrum's own unit).
enum class AmplitudeScale { kRms, kPeak, kPower };

struct TargetConfig {
  std::string name;                 // [A-Za-z0-9_-]+, unique within the channel
  TargetKind kind = TargetKind::kFixedHz;
  double frequency_hz = 0.0;        // kFixedHz: > 0
  double order = 1.0;               // kOrder: > 0 (multiples of shaft speed)
  int teeth = 0;                    // kMesh: >= 1 (gear teeth, impeller vanes, fan blades)
  double mains_hz = 50.0;           // kHum: > 0
  int hum_multiple = 1;             // kHum: 1 (mains) or 2 (twice mains)
  BearingGeometry bearing;          // kBearing
  BearingTone bearing_tone = BearingTone::kBpfo;
  // Search window around the expected frequency: ± max(tolerance_hz, tolerance_percent %),
  // at least the nearest bin. Harmonic k searches k times as wide.
  double tolerance_hz = 0.0;
  double tolerance_percent = 2.0;
  SearchSpectrum spectrum = SearchSpectrum::kPlain;
  AmplitudeScale scale = AmplitudeScale::kRms;
  int harmonics = 1;                // 1: fundamental only; N: also 2×..N× (N <= 16)
  bool sidebands = false;           // also read the fundamental ± shaft speed
};

// Checks one target; `what` prefixes errors (e.g. "channel de.target bpfo").
base::Status validate_target(const TargetConfig& target, const std::string& what);

// Expected frequency of a target at `speed`; 0 when it depends on an unknown speed.
// `bearing_orders` is used for kBearing only (computed once by the caller).
double target_expected_hz(const TargetConfig& target, const BearingOrders& bearing_orders,
                          SpeedEstimate speed) noexcept;

bool target_needs_speed(const TargetConfig& target) noexcept;

}  // namespace tonewarden::track
