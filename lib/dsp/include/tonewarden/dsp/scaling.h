// Spectrum scales. The analyzer keeps one canonical form, the one-sided power spectrum
// in unit² (RMS², scipy's scaling='spectrum'); every other scale derives from it.
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <string>
#include <string_view>

namespace tonewarden::dsp {

enum class SpectrumScale {
  kPeak,   // unit, peak amplitude of a sine in the bin
  kRms,    // unit RMS
  kPower,  // unit² RMS² ("spectrum")
  kPsd,    // unit²/Hz ("density")
};

std::optional<SpectrumScale> parse_spectrum_scale(std::string_view name);  // peak rms power psd
const char* spectrum_scale_name(SpectrumScale scale) noexcept;
bool is_power_like(SpectrumScale scale) noexcept;  // power and psd: dB uses 10·log10

// Converts one power bin (unit²) to `scale`. `is_edge_bin` marks DC and Nyquist, which are
// not doubled in one-sided form, so their peak amplitude equals their RMS.
// enbw_hz = ENBW_bins · fs / block.
double power_to_scale(double power, SpectrumScale scale, double enbw_hz, bool is_edge_bin) noexcept;
// Converts a whole power spectrum (bins 0..nfft/2) into `out` (same size). The last bin is
// Nyquist (an edge bin) only when fft_length is even; fft_length 0 means 2·(size-1), even.
void convert_power_spectrum(std::span<const float> power, SpectrumScale scale, double enbw_hz,
                            std::span<float> out, size_t fft_length = 0) noexcept;

// dB of `value` against `reference` (> 0): 10·log10 for power-like scales, 20·log10 else.
// Values <= 0 give -400 dB rather than -inf.
double to_db(double value, double reference, SpectrumScale scale) noexcept;

}  // namespace tonewarden::dsp
