// PeakFinder: tonal peaks over a robust floor, with a window-aware interpolator that is
// unbiased for every window and pad factor.
//
// Interpolation method. A tone at ν0 (unpadded bins) seen through window w and zero-padded
// by P = fft_length/block gives padded bins |X[m]| = A·|W(m/P − ν0)|, where W is the window's
// DTFT, known in closed form for cosine sums (standard DFT algebra: Harris 1978 writes the
// windows as sums of shifted Dirichlet kernels; see window_kernel.cpp) and tabulated once
// from the exact sum for Kaiser. With x = m/P − ν0 the offset of the maximum bin m from the
// tone, the ratio of two bins s either side of it depends on x alone:
//     |X[m+s]| / |X[m−s]| = K(x + s/P) / K(x − s/P),   K = |W|/|W(0)|,
// so x is the root of  |X[m+s]|·K(x − s/P) − |X[m−s]|·K(x + s/P) = 0,  found by a scan and
// regula falsi over the span where the maximum can lie. Flat-tops rise off centre (by 0.0003
// at ±0.3 bin), so the maximum bin need not be the nearest one and the ratio can have
// several roots; each root is scored against the bins within one unpadded bin of m and the
// best fit wins. The tone power is then P[m]/K(x)², since the analyzer scales an on-bin sine
// to its RMS². Noise-free, what remains is the negative-frequency image of a real tone.
//
// What this improves on: a parabola through |X| (J. O. Smith, Spectral Audio Signal
// Processing, 2011) is biased by ~0.05 bin for Hann unpadded; a parabola through ln|X|
// (M. Gasior, J. L. Gonzalez, AIP Conf. Proc. 732, 2004) is exact only for a Gaussian;
// Grandke's estimator (IEEE Trans. Instrum. Meas. IM-32(2), 1983) holds only for Hann at
// pad 1. The kernel fit holds for any window whose transform is known.
#include "tonewarden/dsp/peaks.h"

#include <algorithm>
#include <bit>
#include <cstdint>
#include <cmath>
#include <complex>
#include <numbers>
#include <string>

#include "tonewarden/dsp/fft.h"
#include "window_transform.h"

namespace tonewarden::dsp {
namespace {

constexpr double kTableStep = 1.0 / 64.0;  // Kaiser table step, unpadded bins
constexpr double kSkirtStep = 1.0 / 8.0;   // leakage-bound table step, unpadded bins
constexpr double kSkirtReachBins = 256.0;  // beyond this, leakage is taken as negligible
constexpr double kRootTol = 1e-11;          // unpadded bins
constexpr int kMaxRootIterations = 80;
// Median of an exponential (chi-square, 2 dof) variable = ln 2 · mean: a noise bin's power
// is exponential, so median/ln 2 estimates the mean noise power per bin.
constexpr double kMedianToMean = 1.0 / std::numbers::ln2;
// Floor histogram resolution: mantissa bits kept in a bucket key (2^-7 = 0.8 % buckets).
constexpr unsigned kFloorMantissaBits = 7;
constexpr unsigned kFloorKeyShift = 23 - kFloorMantissaBits;
// Floor reads per window length: the median is read every window/8 bins and joined linearly
// (it moves slowly; a read every half window lets a strong tone's skirt lift the floor of
// its neighbours, and a read every bin doubles the floor's cost: the cursor walk and the
// division are the expensive part).
constexpr size_t kFloorReadsPerWindow = 8;
constexpr size_t kFloorBuckets = size_t{1} << (31 - kFloorKeyShift);  // keys of floats >= 0

base::Error invalid(const std::string& message) {
  return base::make_error(base::ErrorCode::kInvalidArgument, "peaks: " + message);
}

// 4-point Lagrange interpolation of table t at fractional index u (1 <= u < size-2).
double lagrange4(const std::vector<double>& t, double u) noexcept {
  const size_t i = static_cast<size_t>(u);
  const double f = u - static_cast<double>(i);
  const double ym1 = t[i - 1], y0 = t[i], y1 = t[i + 1], y2 = t[i + 2];
  return y0 + f * (0.5 * (y1 - ym1) +
                   f * (ym1 - 2.5 * y0 + 2.0 * y1 - 0.5 * y2 +
                        f * (1.5 * (y0 - y1) + 0.5 * (y2 - ym1))));
}

}  // namespace

base::Result<PeakFinder> PeakFinder::create(const PeakConfig& config, const Window& window) {
  const size_t block = window.length();
  if (block < 2) return invalid("window is empty; create it with the analyzer's block");
  if (!(config.sample_rate_hz > 0) || !std::isfinite(config.sample_rate_hz)) {
    return invalid("sample_rate_hz " + std::to_string(config.sample_rate_hz) + " must be > 0");
  }
  if (config.fft_length < block) {
    return invalid("fft_length " + std::to_string(config.fft_length) +
                   " is shorter than the window (" + std::to_string(block) + " samples)");
  }
  if (config.max_peaks < 1) return invalid("max_peaks must be >= 1");
  if (!(config.min_prominence_db >= 0) || !std::isfinite(config.min_prominence_db)) {
    return invalid("min_prominence_db " + std::to_string(config.min_prominence_db) +
                   " must be a finite value >= 0 dB");
  }
  if (!(config.leakage_margin_db >= 0) || !std::isfinite(config.leakage_margin_db)) {
    return invalid("leakage_margin_db " + std::to_string(config.leakage_margin_db) +
                   " must be a finite value >= 0 dB");
  }
  if (!(config.min_spacing_hz >= 0) || !std::isfinite(config.min_spacing_hz)) {
    return invalid("min_spacing_hz " + std::to_string(config.min_spacing_hz) + " must be >= 0");
  }
  if (config.floor_window_bins < 3 || config.floor_window_bins % 2 == 0) {
    return invalid("floor_window_bins " + std::to_string(config.floor_window_bins) +
                   " must be odd and >= 3");
  }
  const double nyquist = config.sample_rate_hz / 2.0;
  const double max_hz = config.max_frequency_hz > 0 ? config.max_frequency_hz : nyquist;
  if (!(config.min_frequency_hz >= 0) || !(config.max_frequency_hz >= 0) ||
      !(config.min_frequency_hz < max_hz)) {
    return invalid("frequency range [" + std::to_string(config.min_frequency_hz) + ", " +
                   std::to_string(max_hz) + "] Hz is empty or negative");
  }

  PeakFinder pf(config, window);
  pf.pad_ = static_cast<double>(config.fft_length) / static_cast<double>(block);

  if (window.cosine_terms().empty()) {
    // Kaiser: the main lobe ends near sqrt(1 + (β/π)²) bins; tabulate to 3 bins beyond it.
    const double beta = window.spec().kaiser_beta;
    const double extent = std::sqrt(1.0 + beta * beta / (std::numbers::pi * std::numbers::pi)) + 3.0;
    const size_t count = static_cast<size_t>(extent / kTableStep) + 4;
    pf.kernel_re_.resize(count);
    pf.kernel_im_.resize(count);
    const double at_zero = std::abs(detail::centred_transform(window.coefficients(), 0.0));
    for (size_t i = 0; i < count; ++i) {
      // Index 0 holds ν = -step so that interpolation near 0 has a left neighbour.
      const double nu = (static_cast<double>(i) - 1.0) * kTableStep;
      const auto v = detail::centred_transform(window.coefficients(), nu) / at_zero;
      pf.kernel_re_[i] = v.real();
      pf.kernel_im_[i] = v.imag();
    }
  }

  // Main-lobe shape: where |W| peaks (flat-tops: off centre) and where it first bottoms out.
  constexpr double kScanStep = 1.0 / 256.0;
  double best = pf.kernel(0.0), prev = best;
  for (double nu = kScanStep; nu < 64.0; nu += kScanStep) {
    const double k = pf.kernel(nu);
    if (k > best && nu < 1.0) {
      best = k;
      pf.top_offset_bins_ = nu;
    }
    if (k > prev && prev < 0.5) {
      pf.lobe_bins_ = nu - kScanStep;
      break;
    }
    prev = k;
  }
  // How far the tone may sit from the maximum bin: noise-free, the bin nearest the top of
  // |W| (top offset + half a padded bin, plus margin); in noise, anywhere |W| is within ~3 %
  // of its top. A flat-top stays that flat for almost a whole bin, so its span is ~1 bin.
  double nu_flat = 0;
  while (nu_flat < pf.lobe_bins_ && pf.kernel(nu_flat) >= 0.97 * best) nu_flat += kScanStep;
  const double step = 1.0 / pf.pad_;
  pf.search_bins_ = std::max(pf.top_offset_bins_ + 0.75 * step, nu_flat + 0.5 * step);
  // The fitted pair sits about min(1, lobe/2) unpadded bins either side of the maximum,
  // whatever the padding: far enough apart that the ratio moves fast with x (noise and
  // float rounding matter less; a flat-top's nearest padded neighbours differ by 1e-4),
  // near enough to stay on the main lobe, clear of its nulls.
  const double pair_bins = std::min(1.0, 0.5 * pf.lobe_bins_);
  pf.ratio_step_ = std::max<size_t>(1, static_cast<size_t>(std::lround(pair_bins * pf.pad_)));
  // The root scan in interpolate() visits the same grid of x for every peak: tabulate the
  // kernel there once (the same calls, so the same values).
  {
    const double sp = static_cast<double>(pf.ratio_step_) / pf.pad_;
    const double grid = std::min(0.05, 0.25 / pf.pad_);
    const int cells = std::max(2, static_cast<int>(std::ceil(2.0 * pf.search_bins_ / grid)));
    const double dx = 2.0 * pf.search_bins_ / cells;
    pf.scan_minus_.resize(static_cast<size_t>(cells) + 1);
    pf.scan_plus_.resize(static_cast<size_t>(cells) + 1);
    for (int c = 0; c <= cells; ++c) {
      const double x = c == 0 ? -pf.search_bins_ : -pf.search_bins_ + c * dx;
      pf.scan_minus_[static_cast<size_t>(c)] = pf.kernel(x - sp);
      pf.scan_plus_[static_cast<size_t>(c)] = pf.kernel(x + sp);
    }
  }

  // Leakage bound: the largest |W| at or beyond each distance, so the sidelobes between two
  // table points are covered. Kaiser has no closed form, so its samples at ν = i/8 come from
  // one FFT of the window zero-padded to 8·block (|DFT_8N[i]| = |W(i/8)|; the phase does not
  // matter here): O(N log N) once instead of an O(N) sum per point.
  const double reach = std::min(kSkirtReachBins, static_cast<double>(block) / 2.0);
  const size_t skirt_points = static_cast<size_t>(reach / kSkirtStep) + 1;
  pf.skirt_.resize(skirt_points);
  if (window.cosine_terms().empty()) {
    const auto padded = static_cast<size_t>(std::lround(static_cast<double>(block) / kSkirtStep));
    auto fft = RealFft::create(padded, FftPlanning::kEstimate);
    if (!fft) return fft.error();
    std::span<float> in = fft->input();
    std::fill(in.begin(), in.end(), 0.0f);
    std::copy(window.coefficients().begin(), window.coefficients().end(), in.begin());
    fft->execute();
    const auto out = fft->output();
    const double at_zero = std::abs(std::complex<double>(out[0]));
    for (size_t i = 0; i < skirt_points; ++i) {
      pf.skirt_[i] = static_cast<float>(std::abs(std::complex<double>(out[i])) / at_zero);
    }
  } else {
    for (size_t i = 0; i < skirt_points; ++i) {
      pf.skirt_[i] = static_cast<float>(pf.kernel(static_cast<double>(i) * kSkirtStep));
    }
  }
  for (size_t i = skirt_points - 1; i-- > 0;) pf.skirt_[i] = std::max(pf.skirt_[i], pf.skirt_[i + 1]);
  pf.leakage_ratio_ = std::pow(10.0, config.leakage_margin_db / 10.0);

  const double floor_span = std::max(static_cast<double>(config.floor_window_bins), 6.0 * pf.lobe_bins_);
  pf.floor_window_ = static_cast<size_t>(std::ceil(floor_span * pf.pad_)) | size_t{1};
  const double bin_hz = config.sample_rate_hz / static_cast<double>(config.fft_length);
  const double resolution_hz = window.enbw_bins() * config.sample_rate_hz / static_cast<double>(block);
  pf.spacing_bins_ = (config.min_spacing_hz > 0 ? config.min_spacing_hz : resolution_hz) / bin_hz;

  const size_t bins = config.fft_length / 2 + 1;
  pf.floor_.assign(bins, 0.0f);
  pf.floor_counts_.assign(kFloorBuckets, 0);
  pf.floor_keys_.assign(bins, 0);
  pf.floor_stride_ = std::max<size_t>(1, pf.floor_window_ / kFloorReadsPerWindow);
  pf.candidates_.assign(bins, 0);
  pf.merged_.assign(bins, 0);
  return pf;
}

double PeakFinder::kernel(double nu_bins) const noexcept {
  const double nu = std::fabs(nu_bins);
  if (!kernel_re_.empty()) {
    const double u = nu / kTableStep + 1.0;
    if (u + 3.0 < static_cast<double>(kernel_re_.size())) {
      return std::hypot(lagrange4(kernel_re_, u), lagrange4(kernel_im_, u));
    }
  }
  return window_.kernel_magnitude(nu);
}

// Sum of squared misfits of A·K(x + d/P) to the amplitudes within one unpadded bin of m,
// with A taken from the maximum bin.
double PeakFinder::fit_residual(std::span<const float> power, size_t max_bin,
                                double offset) const noexcept {
  const double k0 = kernel(offset);
  if (!(k0 > 0)) return INFINITY;
  const double amp = std::sqrt(static_cast<double>(power[max_bin])) / k0;
  const long reach = std::max<long>(2, static_cast<long>(std::ceil(pad_)));
  const long last = static_cast<long>(power.size()) - 1;
  double sum = 0;
  for (long d = -reach; d <= reach; ++d) {
    const long m = static_cast<long>(max_bin) + d;
    if (m < 0 || m > last) continue;
    const double e = std::sqrt(static_cast<double>(power[m])) -
                     amp * kernel(offset + static_cast<double>(d) / pad_);
    sum += e * e;
  }
  return sum;
}

Peak PeakFinder::interpolate(std::span<const float> power, size_t max_bin) const noexcept {
  Peak peak;
  const double bin_hz = config_.sample_rate_hz / static_cast<double>(config_.fft_length);
  peak.bin = static_cast<double>(max_bin);
  peak.frequency_hz = peak.bin * bin_hz;
  peak.power = max_bin < power.size() ? power[max_bin] : 0.0;
  const size_t s = ratio_step_;
  if (max_bin < s || max_bin + s >= power.size() || !(power[max_bin] > 0)) return peak;

  const double left = std::sqrt(static_cast<double>(power[max_bin - s]));
  const double right = std::sqrt(static_cast<double>(power[max_bin + s]));
  double offset = 0;  // x = m/P − ν0
  if (left > 0 || right > 0) {
    const double sp = static_cast<double>(s) / pad_;
    auto h = [&](double x) { return right * kernel(x - sp) - left * kernel(x + sp); };
    // The scan grid and its kernel values were tabulated by create().
    const int cells = static_cast<int>(scan_minus_.size()) - 1;
    const double dx = 2.0 * search_bins_ / cells;
    auto h_at = [&](int c) {
      return right * scan_minus_[static_cast<size_t>(c)] - left * scan_plus_[static_cast<size_t>(c)];
    };
    // Brackets run between grid points where h is nonzero: an exact zero on the grid is
    // scored as a root of its own but does not split a bracket, because h can touch zero
    // without changing sign (rect at pad 1: both neighbours sit on nulls at x = 0).
    double xa = -search_bins_, ha = h_at(0);
    double best_residual = INFINITY, best_abs_h = std::fabs(ha), fallback = xa;
    for (int c = 1; c <= cells; ++c) {
      const double xb = -search_bins_ + c * dx, hb = h_at(c);
      double root = NAN;
      if (hb == 0) {
        root = xb;
      } else if (ha != 0 && (ha < 0) != (hb < 0)) {
        // Regula falsi, Illinois variant: halve the stale end's value to keep convergence fast.
        double a = xa, fa = ha, b = xb, fb = hb;
        for (int it = 0; it < kMaxRootIterations && std::fabs(b - a) > kRootTol; ++it) {
          const double x = b - fb * (b - a) / (fb - fa);
          const double fx = h(x);
          if (fx == 0) {
            a = b = x;
            break;
          }
          if ((fx < 0) != (fb < 0)) {
            a = b;
            fa = fb;
          } else {
            fa *= 0.5;
          }
          b = x;
          fb = fx;
        }
        root = 0.5 * (a + b);
      }
      if (!std::isnan(root)) {
        const double r = fit_residual(power, max_bin, root);
        if (r < best_residual) {
          best_residual = r;
          offset = root;
        }
      }
      if (std::fabs(hb) < best_abs_h) {
        best_abs_h = std::fabs(hb);
        fallback = xb;
      }
      if (hb != 0) {
        xa = xb;
        ha = hb;
      }
    }
    if (!std::isfinite(best_residual)) offset = fallback;
  }
  const double k = kernel(offset);
  peak.bin = static_cast<double>(max_bin) - offset * pad_;
  peak.frequency_hz = peak.bin * bin_hz;
  if (k > 0) peak.power = static_cast<double>(power[max_bin]) / (k * k);
  return peak;
}

// Running median over each bin's window (clipped at the spectrum's ends), read every
// floor_stride_ bins and joined linearly. A histogram of the window's values keyed by their
// float bits (sign, exponent and the top kFloorMantissaBits of the mantissa: monotonic in the
// value for powers >= 0) takes one insertion and one removal per bin; a cursor on the
// median's bucket moves a few buckets per read. Within the bucket the value is placed by the
// median's rank among the bucket's members, so it is exact to a fraction of a bucket
// (< 2^-kFloorMantissaBits relative, 0.03 dB): far below the scatter of a median of a few
// dozen noise bins. O(1) per bin whatever the window.
void PeakFinder::estimate_floor(std::span<const float> power) noexcept {
  const size_t n = power.size();
  const size_t half = floor_window_ / 2;
  uint32_t* const count = floor_counts_.data();
  uint32_t* const keys = floor_keys_.data();
  for (size_t i = 0; i < n; ++i) {  // a separate pass, so it vectorises
    const auto b = std::bit_cast<uint32_t>(power[i]);
    keys[i] = (b >> 31) != 0 ? 0u : b >> kFloorKeyShift;  // negatives (never a power) go to 0
  }
  size_t lo = 0, hi = std::min(n, half + 1);  // the window of bin 0: [0, hi)
  for (size_t i = 0; i < hi; ++i) ++count[keys[i]];
  // Start the cursor at a member's bucket; `below` counts the window's members under it.
  uint32_t cursor = keys[hi / 2];
  size_t below = 0;
  for (size_t i = 0; i < hi; ++i) below += keys[i] < cursor ? 1 : 0;

  auto median = [&]() noexcept {
    // The median is the member with `rank` members before it in sorted order.
    const size_t rank = (hi - lo) / 2;
    while (below > rank) below -= count[--cursor];
    while (below + count[cursor] <= rank) below += count[cursor++];
    if (cursor == 0) return 0.0;  // bucket 0 holds 0 and the smallest subnormals: read as 0
    const double low = std::bit_cast<float>(cursor << kFloorKeyShift);
    const double high = std::bit_cast<float>((cursor + 1) << kFloorKeyShift);
    const double at = (static_cast<double>(rank - below) + 0.5) / count[cursor];
    return (low + at * (high - low)) * kMedianToMean;
  };
  double prev_v = median();
  floor_[0] = static_cast<float>(prev_v);
  size_t prev_c = 0;
  while (prev_c + 1 < n) {
    const size_t c = std::min(n - 1, prev_c + floor_stride_);
    for (size_t i = prev_c + 1; i <= c; ++i) {  // slide the window to centre i
      if (i + half < n) {
        const uint32_t k = keys[hi++];
        ++count[k];
        below += k < cursor ? 1 : 0;
      }
      if (i > half) {
        const uint32_t k = keys[lo++];
        --count[k];
        below -= k < cursor ? 1 : 0;
      }
    }
    const double v = median();
    const auto base = static_cast<float>(prev_v);
    const auto slope = static_cast<float>((v - prev_v) / static_cast<double>(c - prev_c));
    const auto steps = static_cast<uint32_t>(c - prev_c);
    float* const out = floor_.data() + prev_c;
    for (uint32_t j = 1; j < steps; ++j) out[j] = base + slope * static_cast<float>(j);
    out[steps] = static_cast<float>(v);
    prev_c = c;
    prev_v = v;
  }
  for (size_t i = lo; i < hi; ++i) --count[keys[i]];  // leave the histogram empty
}

size_t PeakFinder::find(std::span<const float> power, std::span<Peak> out) noexcept {
  if (power.size() != num_bins() || out.empty()) return 0;
  estimate_floor(power);
  const double bin_hz = config_.sample_rate_hz / static_cast<double>(config_.fft_length);
  const double max_hz =
      config_.max_frequency_hz > 0 ? config_.max_frequency_hz : config_.sample_rate_hz / 2.0;
  const size_t n = power.size();
  // Within a main-lobe half-width of DC or Nyquist a maximum is the frame's residual mean
  // (or its mirror) leaking through the window, not a resolvable tone.
  const size_t edge = std::max<size_t>(1, static_cast<size_t>(std::ceil(lobe_bins_ * pad_)));
  if (n < 2 * edge + 2) return 0;
  const size_t first =
      std::max(edge, static_cast<size_t>(std::ceil(config_.min_frequency_hz / bin_hz)));
  const size_t last = std::min(n - 1 - edge, static_cast<size_t>(std::floor(max_hz / bin_hz)));
  const double ratio = std::pow(10.0, config_.min_prominence_db / 10.0);

  size_t count = 0;
  // In chunks: a branch-free pass that vectorises marks the maxima that clear the floor (in
  // noise each comparison is a coin toss, so branches would mispredict), then the rare marks
  // are collected.
  constexpr size_t kChunk = 64;
  const size_t stop = std::min(last, n - 2);
  for (size_t m0 = first; m0 <= stop; m0 += kChunk) {
    const size_t len = std::min(kChunk, stop - m0 + 1);
    const float* const p = power.data() + m0;
    const float* const fl = floor_.data() + m0;
    unsigned char mark[kChunk];
    for (size_t j = 0; j < len; ++j) {
      mark[j] = static_cast<unsigned char>((p[j] > p[j - 1]) & (p[j] >= p[j + 1]) &
                                           (static_cast<double>(p[j]) >
                                            ratio * static_cast<double>(fl[j])));
    }
    for (size_t j = 0; j < len; ++j) {
      if (mark[j] != 0) candidates_[count++] = m0 + j;
    }
  }
  std::sort(candidates_.begin(), candidates_.begin() + count,
            [&](size_t a, size_t b) { return power[a] > power[b]; });

  const size_t limit = std::min(out.size(), config_.max_peaks);
  size_t found = 0, merged = 0;
  for (size_t i = 0; i < count && found < limit; ++i) {
    const double m = static_cast<double>(candidates_[i]);
    // Reject a maximum closer than the spacing to a stronger peak, or one that does not
    // stand above the worst-case (coherent) sum of the sidelobe leakage of the stronger
    // maxima: the accepted peaks and those merged away by the spacing rule (at their bin
    // power; the margin covers their scallop loss).
    bool clear = true;
    double leak_amp = 0;
    auto add_leak = [&](double bin, double pw) {
      const size_t idx = static_cast<size_t>(std::fabs(bin - m) / pad_ / kSkirtStep);
      if (idx < skirt_.size()) leak_amp += std::sqrt(pw) * skirt_[idx];
    };
    for (size_t j = 0; j < found && clear; ++j) {
      clear = std::fabs(out[j].bin - m) >= spacing_bins_;
      add_leak(out[j].bin, out[j].power);
    }
    if (!clear) {
      merged_[merged++] = candidates_[i];
      continue;
    }
    for (size_t j = 0; j < merged; ++j) add_leak(static_cast<double>(merged_[j]), power[merged_[j]]);
    if (leak_amp > 0) {
      clear = static_cast<double>(power[candidates_[i]]) > leakage_ratio_ * leak_amp * leak_amp;
    }
    if (!clear) continue;
    Peak peak = interpolate(power, candidates_[i]);
    peak.floor_power = floor_[candidates_[i]];
    out[found++] = peak;
  }
  return found;
}

}  // namespace tonewarden::dsp
