// ToneSearch: windowed maximum search + dsp interpolation, and a median floor.
#include "tonewarden/track/tone_search.h"

#include <algorithm>
#include <cmath>
#include <string>

namespace tonewarden::track {

base::Result<ToneSearch> ToneSearch::create(const SpectrumLayout& layout) {
  if (!(layout.sample_rate_hz > 0.0) || !std::isfinite(layout.sample_rate_hz)) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "spectrum layout: sample_rate_hz = " +
                                std::to_string(layout.sample_rate_hz) + ", must be > 0");
  }
  if (layout.block < 2 || layout.fft_length < layout.block) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "spectrum layout: block = " + std::to_string(layout.block) +
                                ", fft_length = " + std::to_string(layout.fft_length) +
                                "; need block >= 2 and fft_length >= block");
  }
  auto window = dsp::Window::create(layout.window, layout.block);
  if (!window) return std::move(window).error().with_context("spectrum layout window");
  dsp::PeakConfig pc;
  pc.sample_rate_hz = layout.sample_rate_hz;
  pc.fft_length = layout.fft_length;
  auto finder = dsp::PeakFinder::create(pc, *window);
  if (!finder) return std::move(finder).error().with_context("spectrum layout peak finder");
  ToneSearch s(layout, std::move(*window), std::move(*finder));
  s.scratch_.resize(s.num_bins());
  return s;
}

double ToneSearch::enbw_fft_bins() const noexcept {
  return window_.enbw_bins() * static_cast<double>(layout_.fft_length) /
         static_cast<double>(layout_.block);
}

ToneHit ToneSearch::search(std::span<const float> power, double center_hz,
                           double half_width_hz) const noexcept {
  ToneHit hit;
  const size_t n = num_bins();
  if (power.size() != n || n < 3 || !std::isfinite(center_hz)) return hit;
  const double bw = bin_hz();
  const double lo_f = std::ceil((center_hz - half_width_hz) / bw);
  const double hi_f = std::floor((center_hz + half_width_hz) / bw);
  double nearest = std::round(center_hz / bw);
  long lo = static_cast<long>(lo_f), hi = static_cast<long>(hi_f);
  if (lo > hi) lo = hi = static_cast<long>(nearest);
  lo = std::clamp<long>(lo, 1, static_cast<long>(n) - 2);
  hi = std::clamp<long>(hi, 1, static_cast<long>(n) - 2);
  if (lo > hi) return hit;
  size_t best = static_cast<size_t>(lo);
  for (size_t k = best + 1; k <= static_cast<size_t>(hi); ++k) {
    if (power[k] > power[best]) best = k;
  }
  hit.max_bin = best;
  hit.frequency_hz = static_cast<double>(best) * bw;
  hit.power = power[best];
  // Only a local maximum is a tone inside the window; a maximum at the window's edge on the
  // flank of a stronger tone outside is reported as the bin level, not interpolated.
  if (power[best] >= power[best - 1] && power[best] >= power[best + 1] && power[best] > 0.0f) {
    const dsp::Peak p = finder_.interpolate(power, best);
    if (std::isfinite(p.frequency_hz) && std::isfinite(p.power) && p.power > 0.0) {
      hit.found = true;
      hit.frequency_hz = p.frequency_hz;
      hit.power = p.power;
    }
  }
  return hit;
}

double ToneSearch::median_power(std::span<const float> power, double low_hz,
                                double high_hz) noexcept {
  const size_t n = num_bins();
  if (power.size() != n) return 0.0;
  const double bw = bin_hz();
  size_t lo = static_cast<size_t>(std::max(1.0, std::ceil(low_hz / bw)));
  size_t hi = static_cast<size_t>(std::clamp(std::floor(high_hz / bw), 0.0,
                                             static_cast<double>(n - 1)));
  if (lo > hi) return 0.0;
  const size_t count = hi - lo + 1;
  std::copy(power.begin() + lo, power.begin() + hi + 1, scratch_.begin());
  auto mid = scratch_.begin() + count / 2;
  std::nth_element(scratch_.begin(), mid, scratch_.begin() + count);
  return *mid;
}

}  // namespace tonewarden::track
