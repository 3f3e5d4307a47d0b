// Spectral windows: coefficient tables in periodic (DFT-even) form, normalised to peak 1,
// plus the figures derived from them (coherent gain, ENBW, scallop loss).
#include "tonewarden/dsp/window.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <complex>
#include <numbers>
#include <system_error>

namespace tonewarden::dsp {
namespace {

constexpr double kMaxKaiserBeta = 50.0;
constexpr const char* kValidNames =
    "rect hann hamming blackman blackman-harris flattop hft95 kaiser:BETA";

struct NamedKind {
  const char* name;
  WindowKind kind;
};
constexpr NamedKind kNames[] = {
    {"rect", WindowKind::kRectangular},
    {"hann", WindowKind::kHann},
    {"hamming", WindowKind::kHamming},
    {"blackman", WindowKind::kBlackman},
    {"blackman-harris", WindowKind::kBlackmanHarris},
    {"flattop", WindowKind::kFlatTop},
    {"hft95", WindowKind::kHft95},
};

// Cosine-sum coefficients a_k of w[n] = Σ (-1)^k a_k cos(2πkn/N), before normalisation.
std::vector<double> raw_cosine_terms(WindowKind kind) {
  switch (kind) {
    case WindowKind::kRectangular:
      return {1.0};
    case WindowKind::kHann:
      return {0.5, 0.5};
    case WindowKind::kHamming:
      return {0.54, 0.46};
    case WindowKind::kBlackman:
      return {0.42, 0.5, 0.08};
    case WindowKind::kBlackmanHarris:
      // 4-term minimum-sidelobe Blackman-Harris: Harris 1978, Proc. IEEE 66(1), Table 1.
      return {0.35875, 0.48829, 0.14128, 0.01168};
    case WindowKind::kFlatTop:
      // D'Antona & Ferrero, Digital Signal Processing for Measurement Systems (2006), p. 70.
      return {0.21557895, 0.41663158, 0.277263158, 0.083578947, 0.006947368};
    case WindowKind::kHft95:
      // HFT95: Heinzel, Ruediger, Schilling, AEI Hannover 2002 (peak 4.68; normalised below).
      return {1.0, 1.9383379, 1.3045202, 0.4028270, 0.0350665};
    case WindowKind::kKaiser:
      return {};
  }
  return {};
}

base::Error invalid(std::string message) {
  return base::make_error(base::ErrorCode::kInvalidArgument, std::move(message));
}

}  // namespace

base::Result<WindowSpec> parse_window_spec(std::string_view name) {
  for (const auto& entry : kNames) {
    if (name == entry.name) return WindowSpec{entry.kind, 0.0};
  }
  constexpr std::string_view kKaiserPrefix = "kaiser:";
  if (name.starts_with(kKaiserPrefix)) {
    const std::string_view text = name.substr(kKaiserPrefix.size());
    double beta = 0;
    const auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), beta);
    if (text.empty() || ec != std::errc() || ptr != text.data() + text.size() ||
        !std::isfinite(beta)) {
      return invalid("window '" + std::string(name) + "': kaiser beta must be a number, e.g. kaiser:8");
    }
    if (beta < 0 || beta > kMaxKaiserBeta) {
      return invalid("window '" + std::string(name) + "': kaiser beta must be in [0, 50]");
    }
    return WindowSpec{WindowKind::kKaiser, beta};
  }
  return invalid("unknown window '" + std::string(name) + "'; valid: " + kValidNames);
}

std::string window_name(const WindowSpec& spec) {
  if (spec.kind == WindowKind::kKaiser) {
    char buf[32];
    const auto [ptr, ec] = std::to_chars(buf, buf + sizeof buf, spec.kaiser_beta);
    return "kaiser:" + std::string(buf, ec == std::errc() ? ptr : buf);
  }
  for (const auto& entry : kNames) {
    if (entry.kind == spec.kind) return entry.name;
  }
  return "unknown";
}

base::Result<Window> Window::create(const WindowSpec& spec, size_t length) {
  if (length < 2) {
    return invalid("window length " + std::to_string(length) + " is too short (need >= 2)");
  }
  if (spec.kind == WindowKind::kKaiser &&
      !(spec.kaiser_beta >= 0 && spec.kaiser_beta <= kMaxKaiserBeta)) {
    return invalid("kaiser beta " + std::to_string(spec.kaiser_beta) + " is outside [0, 50]");
  }
  Window win;
  win.spec_ = spec;
  const double n_total = static_cast<double>(length);
  std::vector<double> w(length);

  if (spec.kind == WindowKind::kKaiser) {
    // Periodic Kaiser: the symmetric window of length N+1 without its last sample, so the
    // centre (value 1) falls on n = N/2 exactly as for the cosine sums.
    const double beta = spec.kaiser_beta;
    const double i0_beta = std::cyl_bessel_i(0.0, beta);
    const double half = n_total / 2.0;
    for (size_t n = 0; n < length; ++n) {
      const double r = (static_cast<double>(n) - half) / half;
      const double arg = beta * std::sqrt(std::max(0.0, 1.0 - r * r));
      w[n] = std::cyl_bessel_i(0.0, arg) / i0_beta;
    }
  } else {
    std::vector<double> a = raw_cosine_terms(spec.kind);
    // The peak, at n = N/2, is Σ a_k; dividing by it makes the peak exactly 1.
    double peak = 0;
    for (double ak : a) peak += ak;
    for (double& ak : a) ak /= peak;
    for (size_t n = 0; n < length; ++n) {
      // Reduce kn mod N before the cosine so large N keeps full precision.
      double v = 0;
      for (size_t k = 0; k < a.size(); ++k) {
        const size_t phase = (k * n) % length;
        const double sign = (k % 2 == 0) ? 1.0 : -1.0;
        v += sign * a[k] * std::cos(2.0 * std::numbers::pi * static_cast<double>(phase) / n_total);
      }
      w[n] = v;
    }
    win.cosine_terms_ = std::move(a);
  }

  // Sums in double from the exact values; the float table differs by < 1e-7 relative.
  double sum = 0, sum_sq = 0;
  std::complex<double> half_bin = 0;
  for (size_t n = 0; n < length; ++n) {
    sum += w[n];
    sum_sq += w[n] * w[n];
    // DTFT at half a bin: e^{-jπn/N}.
    half_bin += w[n] * std::polar(1.0, -std::numbers::pi * static_cast<double>(n) / n_total);
  }
  win.sum_ = sum;
  win.sum_sq_ = sum_sq;
  win.scallop_db_ = -20.0 * std::log10(std::abs(half_bin) / std::abs(sum));
  win.w_.assign(w.begin(), w.end());
  return win;
}

double Window::coherent_gain() const noexcept {
  return sum_ / static_cast<double>(w_.size());
}

double Window::enbw_bins() const noexcept {
  return static_cast<double>(w_.size()) * sum_sq_ / (sum_ * sum_);
}

}  // namespace tonewarden::dsp
