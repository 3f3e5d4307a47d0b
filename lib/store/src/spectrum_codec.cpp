// 16-bit logarithmic spectrum codes for snapshots (format in spectrum_codec.h, SCHEMA.md).
#include "tonewarden/store/spectrum_codec.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace tonewarden::store {

using base::ErrorCode;
using base::make_error;

base::Result<EncodedSpectrum> encode_spectrum(std::span<const float> magnitude) {
  double min_db = std::numeric_limits<double>::infinity();
  for (size_t i = 0; i < magnitude.size(); ++i) {
    const float v = magnitude[i];
    if (!std::isfinite(v)) {
      return make_error(ErrorCode::kInvalidArgument,
                        "spectrum bin " + std::to_string(i) + " is not finite");
    }
    if (v > 0.0f) min_db = std::min(min_db, 20.0 * std::log10(static_cast<double>(v)));
  }
  EncodedSpectrum out;
  out.floor_db = std::isfinite(min_db) ? std::floor(min_db) : 0.0;
  out.bytes.resize(magnitude.size() * 2);
  for (size_t i = 0; i < magnitude.size(); ++i) {
    uint32_t code = 0;
    const float v = magnitude[i];
    if (v > 0.0f) {
      const double steps = (20.0 * std::log10(static_cast<double>(v)) - out.floor_db) / kCodeStepDb;
      code = static_cast<uint32_t>(std::clamp(std::lround(steps) + 1L, 1L, 65535L));
    }
    out.bytes[2 * i] = static_cast<char>(code & 0xff);
    out.bytes[2 * i + 1] = static_cast<char>(code >> 8);
  }
  return out;
}

base::Result<std::vector<float>> decode_spectrum(double floor_db, const std::string& bytes) {
  if (bytes.size() % 2 != 0) {
    return make_error(ErrorCode::kCorruptData,
                      "spectrum blob has odd length " + std::to_string(bytes.size()));
  }
  std::vector<float> out(bytes.size() / 2);
  for (size_t i = 0; i < out.size(); ++i) {
    const uint32_t code = static_cast<uint8_t>(bytes[2 * i]) |
                          (static_cast<uint32_t>(static_cast<uint8_t>(bytes[2 * i + 1])) << 8);
    out[i] = code == 0 ? 0.0f
                       : static_cast<float>(std::pow(10.0, (floor_db + (code - 1) * kCodeStepDb) / 20.0));
  }
  return out;
}

}  // namespace tonewarden::store
