// The analyze pipeline: file blocks -> Framer -> SpectrumAnalyzer -> SpectrumAverager (and,
// with an envelope band, EnvelopeAnalyzer -> its own averager) -> peaks, bands, levels.
// Memory is fixed by the block size, never by the file's length: the file is streamed.
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <numbers>
#include <vector>

#include "analyze.h"
#include "tonewarden/base/units.h"
#include "tonewarden/dsp/envelope.h"
#include "tonewarden/dsp/framer.h"
#include "tonewarden/dsp/integrate.h"
#include "tonewarden/dsp/levels.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/source/sound_file_reader.h"

namespace tonewarden::daemon {

using base::ErrorCode;
using base::make_error;

int exit_code_for(const base::Error& error) {
  switch (error.code) {
    case ErrorCode::kInvalidArgument:
    case ErrorCode::kNotFound:
    case ErrorCode::kCorruptData:
      return 2;
    default:
      return 1;
  }
}

namespace {

// Frames read from the file per call: 64 Ki frames keeps the read buffer at 256 KiB per
// channel while making the per-call overhead negligible.
constexpr size_t kReadFrames = 65536;
// Peaks gathered before re-ranking integrated (velocity) peaks.
constexpr size_t kMaxPeakCandidates = 1000;

// Whole-file moments in one pass. Sums of powers of (x - c) in double, with the shift c taken
// from the first block, keep the cancellation small for signals with a DC offset; central
// moments follow from the binomial expansion. Vectorises, unlike a per-sample Welford update.
class RunningMoments {
 public:
  void add(std::span<const float> x) {
    if (x.empty()) return;
    if (n_ == 0) {
      double s = 0;
      for (float v : x) s += v;
      c_ = s / static_cast<double>(x.size());
    }
    // Four independent lanes: the compiler may not reorder a single floating-point sum, but
    // it can vectorise four separate ones, which takes the latency chain off the hot loop.
    double s1[4] = {}, s2[4] = {}, s3[4] = {}, s4[4] = {};
    float lo[4] = {min_, min_, min_, min_}, hi[4] = {max_, max_, max_, max_};
    const size_t n4 = x.size() / 4 * 4;
    for (size_t i = 0; i < n4; i += 4) {
      for (size_t l = 0; l < 4; ++l) {
        const float v = x[i + l];
        const double d = v - c_;
        const double d2 = d * d;
        s1[l] += d;
        s2[l] += d2;
        s3[l] += d2 * d;
        s4[l] += d2 * d2;
        lo[l] = v < lo[l] ? v : lo[l];
        hi[l] = v > hi[l] ? v : hi[l];
      }
    }
    for (size_t i = n4; i < x.size(); ++i) {
      const float v = x[i];
      const double d = v - c_;
      s1[0] += d, s2[0] += d * d, s3[0] += d * d * d, s4[0] += d * d * d * d;
      lo[0] = std::min(lo[0], v);
      hi[0] = std::max(hi[0], v);
    }
    for (size_t l = 0; l < 4; ++l) {
      s1_ += s1[l], s2_ += s2[l], s3_ += s3[l], s4_ += s4[l];
      min_ = std::min(min_, lo[l]);
      max_ = std::max(max_, hi[l]);
    }
    n_ += x.size();
  }
  uint64_t count() const { return n_; }
  TimeReport report() const {
    TimeReport t;
    if (n_ == 0) return t;
    const double n = static_cast<double>(n_);
    const double d = s1_ / n;  // mean - c
    const double e2 = s2_ / n, e3 = s3_ / n, e4 = s4_ / n;
    const double m2 = std::max(0.0, e2 - d * d);
    const double m4 = e4 - 4 * d * e3 + 6 * d * d * e2 - 3 * d * d * d * d;
    t.mean = c_ + d;
    t.rms = std::sqrt(m2);
    t.peak = std::max(max_ - t.mean, t.mean - min_);
    t.crest_factor = t.rms > 0 ? t.peak / t.rms : 0;
    t.kurtosis = m2 > 0 ? m4 / (m2 * m2) : 0;  // Pearson: Gaussian 3, sine 1.5
    return t;
  }

 private:
  double c_ = 0, s1_ = 0, s2_ = 0, s3_ = 0, s4_ = 0;
  float min_ = INFINITY, max_ = -INFINITY;
  uint64_t n_ = 0;
};

// One spectrum stream (plain or envelope) and its average.
struct Averaged {
  std::optional<dsp::SpectrumAverager> averager;
  std::vector<float> power;   // per-frame spectrum
  std::vector<float> result;  // latest completed average
  uint64_t frames_in_result = 0;

  void push() {
    if (averager->push(power)) {
      const auto r = averager->result();
      std::copy(r.begin(), r.end(), result.begin());
      frames_in_result = averager->frames_in_result();
    }
  }
};

base::Result<Averaged> make_averaged(const AnalyzeSettings& s, size_t num_bins, double frame_period_s,
                                     uint64_t expected_frames) {
  dsp::AverageConfig cfg;
  if (s.average) {
    cfg = *s.average;
  } else {
    cfg.mode = dsp::AverageMode::kLinear;
    cfg.linear_frames = static_cast<size_t>(std::max<uint64_t>(1, expected_frames));
  }
  cfg.num_bins = num_bins;
  cfg.frame_period_s = frame_period_s;
  auto avg = dsp::SpectrumAverager::create(cfg);
  if (!avg) return std::move(avg).error().with_context("--average");
  Averaged a;
  a.averager.emplace(std::move(avg).value());
  a.power.assign(num_bins, 0.0f);
  a.result.assign(num_bins, 0.0f);
  return a;
}

// Finds peaks and reports them in `scale`. With `velocity_scale` > 0 the spectrum is an
// acceleration spectrum: peaks are found there (the interpolator fits the window's own shape,
// which a 1/f² tilt would bias by ~0.01 bin) and each tone is then integrated at its own
// interpolated frequency, V = A·velocity_scale/(2πf); they are ranked again by velocity.
std::vector<PeakReport> find_peaks(dsp::PeakConfig cfg, const dsp::Window& window,
                                   std::span<const float> power, dsp::SpectrumScale scale,
                                   double enbw_hz, double velocity_scale, base::Error* error) {
  std::vector<PeakReport> out;
  const size_t keep = cfg.max_peaks;
  // Integration reorders peaks (low tones gain), so gather every candidate first.
  if (velocity_scale > 0) {
    cfg.max_peaks = kMaxPeakCandidates;
    cfg.min_frequency_hz = std::max(cfg.min_frequency_hz, kVelocityLowCutHz);
  }
  auto finder = dsp::PeakFinder::create(cfg, window);
  if (!finder) {
    *error = std::move(finder).error().with_context("peak finder");
    return out;
  }
  std::vector<dsp::Peak> peaks(cfg.max_peaks);
  peaks.resize(finder->find(power, peaks));
  if (velocity_scale > 0) {
    for (dsp::Peak& p : peaks) {
      const double g = velocity_scale / (2.0 * std::numbers::pi * p.frequency_hz);
      p.power *= g * g;
      p.floor_power *= g * g;
    }
    std::stable_sort(peaks.begin(), peaks.end(),
                     [](const dsp::Peak& a, const dsp::Peak& b) { return a.power > b.power; });
    if (peaks.size() > keep) peaks.resize(keep);
  }
  for (const dsp::Peak& p : peaks) {
    PeakReport r;
    r.frequency_hz = p.frequency_hz;
    r.amplitude = dsp::power_to_scale(p.power, scale, enbw_hz, false);
    r.level_db = dsp::to_db(r.amplitude, 1.0, scale);
    r.prominence_db = p.floor_power > 0 ? 10.0 * std::log10(p.power / p.floor_power) : 0.0;
    out.push_back(r);
  }
  return out;
}

void show_progress(uint64_t done, uint64_t total, int* last_percent) {
  if (total == 0) return;
  const int percent = static_cast<int>(100 * std::min(done, total) / total);
  if (percent == *last_percent) return;
  *last_percent = percent;
  std::fprintf(stderr, "\ranalyze: %3d %% of %llu frames", percent,
               static_cast<unsigned long long>(total));
  std::fflush(stderr);
}

}  // namespace

base::Result<AnalyzeReport> run_analysis(const AnalyzeSettings& s) {
  auto reader_or = source::SoundFileReader::create(s.path);
  if (!reader_or) return std::move(reader_or).error();
  source::SoundFileReader reader = std::move(reader_or).value();
  if (auto st = reader.check_channel(s.channel); !st) return std::move(st).error();

  const double fs = reader.sample_rate_hz();
  const double nyquist_hz = fs / 2.0;
  const uint64_t total_samples = reader.frames();
  if (total_samples > 0 && total_samples < s.block) {
    return make_error(ErrorCode::kInvalidArgument,
                      s.path + ": " + std::to_string(total_samples) +
                          " samples is shorter than one block of " + std::to_string(s.block) +
                          "; pass a smaller --block");
  }
  for (const FrequencyBand& b : s.bands) {
    if (b.high_hz > nyquist_hz)
      return make_error(ErrorCode::kInvalidArgument,
                        "--band " + std::to_string(b.low_hz) + ":" + std::to_string(b.high_hz) +
                            " reaches above the Nyquist frequency " + std::to_string(nyquist_hz) +
                            " Hz of " + s.path);
  }
  if (s.envelope && s.envelope->high_hz > nyquist_hz)
    return make_error(ErrorCode::kInvalidArgument,
                      "--envelope band reaches above the Nyquist frequency " +
                          std::to_string(nyquist_hz) + " Hz of " + s.path);

  const size_t hop = std::max<size_t>(1, static_cast<size_t>(std::lround(
                                             static_cast<double>(s.block) * (1.0 - s.overlap))));
  auto framer_or = dsp::Framer::create({s.block, hop});
  if (!framer_or) return std::move(framer_or).error().with_context("--block/--overlap");
  dsp::Framer framer = std::move(framer_or).value();

  dsp::SpectrumConfig sc;
  sc.sample_rate_hz = fs;
  sc.block = s.block;
  sc.pad_factor = s.pad;
  sc.window = s.window;
  auto analyzer_or = dsp::SpectrumAnalyzer::create(sc);
  if (!analyzer_or) return std::move(analyzer_or).error().with_context("spectrum settings");
  dsp::SpectrumAnalyzer analyzer = std::move(analyzer_or).value();

  const uint64_t expected_frames =
      total_samples >= s.block ? (total_samples - s.block) / hop + 1 : 0;
  if (!s.average && expected_frames == 0)
    return make_error(ErrorCode::kInvalidArgument,
                      s.path + ": the header does not state its length, so the whole-file "
                               "average cannot be sized; pass --average");
  const double frame_period_s = static_cast<double>(hop) / fs;
  auto plain_or = make_averaged(s, analyzer.num_bins(), frame_period_s, expected_frames);
  if (!plain_or) return std::move(plain_or).error();
  Averaged plain = std::move(plain_or).value();

  std::optional<dsp::EnvelopeAnalyzer> envelope;
  std::optional<Averaged> env_avg;
  if (s.envelope) {
    dsp::EnvelopeConfig ec;
    ec.sample_rate_hz = fs;
    ec.block = s.block;
    ec.pad_factor = s.pad;
    ec.band_low_hz = s.envelope->low_hz;
    ec.band_high_hz = s.envelope->high_hz;
    ec.window = s.window;
    auto env_or = dsp::EnvelopeAnalyzer::create(ec);
    if (!env_or) return std::move(env_or).error().with_context("--envelope");
    envelope.emplace(std::move(env_or).value());
    auto ea = make_averaged(s, envelope->num_bins(), frame_period_s, expected_frames);
    if (!ea) return std::move(ea).error();
    env_avg.emplace(std::move(ea).value());
  }

  // The hot loop: no allocation below this line until the file ends.
  const bool progress = s.show_progress && expected_frames > 0;
  int last_percent = -1;
  std::vector<float> block(kReadFrames);
  std::vector<float> frame(s.block);
  RunningMoments moments;
  const float to_unit = static_cast<float>(1.0 / s.sensitivity);
  uint64_t frames_total = 0;
  for (;;) {
    auto got = reader.read_channel(s.channel, block);
    if (!got) return std::move(got).error();
    if (*got == 0) break;
    std::span<float> samples(block.data(), *got);
    if (to_unit != 1.0f)
      for (float& v : samples) v *= to_unit;
    moments.add(samples);
    std::span<const float> rest = samples;
    while (!rest.empty()) {
      rest = rest.subspan(framer.push(rest));
      int64_t first_index = 0;
      while (framer.next_frame(frame, &first_index)) {
        if (!analyzer.process(frame, plain.power))
          return make_error(ErrorCode::kInternal, "spectrum analyzer rejected a frame");
        plain.push();
        if (envelope) {
          if (!envelope->process(frame, env_avg->power))
            return make_error(ErrorCode::kInternal, "envelope analyzer rejected a frame");
          env_avg->push();
        }
        ++frames_total;
        if (progress) show_progress(frames_total, expected_frames, &last_percent);
      }
    }
  }
  if (progress) std::fprintf(stderr, "\r%40s\r", "");

  if (frames_total == 0)
    return make_error(ErrorCode::kInvalidArgument,
                      s.path + ": " + std::to_string(moments.count()) +
                          " samples is shorter than one block of " + std::to_string(s.block) +
                          "; pass a smaller --block");
  if (plain.frames_in_result == 0)
    return make_error(ErrorCode::kInvalidArgument,
                      "--average " + s.average_text + " needs more frames than the " +
                          std::to_string(frames_total) + " that " + s.path + " gives");

  AnalyzeReport r;
  r.path = s.path;
  r.format_description = reader.format_description();
  r.sample_rate_hz = fs;
  r.channel = s.channel;
  r.channels = reader.channels();
  r.samples = moments.count();
  r.block = s.block;
  r.hop = hop;
  r.pad = s.pad;
  r.fft_length = analyzer.fft_length();
  r.bin_hz = analyzer.bin_hz();
  r.resolution_hz = analyzer.resolution_hz();
  r.enbw_bins = analyzer.window().enbw_bins();
  r.window = dsp::window_name(s.window);
  r.average = s.average_text;
  r.frames = plain.frames_in_result;
  r.frames_total = frames_total;
  r.scale = s.scale;
  r.unit = s.unit;
  r.time_unit = s.unit;
  r.time = moments.report();

  std::vector<float>& power = plain.result;
  const double enbw_hz = analyzer.enbw_hz();
  // band_rms wants the ENBW in padded bins: ENBW_bins · fft_length / block.
  const double enbw_fft_bins = r.enbw_bins * static_cast<double>(r.fft_length) /
                               static_cast<double>(r.block);
  r.overall_band = {0.0, nyquist_hz};
  double velocity_scale = 0;  // g or m/s² -> mm/s
  if (s.velocity) {
    velocity_scale = base::accel_unit_in_mps2(*base::parse_accel_unit(s.unit)) * 1000.0;
    r.unit = "mm/s";
    r.overall_band.low_hz = kVelocityLowCutHz;
  }

  // Peaks inside the window's main lobe around DC are leakage of the mean (and of the
  // integration cut-off), not tones: skip two true-resolution widths, which clears the main
  // lobe of every window offered (half-widths: rect 1, Hann 2, flat-top 5 bins; ENBW·2 is
  // 2, 3 and 7.5 bins).
  dsp::PeakConfig pc;
  pc.sample_rate_hz = fs;
  pc.fft_length = r.fft_length;
  pc.max_peaks = s.max_peaks;
  pc.min_frequency_hz = 2.0 * r.resolution_hz;
  base::Error peak_error;
  if (s.max_peaks > 0) {
    r.peaks = find_peaks(pc, analyzer.window(), power, s.scale, enbw_hz, velocity_scale,
                         &peak_error);
    if (!peak_error.message.empty()) return peak_error;
  }
  if (s.velocity) {
    dsp::integrate_power_spectrum(power, r.bin_hz, kVelocityLowCutHz,
                                  dsp::IntegrationOrder::kVelocity, velocity_scale, power);
  }
  for (const FrequencyBand& b : s.bands)
    r.bands.push_back({b, dsp::band_rms(power, r.bin_hz, enbw_fft_bins, b.low_hz, b.high_hz)});
  r.overall_rms = dsp::band_rms(power, r.bin_hz, enbw_fft_bins, r.overall_band.low_hz,
                                r.overall_band.high_hz);
  r.spectrum.resize(power.size());
  dsp::convert_power_spectrum(power, s.scale, enbw_hz, r.spectrum);

  if (envelope) {
    EnvelopeReport e;
    e.band = *s.envelope;
    e.unit = s.unit + "^2";
    std::vector<float>& ep = env_avg->result;
    // The squared envelope of a band of width B carries modulation up to B; report the
    // median over that range (the spectrum's background, for judging peaks against it).
    const size_t first = static_cast<size_t>(std::ceil(pc.min_frequency_hz / envelope->bin_hz()));
    const double width_hz = std::min(nyquist_hz, e.band.high_hz - e.band.low_hz);
    const size_t last = std::min(ep.size() - 1,
                                 static_cast<size_t>(width_hz / envelope->bin_hz()));
    if (last > first) {
      std::vector<float> tmp(ep.begin() + static_cast<long>(first),
                             ep.begin() + static_cast<long>(last) + 1);
      std::nth_element(tmp.begin(), tmp.begin() + static_cast<long>(tmp.size() / 2), tmp.end());
      // A median bin of a noise-like spectrum is a per-bin power; convert it like a bin.
      e.median = dsp::power_to_scale(tmp[tmp.size() / 2], s.scale, enbw_hz, false);
    }
    if (s.max_peaks > 0) {
      dsp::PeakConfig epc = pc;
      epc.fft_length = envelope->fft_length();
      e.peaks = find_peaks(epc, envelope->window(), ep, s.scale, enbw_hz, 0.0, &peak_error);
      if (!peak_error.message.empty()) return peak_error;
    }
    r.envelope = std::move(e);
  }
  return r;
}

}  // namespace tonewarden::daemon
