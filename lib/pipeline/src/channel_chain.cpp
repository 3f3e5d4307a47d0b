// ChannelChain: framing, spectrum, averaging, peaks and envelope for one channel.
#include "tonewarden/pipeline/channel_chain.h"

#include <algorithm>
#include <cmath>

namespace tonewarden::pipeline {

struct ChannelChain::Impl {
  ChannelChainConfig config;
  dsp::Framer framer;
  dsp::SpectrumAnalyzer analyzer;
  dsp::SpectrumAverager averager;
  dsp::PeakFinder peak_finder;
  std::optional<dsp::EnvelopeAnalyzer> envelope;
  std::optional<dsp::SpectrumAverager> envelope_averager;
  std::vector<float> frame;
  std::vector<float> power;
  std::vector<float> envelope_power;
  std::vector<dsp::Peak> peaks;
  ChannelPeriod period;
  int64_t period_first_sample = -1;
  double period_max_peak = 0;
  uint64_t period_clipped = 0;
  size_t period_frames = 0;
  uint64_t frames = 0;
  uint64_t periods = 0;
};

ChannelChain::ChannelChain(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
ChannelChain::ChannelChain(ChannelChain&&) noexcept = default;
ChannelChain& ChannelChain::operator=(ChannelChain&&) noexcept = default;
ChannelChain::~ChannelChain() = default;

base::Result<ChannelChain> ChannelChain::create(const ChannelChainConfig& input) {
  ChannelChainConfig config = input;
  const size_t block = config.spectrum.block;
  if (config.hop == 0) config.hop = std::max<size_t>(1, block / 2);
  auto framer = dsp::Framer::create({block, config.hop});
  if (!framer) return std::move(framer).error();
  auto analyzer = dsp::SpectrumAnalyzer::create(config.spectrum);
  if (!analyzer) return std::move(analyzer).error();

  config.average.num_bins = analyzer->num_bins();
  config.average.frame_period_s =
      static_cast<double>(config.hop) / config.spectrum.sample_rate_hz;
  auto averager = dsp::SpectrumAverager::create(config.average);
  if (!averager) return std::move(averager).error();

  config.peaks.sample_rate_hz = config.spectrum.sample_rate_hz;
  config.peaks.fft_length = analyzer->fft_length();
  auto peak_finder = dsp::PeakFinder::create(config.peaks, analyzer->window());
  if (!peak_finder) return std::move(peak_finder).error();

  std::optional<dsp::EnvelopeAnalyzer> envelope;
  std::optional<dsp::SpectrumAverager> envelope_averager;
  if (config.envelope_band_hz) {
    dsp::EnvelopeConfig ec;
    ec.sample_rate_hz = config.spectrum.sample_rate_hz;
    ec.block = block;
    ec.pad_factor = config.spectrum.pad_factor;
    ec.band_low_hz = config.envelope_band_hz->first;
    ec.band_high_hz = config.envelope_band_hz->second;
    ec.window = config.spectrum.window;
    ec.planning = config.spectrum.planning;
    auto env = dsp::EnvelopeAnalyzer::create(ec);
    if (!env) return std::move(env).error().with_context("envelope");
    dsp::AverageConfig eac = config.average;
    eac.num_bins = env->num_bins();
    auto env_avg = dsp::SpectrumAverager::create(eac);
    if (!env_avg) return std::move(env_avg).error();
    envelope.emplace(std::move(env).value());
    envelope_averager.emplace(std::move(env_avg).value());
  }

  auto impl = std::unique_ptr<Impl>(new Impl{config, std::move(framer).value(),
                                             std::move(analyzer).value(),
                                             std::move(averager).value(),
                                             std::move(peak_finder).value(),
                                             std::move(envelope), std::move(envelope_averager)});
  impl->frame.resize(block);
  impl->power.resize(impl->analyzer.num_bins());
  if (impl->envelope) impl->envelope_power.resize(impl->envelope->num_bins());
  impl->peaks.resize(std::max<size_t>(1, config.peaks.max_peaks));
  return ChannelChain(std::move(impl));
}

dsp::Framer& ChannelChain::framer() noexcept { return impl_->framer; }

const ChannelPeriod* ChannelChain::next_period() noexcept {
  Impl& s = *impl_;
  int64_t first = 0;
  if (!s.framer.next_frame(s.frame, &first)) return nullptr;
  ++s.frames;
  if (s.period_frames == 0) {
    s.period_first_sample = first;
    s.period_max_peak = 0;
    s.period_clipped = 0;
  }
  ++s.period_frames;

  // Clipping counts only the samples new to this frame (overlap would count them twice).
  const float clip_level = static_cast<float>(0.999 * s.config.full_scale);
  const size_t hop = std::min(s.config.hop, s.frame.size());
  const size_t fresh_from = (s.period_frames == 1) ? 0 : s.frame.size() - hop;
  for (size_t i = fresh_from; i < s.frame.size(); ++i) {
    if (std::fabs(s.frame[i]) >= clip_level) ++s.period_clipped;
  }
  const dsp::TimeStats stats = dsp::time_stats(s.frame);
  s.period_max_peak = std::max(s.period_max_peak, stats.peak);

  s.analyzer.process(s.frame, s.power);
  bool env_done = true;
  if (s.envelope) {
    s.envelope->process(s.frame, s.envelope_power);
    env_done = s.envelope_averager->push(s.envelope_power);
  }
  const bool done = s.averager.push(s.power);
  if (!done || !env_done) return nullptr;

  const size_t n_peaks = s.peak_finder.find(s.averager.result(), s.peaks);
  s.period.power = s.averager.result();
  s.period.envelope_power =
      s.envelope ? s.envelope_averager->result() : std::span<const float>();
  s.period.peaks = std::span<const dsp::Peak>(s.peaks.data(), n_peaks);
  s.period.stats = stats;
  s.period.max_peak = s.period_max_peak;
  s.period.first_sample = s.period_first_sample;
  s.period.last_sample_end = first + static_cast<int64_t>(s.frame.size());
  s.period.frames = s.period_frames;
  s.period.clipped_samples = s.period_clipped;
  s.period_frames = 0;
  ++s.periods;
  return &s.period;
}

void ChannelChain::reset() noexcept {
  impl_->framer.reset();
  impl_->averager.reset();
  if (impl_->envelope_averager) impl_->envelope_averager->reset();
  impl_->period_frames = 0;
}

const dsp::SpectrumAnalyzer& ChannelChain::analyzer() const noexcept { return impl_->analyzer; }
const dsp::EnvelopeAnalyzer* ChannelChain::envelope() const noexcept {
  return impl_->envelope ? &*impl_->envelope : nullptr;
}
const ChannelChainConfig& ChannelChain::config() const noexcept { return impl_->config; }
uint64_t ChannelChain::num_frames() const noexcept { return impl_->frames; }
uint64_t ChannelChain::num_periods() const noexcept { return impl_->periods; }

}  // namespace tonewarden::pipeline
