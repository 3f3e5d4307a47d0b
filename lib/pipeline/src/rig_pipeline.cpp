// RigPipeline: capture and analysis threads for one rig (see the header's design note).
#include "tonewarden/pipeline/rig_pipeline.h"

#include <atomic>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstdio>
#include <mutex>
#include <optional>
#include <semaphore>
#include <thread>

#include "tonewarden/base/log.h"
#include "tonewarden/base/spsc_ring.h"
#include "tonewarden/pipeline/snapshot_pool.h"

namespace tonewarden::pipeline {
namespace {

// One captured block, queued beside its samples.
struct BlockMarker {
  int64_t first_frame = 0;
  size_t frames = 0;
  base::WallTimeMs t_first;
  bool discontinuity = false;
};

constexpr size_t kMarkerCapacity = 4096;
constexpr size_t kSnapshotSlots = 4;
constexpr auto kIdleWakeup = std::chrono::milliseconds(200);  // publish health while idle
constexpr auto kCaptureErrorBackoff = std::chrono::milliseconds(200);

}  // namespace

struct RigPipeline::Impl {
  RigPipelineConfig config;
  std::unique_ptr<source::Source> source;
  source::SourceCapabilities caps;
  size_t nch = 0;

  base::SpscRing<float> samples;
  base::SpscRing<BlockMarker> markers{kMarkerCapacity};
  std::counting_semaphore<> wake{0};

  std::vector<std::optional<ChannelChain>> chains;  // empty for tach channels
  std::vector<RigObserver*> observers;

  // Capture thread scratch.
  std::vector<float> capture_buf;
  // Analysis thread scratch.
  std::vector<float> analysis_buf;
  std::vector<std::vector<float>> volts;
  std::vector<std::vector<float>> units;
  std::vector<std::span<const float>> volt_spans;

  RigLive work;
  SnapshotPool<RigLive> pool;

  std::thread capture_thread, analysis_thread;
  std::atomic<bool> stop_capture{false};
  std::atomic<bool> capture_done{false};
  std::atomic<bool> analysis_done{false};
  std::atomic<uint64_t> ring_overflows{0};
  std::atomic<uint64_t> frames{0};
  std::atomic<uint64_t> periods{0};
  std::atomic<double> first_frame_ms{-1.0};
  base::MonoTime started_at;
  std::optional<base::WallTimeMs> stream_t0;  // wall time of frame 0
  std::mutex stop_mu;
  bool started = false, stopped = false;

  // Observer swaps requested by other threads, applied between blocks.
  std::mutex swap_mu;
  std::condition_variable swap_cv;
  std::atomic<bool> swap_pending{false};
  RigObserver* swap_old = nullptr;
  RigObserver* swap_new = nullptr;
  void apply_swap();

  Impl(const RigPipelineConfig& c, std::unique_ptr<source::Source> s, size_t ring_items,
       const std::function<void(RigLive&)>& init)
      : config(c), source(std::move(s)), samples(ring_items), pool(kSnapshotSlots, init) {}

  void capture_loop();
  void analysis_loop();
  void process_block(const BlockMarker& m);
  void publish();
};

RigPipeline::RigPipeline(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
RigPipeline::~RigPipeline() { stop(); }

base::Result<std::unique_ptr<RigPipeline>> RigPipeline::create(
    const RigPipelineConfig& config, std::unique_ptr<source::Source> source) {
  using base::ErrorCode;
  if (!source) return base::make_error(ErrorCode::kInvalidArgument, "rig has no source");
  const source::SourceCapabilities caps = source->capabilities();
  if (caps.sample_rate_hz <= 0 || caps.channels == 0) {
    return base::make_error(ErrorCode::kInvalidArgument,
                            "rig '" + config.rig + "': source reports no sample rate or channels");
  }
  if (config.channels.empty()) {
    return base::make_error(ErrorCode::kInvalidArgument, "rig '" + config.rig + "' has no channels");
  }
  for (const ChannelSpec& ch : config.channels) {
    if (ch.source_index >= caps.channels) {
      return base::make_error(ErrorCode::kInvalidArgument,
                              "channel '" + ch.name + "' uses source channel " +
                                  std::to_string(ch.source_index) + " but the source has " +
                                  std::to_string(caps.channels));
    }
    if (!(ch.sensitivity_v_per_unit > 0)) {
      return base::make_error(ErrorCode::kInvalidArgument,
                              "channel '" + ch.name + "': sensitivity must be > 0 V/unit");
    }
  }

  ChannelChainConfig chain_cfg = config.chain;
  chain_cfg.spectrum.sample_rate_hz = caps.sample_rate_hz;
  std::vector<std::optional<ChannelChain>> chains;
  for (const ChannelSpec& ch : config.channels) {
    chains.emplace_back();
    if (ch.is_tach) continue;
    ChannelChainConfig c = chain_cfg;
    c.full_scale = ch.full_scale_v / ch.sensitivity_v_per_unit;
    auto chain = ChannelChain::create(c);
    if (!chain) return std::move(chain).error().with_context("channel '" + ch.name + "'");
    chains.back().emplace(std::move(chain).value());
  }

  const size_t ring_items = static_cast<size_t>(
      std::max(1.0, config.ring_seconds) * caps.sample_rate_hz * static_cast<double>(caps.channels));

  // Every snapshot slot is sized once here, so publishing copies without allocating.
  auto init = [&](RigLive& live) {
    live.rig = config.rig;
    live.channels.resize(config.channels.size());
    for (size_t i = 0; i < config.channels.size(); ++i) {
      ChannelLive& cl = live.channels[i];
      cl.name = config.channels[i].name;
      cl.unit = config.channels[i].unit;
      cl.sample_rate_hz = caps.sample_rate_hz;
      if (!chains[i]) continue;
      const auto& an = chains[i]->analyzer();
      cl.block = an.config().block;
      cl.fft_length = an.fft_length();
      cl.bin_hz = an.bin_hz();
      cl.resolution_hz = an.resolution_hz();
      cl.enbw_hz = an.enbw_hz();
      cl.window = dsp::window_name(an.window().spec());
      cl.power.assign(an.num_bins(), 0.0f);
      if (const auto* env = chains[i]->envelope()) {
        cl.envelope_bin_hz = env->bin_hz();
        cl.envelope_power.assign(env->num_bins(), 0.0f);
      }
      cl.peaks.reserve(chain_cfg.peaks.max_peaks);
    }
  };

  auto impl = std::make_unique<Impl>(config, std::move(source), ring_items, init);
  impl->caps = caps;
  impl->nch = caps.channels;
  impl->capture_buf.resize(config.read_frames * caps.channels);
  impl->analysis_buf.resize(config.read_frames * caps.channels);
  impl->volts.resize(config.channels.size(), std::vector<float>(config.read_frames));
  impl->units.resize(config.channels.size(), std::vector<float>(config.read_frames));
  impl->volt_spans.resize(config.channels.size());
  init(impl->work);
  impl->chains = std::move(chains);  // after the last init(): it reads the local chains
  return std::unique_ptr<RigPipeline>(new RigPipeline(std::move(impl)));
}

void RigPipeline::add_observer(RigObserver* observer) { impl_->observers.push_back(observer); }

base::Status RigPipeline::start() {
  std::lock_guard lock(impl_->stop_mu);
  if (impl_->started) return base::make_error(base::ErrorCode::kInternal, "pipeline already started");
  if (auto st = impl_->source->start(); !st) {
    return std::move(st).error().with_context("starting source for rig '" + impl_->config.rig + "'");
  }
  impl_->started = true;
  impl_->started_at = base::mono_now();
  impl_->analysis_thread = std::thread([this] { impl_->analysis_loop(); });
  impl_->capture_thread = std::thread([this] { impl_->capture_loop(); });
  base::log_info("rig '" + impl_->config.rig + "': started: " + impl_->source->describe());
  return base::Status::success();
}

void RigPipeline::stop() {
  std::lock_guard lock(impl_->stop_mu);
  if (!impl_->started || impl_->stopped) return;
  impl_->stopped = true;
  impl_->stop_capture.store(true);
  impl_->source->stop();
  if (impl_->capture_thread.joinable()) impl_->capture_thread.join();
  impl_->wake.release();
  if (impl_->analysis_thread.joinable()) impl_->analysis_thread.join();
}

void RigPipeline::Impl::capture_loop() {
  bool pending_gap = false;
  source::SourceState last_state = source::SourceState::kWaiting;
  while (!stop_capture.load(std::memory_order_relaxed)) {
    source::BlockInfo info;
    auto got = source->read(capture_buf, &info);
    if (!got) {
      base::log_error("rig '" + config.rig + "': source failed: " + got.error().message);
      break;
    }
    const size_t n = *got;
    if (n == 0) {
      const source::SourceState state = source->health().state;
      if (state != last_state) {
        base::log_info("rig '" + config.rig + "': source " + source::to_string(state));
        last_state = state;
      }
      if (state == source::SourceState::kFinished) break;
      std::this_thread::sleep_for(state == source::SourceState::kLost ? kCaptureErrorBackoff
                                                                      : std::chrono::milliseconds(5));
      continue;
    }
    last_state = source::SourceState::kRunning;
    const BlockMarker m{info.first_frame, n, info.t_first, info.discontinuity || pending_gap};
    // A live device cannot wait: a block that does not fit is dropped and counted. Files and
    // the synthetic rig can, so they wait for room (backpressure) and never lose a block.
    if (!caps.is_live) {
      while ((markers.size() >= markers.capacity() || samples.capacity() - samples.size() < n * nch) &&
             !stop_capture.load(std::memory_order_relaxed)) {
        std::this_thread::sleep_for(std::chrono::milliseconds(1));
      }
    }
    if (markers.size() >= markers.capacity() ||
        !samples.push(std::span<const float>(capture_buf.data(), n * nch))) {
      ring_overflows.fetch_add(1, std::memory_order_relaxed);
      pending_gap = true;  // the next block that fits starts after a gap
      continue;
    }
    markers.push(std::span<const BlockMarker>(&m, 1));
    pending_gap = false;
    wake.release();
  }
  capture_done.store(true);
  wake.release();
}

void RigPipeline::Impl::apply_swap() {
  std::lock_guard lock(swap_mu);
  for (auto& o : observers) {
    if (o != swap_old) continue;
    swap_new->take_over_from(*swap_old);
    o = swap_new;
  }
  swap_pending.store(false);
  swap_cv.notify_all();
}

void RigPipeline::swap_observer(RigObserver* old_observer, RigObserver* fresh) {
  std::unique_lock lock(impl_->swap_mu);
  impl_->swap_old = old_observer;
  impl_->swap_new = fresh;
  if (!impl_->started || impl_->analysis_done.load()) {
    for (auto& o : impl_->observers) {
      if (o != old_observer) continue;
      fresh->take_over_from(*old_observer);
      o = fresh;
    }
    return;
  }
  impl_->swap_pending.store(true);
  impl_->wake.release();
  impl_->swap_cv.wait(lock, [&] { return !impl_->swap_pending.load() || impl_->analysis_done.load(); });
}

void RigPipeline::Impl::analysis_loop() {
  BlockMarker m;
  while (true) {
    if (swap_pending.load(std::memory_order_acquire)) apply_swap();
    if (markers.pop(std::span<BlockMarker>(&m, 1)) == 1) {
      process_block(m);
      continue;
    }
    if (capture_done.load() && markers.size() == 0) break;
    if (!wake.try_acquire_for(kIdleWakeup)) publish();  // keep health fresh while idle
  }
  publish();
  {
    std::lock_guard lock(swap_mu);
    analysis_done.store(true);
  }
  swap_cv.notify_all();
}

void RigPipeline::Impl::process_block(const BlockMarker& m) {
  const size_t n = m.frames;
  const size_t got = samples.pop(std::span<float>(analysis_buf.data(), n * nch));
  TW_CHECK(got == n * nch);  // markers are pushed only after their samples
  if (!stream_t0) {
    stream_t0 = base::WallTimeMs{m.t_first.unix_ms -
                                 static_cast<int64_t>(std::llround(static_cast<double>(m.first_frame) *
                                                                   1000.0 / caps.sample_rate_hz))};
  }
  if (m.discontinuity) {
    for (auto& c : chains) {
      if (c) c->reset();
    }
  }
  for (size_t c = 0; c < config.channels.size(); ++c) {
    const size_t idx = config.channels[c].source_index;
    float* v = volts[c].data();
    for (size_t i = 0; i < n; ++i) v[i] = analysis_buf[i * nch + idx];
    volt_spans[c] = std::span<const float>(v, n);
  }
  for (RigObserver* o : observers) o->on_block(volt_spans, m.first_frame, m.t_first, m.discontinuity);

  bool any_period = false;
  for (size_t c = 0; c < config.channels.size(); ++c) {
    if (!chains[c]) continue;
    const float inv = static_cast<float>(1.0 / config.channels[c].sensitivity_v_per_unit);
    float* u = units[c].data();
    for (size_t i = 0; i < n; ++i) u[i] = volts[c][i] * inv;
    const uint64_t before = chains[c]->num_frames();
    chains[c]->push(std::span<const float>(u, n), [&](const ChannelPeriod& p) {
      any_period = true;
      periods.fetch_add(1, std::memory_order_relaxed);
      const base::WallTimeMs t_end =
          base::wall_after_samples(*stream_t0, p.last_sample_end, caps.sample_rate_hz);
      ChannelLive& cl = work.channels[c];
      std::copy(p.power.begin(), p.power.end(), cl.power.begin());
      if (!p.envelope_power.empty()) {
        std::copy(p.envelope_power.begin(), p.envelope_power.end(), cl.envelope_power.begin());
      }
      cl.peaks.assign(p.peaks.begin(), p.peaks.end());
      cl.stats = p.stats;
      cl.t = t_end;
      cl.periods = chains[c]->num_periods();
      cl.clipped_samples += p.clipped_samples;
      for (RigObserver* o : observers) o->on_period(c, p, t_end, work);
    });
    const uint64_t added = chains[c]->num_frames() - before;
    if (added > 0) {
      work.channels[c].frames = chains[c]->num_frames();
      if (frames.fetch_add(added, std::memory_order_relaxed) == 0 && first_frame_ms.load() < 0) {
        first_frame_ms.store(std::chrono::duration<double, std::milli>(base::mono_now() - started_at).count());
      }
    }
  }
  if (any_period) publish();
}

void RigPipeline::Impl::publish() {
  const source::SourceHealth h = source->health();
  work.source.description = source->describe();
  work.source.state = source::to_string(h.state);
  work.source.frames_delivered = h.frames_delivered;
  work.source.source_overflows = h.overflows;
  work.source.ring_overflows = ring_overflows.load(std::memory_order_relaxed);
  work.source.underruns = h.underruns;
  work.source.errors = h.errors;
  work.source.last_error = h.last_error;
  work.frames = frames.load(std::memory_order_relaxed);
  work.t = base::wall_now();
  ++work.publications;
  if (RigLive* slot = pool.acquire()) {
    *slot = work;
    pool.publish(slot);
  }
}

bool RigPipeline::finished() const noexcept { return impl_->analysis_done.load(); }
std::shared_ptr<const RigLive> RigPipeline::live() const noexcept { return impl_->pool.current(); }
const ChannelChain* RigPipeline::chain(size_t channel) const noexcept {
  if (channel >= impl_->chains.size() || !impl_->chains[channel]) return nullptr;
  return &*impl_->chains[channel];
}
const RigPipelineConfig& RigPipeline::config() const noexcept { return impl_->config; }
source::SourceCapabilities RigPipeline::capabilities() const { return impl_->caps; }
uint64_t RigPipeline::num_frames() const noexcept { return impl_->frames.load(); }
uint64_t RigPipeline::num_ring_overflows() const noexcept { return impl_->ring_overflows.load(); }
uint64_t RigPipeline::num_periods() const noexcept { return impl_->periods.load(); }
double RigPipeline::first_frame_latency_ms() const noexcept { return impl_->first_frame_ms.load(); }

std::string RigPipeline::describe() const {
  char rate[32];
  std::snprintf(rate, sizeof rate, "%g", impl_->caps.sample_rate_hz);
  return "rig '" + impl_->config.rig + "': " + std::to_string(impl_->config.channels.size()) +
         " channels at " + rate + " Hz from " + impl_->source->describe();
}

}  // namespace tonewarden::pipeline
