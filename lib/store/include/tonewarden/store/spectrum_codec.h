// Compact spectrum encoding for snapshots: one little-endian uint16 log code per bin.
//   code 0      -> value 0 (or anything at or below 0)
//   code c >= 1 -> value = 10^((floor_db + (c-1)*kCodeStepDb) / 20)
// floor_db is chosen per spectrum (the smallest non-zero level, rounded down to a whole dB);
// codes saturate at 65535, so a spectrum spans at most 655.34 dB above its floor.
// Encoding error: at most kCodeStepDb/2 = 0.005 dB, i.e. a relative error below 0.058 %.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"

namespace tonewarden::store {

inline constexpr double kCodeStepDb = 0.01;

struct EncodedSpectrum {
  double floor_db = 0.0;     // level of code 1, dB re 1 unit (20*log10)
  std::string bytes;         // 2 bytes per bin, little-endian
};

// Values that are NaN or infinite are rejected (kInvalidArgument) with the bin index.
base::Result<EncodedSpectrum> encode_spectrum(std::span<const float> magnitude);
// Fails with kCorruptData if bytes has an odd length.
base::Result<std::vector<float>> decode_spectrum(double floor_db, const std::string& bytes);

}  // namespace tonewarden::store
