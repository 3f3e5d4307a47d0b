// Bearing defect frequencies from geometry, as multiples of shaft speed.
// FTF = (fr/2)(1 − (d/D)cosφ), BPFO = n·FTF, BPFI = (n·fr/2)(1 + (d/D)cosφ),
// BSF = (D/2d)·fr·(1 − ((d/D)cosφ)²): R. B. Randall, J. Antoni, "Rolling element bearing
// diagnostics — A tutorial", MSSP 25(2):485–520, 2011, Eqs. (1)–(4). Real tones sit 1–2 % off
// these through slip, so searches need a tolerance window.
#pragma once

#include "tonewarden/base/result.h"

namespace tonewarden::track {

struct BearingGeometry {
  int num_elements = 0;              // n >= 1
  double element_diameter = 0.0;     // d > 0, any length unit (same as pitch)
  double pitch_diameter = 0.0;       // D > d
  double contact_angle_deg = 0.0;    // φ in [0, 90)
};

// Defect frequencies in orders (multiples of the shaft rotation frequency fr).
struct BearingOrders {
  double ftf = 0;      // fundamental train (cage) frequency
  double bpfo = 0;     // ball pass, outer race
  double bpfi = 0;     // ball pass, inner race
  double bsf = 0;      // ball spin
  double two_bsf = 0;  // 2·BSF: a ball defect strikes both races per spin
};

enum class BearingTone { kFtf, kBpfo, kBpfi, kBsf, kTwoBsf };

// Validates the geometry (clear one-line errors) and computes the orders.
base::Result<BearingOrders> bearing_orders(const BearingGeometry& geometry);
double bearing_tone_order(const BearingOrders& orders, BearingTone tone) noexcept;
const char* bearing_tone_name(BearingTone tone) noexcept;  // "ftf" "bpfo" "bpfi" "bsf" "2bsf"

}  // namespace tonewarden::track
