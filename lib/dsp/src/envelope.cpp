// EnvelopeAnalyzer: band-limited analytic signal by FFT masking, squared envelope, and its
// windowed, zero-padded power spectrum (the demodulated spectrum used for bearing faults).
#include "tonewarden/dsp/envelope.h"

#include <algorithm>
#include <cmath>
#include <string>

#include "tonewarden/dsp/fast_length.h"

namespace tonewarden::dsp {
namespace {

base::Error invalid(const std::string& message) {
  return base::make_error(base::ErrorCode::kInvalidArgument, "envelope: " + message);
}

}  // namespace

struct EnvelopeAnalyzer::Impl {
  EnvelopeConfig config;
  Window window;
  RealFft forward;     // frame -> spectrum, length block
  ComplexFft inverse;  // masked one-sided spectrum -> analytic signal, length block
  RealFft envelope_fft;  // windowed squared envelope, padded to fft_length
  size_t first_bin = 0, last_bin = 0;  // kept band, inclusive
  double scale = 1.0;                  // 1/(Σw)²
};

base::Result<EnvelopeAnalyzer> EnvelopeAnalyzer::create(const EnvelopeConfig& config) {
  const double fs = config.sample_rate_hz;
  if (!(fs > 0) || !std::isfinite(fs)) {
    return invalid("sample_rate_hz " + std::to_string(fs) + " must be > 0");
  }
  if (config.block < 4) return invalid("block " + std::to_string(config.block) + " must be >= 4");
  if (config.pad_factor < 1) return invalid("pad_factor must be >= 1");
  if (!(config.band_low_hz >= 0) || !(config.band_low_hz < config.band_high_hz) ||
      !(config.band_high_hz <= fs / 2)) {
    return invalid("band [" + std::to_string(config.band_low_hz) + ", " +
                   std::to_string(config.band_high_hz) + "] Hz must satisfy 0 <= low < high <= " +
                   std::to_string(fs / 2) + " (fs/2)");
  }
  const double bin_hz = fs / static_cast<double>(config.block);
  const size_t first = static_cast<size_t>(std::ceil(config.band_low_hz / bin_hz));
  const size_t last = std::min(config.block / 2,
                               static_cast<size_t>(std::floor(config.band_high_hz / bin_hz)));
  if (first > last) {
    return invalid("band [" + std::to_string(config.band_low_hz) + ", " +
                   std::to_string(config.band_high_hz) + "] Hz holds no FFT bin at block " +
                   std::to_string(config.block) + " (bin " + std::to_string(bin_hz) + " Hz)");
  }
  auto window = Window::create(config.window, config.block);
  if (!window.ok()) return std::move(window).error().with_context("envelope window");
  auto forward = RealFft::create(config.block, config.planning);
  if (!forward.ok()) return std::move(forward).error().with_context("envelope");
  auto inverse = ComplexFft::create(config.block, ComplexFft::Direction::kBackward, config.planning);
  if (!inverse.ok()) return std::move(inverse).error().with_context("envelope");
  auto spectrum = RealFft::create(fast_length(config.block * config.pad_factor), config.planning);
  if (!spectrum.ok()) return std::move(spectrum).error().with_context("envelope");

  auto impl = std::unique_ptr<Impl>(new Impl{config, std::move(window).value(),
                                             std::move(forward).value(), std::move(inverse).value(),
                                             std::move(spectrum).value(), first, last, 1.0});
  impl->scale = 1.0 / (impl->window.sum() * impl->window.sum());
  return EnvelopeAnalyzer(std::move(impl));
}

EnvelopeAnalyzer::EnvelopeAnalyzer(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
EnvelopeAnalyzer::EnvelopeAnalyzer(EnvelopeAnalyzer&&) noexcept = default;
EnvelopeAnalyzer& EnvelopeAnalyzer::operator=(EnvelopeAnalyzer&&) noexcept = default;
EnvelopeAnalyzer::~EnvelopeAnalyzer() = default;

size_t EnvelopeAnalyzer::fft_length() const noexcept { return impl_->envelope_fft.length(); }
double EnvelopeAnalyzer::bin_hz() const noexcept {
  return impl_->config.sample_rate_hz / static_cast<double>(fft_length());
}
const Window& EnvelopeAnalyzer::window() const noexcept { return impl_->window; }

bool EnvelopeAnalyzer::process(std::span<const float> frame, std::span<float> power_out) noexcept {
  Impl& s = *impl_;
  const size_t n = s.config.block;
  if (frame.size() != n || power_out.size() != num_bins()) return false;

  // 1. Spectrum of the frame.
  std::copy(frame.begin(), frame.end(), s.forward.input().begin());
  s.forward.execute();
  const auto spec = s.forward.output();

  // 2. Analytic signal of the band: positive frequencies in the band, doubled; DC and (even n)
  // Nyquist keep weight 1, as the analytic signal's one-sided weighting requires; the
  // negative frequencies are zero. The 1/n of the inverse transform is folded in here.
  auto z = s.inverse.input();
  std::fill(z.begin(), z.end(), std::complex<float>(0.0f, 0.0f));
  const float inv_n = 1.0f / static_cast<float>(n);
  for (size_t k = s.first_bin; k <= s.last_bin; ++k) {
    const bool edge = k == 0 || (n % 2 == 0 && k == n / 2);
    z[k] = spec[k] * (edge ? inv_n : 2.0f * inv_n);
  }
  s.inverse.execute();
  const auto analytic = s.inverse.output();

  // 3. Squared envelope |z|², mean removed (in double: the mean can dwarf the modulation).
  double mean = 0;
  for (size_t i = 0; i < n; ++i) mean += std::norm(std::complex<double>(analytic[i]));
  mean /= static_cast<double>(n);

  // 4. Window, zero padding at the end, real FFT.
  auto in = s.envelope_fft.input();
  const auto w = s.window.coefficients();
  for (size_t i = 0; i < n; ++i) {
    in[i] = static_cast<float>((std::norm(std::complex<double>(analytic[i])) - mean) * w[i]);
  }
  std::fill(in.begin() + static_cast<std::ptrdiff_t>(n), in.end(), 0.0f);
  s.envelope_fft.execute();

  // 5. One-sided power spectrum, |X|²/(Σw)², doubled except DC and (even length) Nyquist.
  const auto out = s.envelope_fft.output();
  const size_t nfft = s.envelope_fft.length();
  for (size_t k = 0; k < out.size(); ++k) {
    const bool edge = k == 0 || (nfft % 2 == 0 && k == nfft / 2);
    const double p = static_cast<double>(std::norm(out[k])) * s.scale;
    power_out[k] = static_cast<float>(edge ? p : 2.0 * p);
  }
  return true;
}

}  // namespace tonewarden::dsp
