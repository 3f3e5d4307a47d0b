// SpectrumAnalyzer: mean removal, window, zero padding to a fast length, real FFT, and the
// one-sided power scaling (scipy periodogram, scaling='spectrum').
#include "tonewarden/dsp/spectrum_analyzer.h"

#include <cmath>
#include <complex>
#include <cstring>
#include <string>

#include "tonewarden/dsp/fast_length.h"

namespace tonewarden::dsp {
namespace {
// Largest FFT we agree to plan: 2^28 floats is already 1 GiB of input.
constexpr size_t kMaxFftLength = size_t{1} << 28;
}  // namespace

struct SpectrumAnalyzer::Impl {
  SpectrumConfig config;
  Window window;
  RealFft fft;
  size_t fft_length = 0;
  double power_scale = 0;  // 1/(Σw)²: a full-scale bin of a unit sine reads 0.25 before doubling
  uint64_t frames = 0;
  uint64_t rejected = 0;

  Impl(const SpectrumConfig& c, Window w, RealFft f)
      : config(c), window(std::move(w)), fft(std::move(f)), fft_length(fft.length()) {
    power_scale = 1.0 / (window.sum() * window.sum());
  }
};

base::Result<SpectrumAnalyzer> SpectrumAnalyzer::create(const SpectrumConfig& config) {
  auto invalid = [](std::string msg) {
    return base::make_error(base::ErrorCode::kInvalidArgument, std::move(msg));
  };
  if (!(config.sample_rate_hz > 0) || !std::isfinite(config.sample_rate_hz)) {
    return invalid("spectrum sample rate " + std::to_string(config.sample_rate_hz) +
                   " Hz must be a positive number");
  }
  if (config.block < 2) {
    return invalid("spectrum block " + std::to_string(config.block) +
                   " samples is too short (need >= 2)");
  }
  if (config.pad_factor < 1) {
    return invalid("spectrum pad factor 0 is invalid (need >= 1)");
  }
  if (config.block > kMaxFftLength / config.pad_factor) {
    return invalid("spectrum block " + std::to_string(config.block) + " x pad " +
                   std::to_string(config.pad_factor) + " exceeds the largest FFT (" +
                   std::to_string(kMaxFftLength) + " points)");
  }
  auto window = Window::create(config.window, config.block);
  if (!window.ok()) return std::move(window).error().with_context("spectrum window");
  const size_t nfft = fast_length(config.block * config.pad_factor);
  auto fft = RealFft::create(nfft, config.planning);
  if (!fft.ok()) return std::move(fft).error().with_context("spectrum FFT");
  return SpectrumAnalyzer(
      std::make_unique<Impl>(config, std::move(window).value(), std::move(fft).value()));
}

SpectrumAnalyzer::SpectrumAnalyzer(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
SpectrumAnalyzer::SpectrumAnalyzer(SpectrumAnalyzer&&) noexcept = default;
SpectrumAnalyzer& SpectrumAnalyzer::operator=(SpectrumAnalyzer&&) noexcept = default;
SpectrumAnalyzer::~SpectrumAnalyzer() = default;

bool SpectrumAnalyzer::process(std::span<const float> frame, std::span<float> power_out) noexcept {
  Impl& s = *impl_;
  const size_t block = s.config.block;
  const size_t bins = s.fft_length / 2 + 1;
  if (frame.size() != block || power_out.size() != bins) {
    ++s.rejected;
    return false;
  }
  // Hot loops in float with independent accumulators, so the compiler can vectorise them;
  // the mean's partial sums are double, which keeps it exact enough for any block length.
  float mean = 0.0f;
  if (s.config.remove_mean) {
    double acc[4] = {0, 0, 0, 0};
    size_t n = 0;
    for (; n + 4 <= block; n += 4) {
      acc[0] += frame[n];
      acc[1] += frame[n + 1];
      acc[2] += frame[n + 2];
      acc[3] += frame[n + 3];
    }
    for (; n < block; ++n) acc[0] += frame[n];
    mean = static_cast<float>((acc[0] + acc[1] + acc[2] + acc[3]) / static_cast<double>(block));
  }
  const float* w = s.window.coefficients().data();
  float* in = s.fft.input().data();
  const float* f = frame.data();
  for (size_t n = 0; n < block; ++n) in[n] = (f[n] - mean) * w[n];
  // Zero padding at the end; rewritten every frame so nothing can leave stale data there.
  std::memset(in + block, 0, (s.fft_length - block) * sizeof(float));
  s.fft.execute();

  const auto x = s.fft.output();
  const auto* xf = reinterpret_cast<const float*>(x.data());  // interleaved re, im
  const float one_sided = static_cast<float>(2.0 * s.power_scale);
  float* out = power_out.data();
  for (size_t k = 0; k < bins; ++k) {
    const float re = xf[2 * k], im = xf[2 * k + 1];
    out[k] = (re * re + im * im) * one_sided;
  }
  // DC, and Nyquist when the length is even, have no mirror image: not doubled.
  power_out[0] = static_cast<float>(std::norm(std::complex<double>(x[0])) * s.power_scale);
  if (s.fft_length % 2 == 0) {
    power_out[bins - 1] =
        static_cast<float>(std::norm(std::complex<double>(x[bins - 1])) * s.power_scale);
  }
  ++s.frames;
  return true;
}

const SpectrumConfig& SpectrumAnalyzer::config() const noexcept { return impl_->config; }
const Window& SpectrumAnalyzer::window() const noexcept { return impl_->window; }
size_t SpectrumAnalyzer::fft_length() const noexcept { return impl_->fft_length; }

double SpectrumAnalyzer::bin_hz() const noexcept {
  return impl_->config.sample_rate_hz / static_cast<double>(impl_->fft_length);
}

double SpectrumAnalyzer::resolution_hz() const noexcept {
  return impl_->window.enbw_bins() * impl_->config.sample_rate_hz /
         static_cast<double>(impl_->config.block);
}

double SpectrumAnalyzer::enbw_hz() const noexcept { return resolution_hz(); }
uint64_t SpectrumAnalyzer::num_frames() const noexcept { return impl_->frames; }
uint64_t SpectrumAnalyzer::num_rejected() const noexcept { return impl_->rejected; }

}  // namespace tonewarden::dsp
