// Spectrum scales derived from the one-sided power spectrum (unit² RMS²).
#include "tonewarden/dsp/scaling.h"

#include <algorithm>
#include <cmath>

namespace tonewarden::dsp {
namespace {
constexpr double kFloorDb = -400.0;  // stands in for -inf so JSON and charts stay finite
}  // namespace

std::optional<SpectrumScale> parse_spectrum_scale(std::string_view name) {
  if (name == "peak") return SpectrumScale::kPeak;
  if (name == "rms") return SpectrumScale::kRms;
  if (name == "power") return SpectrumScale::kPower;
  if (name == "psd") return SpectrumScale::kPsd;
  return std::nullopt;
}

const char* spectrum_scale_name(SpectrumScale scale) noexcept {
  switch (scale) {
    case SpectrumScale::kPeak: return "peak";
    case SpectrumScale::kRms: return "rms";
    case SpectrumScale::kPower: return "power";
    case SpectrumScale::kPsd: return "psd";
  }
  return "?";
}

bool is_power_like(SpectrumScale scale) noexcept {
  return scale == SpectrumScale::kPower || scale == SpectrumScale::kPsd;
}

double power_to_scale(double power, SpectrumScale scale, double enbw_hz, bool is_edge_bin) noexcept {
  const double p = power > 0 ? power : 0.0;
  switch (scale) {
    case SpectrumScale::kPeak:
      // A sine of peak A has RMS² A²/2 in a doubled one-sided bin; DC/Nyquist are not
      // doubled and a constant's peak equals its RMS.
      return is_edge_bin ? std::sqrt(p) : std::sqrt(2.0 * p);
    case SpectrumScale::kRms:
      return std::sqrt(p);
    case SpectrumScale::kPower:
      return p;
    case SpectrumScale::kPsd:
      // unit² per bin -> unit²/Hz: divide by the noise bandwidth the window gives each bin.
      return enbw_hz > 0 ? p / enbw_hz : 0.0;
  }
  return p;
}

void convert_power_spectrum(std::span<const float> power, SpectrumScale scale, double enbw_hz,
                            std::span<float> out, size_t fft_length) noexcept {
  const size_t n = std::min(power.size(), out.size());
  if (n == 0) return;
  const size_t nfft = fft_length != 0 ? fft_length : 2 * (power.size() - 1);
  // Nyquist exists (and is not doubled) only for an even FFT length.
  const bool has_nyquist = nfft % 2 == 0 && nfft / 2 + 1 == power.size();
  for (size_t k = 0; k < n; ++k) {
    const bool edge = k == 0 || (has_nyquist && k + 1 == power.size());
    out[k] = static_cast<float>(power_to_scale(power[k], scale, enbw_hz, edge));
  }
}

double to_db(double value, double reference, SpectrumScale scale) noexcept {
  if (!(value > 0) || !(reference > 0)) return kFloorDb;
  const double db = (is_power_like(scale) ? 10.0 : 20.0) * std::log10(value / reference);
  return db < kFloorDb ? kFloorDb : db;
}

}  // namespace tonewarden::dsp
