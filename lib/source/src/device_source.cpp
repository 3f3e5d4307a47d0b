// DeviceSource: PortAudio capture into a lock-free ring, with loss detection and reconnects.
#include "tonewarden/source/device_source.h"

#include <alsa/asoundlib.h>
#include <fcntl.h>
#include <portaudio.h>
#include <unistd.h>

#include <algorithm>
#include <cstdio>
#include <atomic>
#include <cctype>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstdarg>
#include <mutex>
#include <thread>

#include "tonewarden/base/spsc_ring.h"
#include "tonewarden/source/source_health.h"

namespace tonewarden::source {
namespace {

using base::ErrorCode;
using base::make_error;

constexpr int kStallTimeoutMs = 2000;  // no callback for this long: the device is lost
constexpr int kReadWaitMs = 20;        // read() waits this long for data before returning 0

// ALSA prints dozens of lines while PortAudio probes devices; keep stderr readable.
extern "C" void quiet_alsa(const char*, int, const char*, int, const char*, ...) {}

// PortAudio is initialised once per process, and re-initialised to rescan devices.
std::mutex g_pa_mu;
int g_pa_users = 0;

base::Status pa_acquire() {
  std::lock_guard lock(g_pa_mu);
  if (g_pa_users == 0) {
    snd_lib_error_set_handler(quiet_alsa);
    // Probing host APIs (JACK among them) prints dozens of lines to stderr; they say nothing a
    // user can act on, so stderr is pointed at /dev/null for the duration of the probe.
    fflush(stderr);
    const int saved = dup(STDERR_FILENO);
    const int devnull = open("/dev/null", O_WRONLY | O_CLOEXEC);
    if (saved >= 0 && devnull >= 0) dup2(devnull, STDERR_FILENO);
    const PaError err = Pa_Initialize();
    if (saved >= 0) {
      dup2(saved, STDERR_FILENO);
      close(saved);
    }
    if (devnull >= 0) close(devnull);
    if (err != paNoError) {
      return make_error(ErrorCode::kUnavailable, std::string("audio system: ") + Pa_GetErrorText(err));
    }
  }
  ++g_pa_users;
  return base::Status::success();
}

void pa_release() {
  std::lock_guard lock(g_pa_mu);
  if (g_pa_users > 0 && --g_pa_users == 0) Pa_Terminate();
}

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return std::tolower(c); });
  return s;
}

std::vector<DeviceInfo> enumerate() {
  std::vector<DeviceInfo> out;
  const int n = Pa_GetDeviceCount();
  for (int i = 0; i < n; ++i) {
    const PaDeviceInfo* d = Pa_GetDeviceInfo(i);
    if (!d || d->maxInputChannels <= 0) continue;
    const PaHostApiInfo* h = Pa_GetHostApiInfo(d->hostApi);
    out.push_back({i, d->name ? d->name : "", h && h->name ? h->name : "", d->maxInputChannels,
                   d->defaultSampleRate});
  }
  return out;
}

std::string device_list_text(const std::vector<DeviceInfo>& devices) {
  if (devices.empty()) return "no input devices found";
  std::string s = "inputs:";
  for (const auto& d : devices) s += " [" + std::to_string(d.index) + "] " + d.name + ";";
  s.pop_back();
  return s;
}

}  // namespace

base::Result<std::vector<DeviceInfo>> list_input_devices() {
  if (auto st = pa_acquire(); !st) return std::move(st).error();
  auto devices = enumerate();
  pa_release();
  return devices;
}

struct DeviceSource::Impl {
  DeviceSourceConfig config;
  base::SpscRing<float> ring;
  HealthTracker health;
  PaStream* stream = nullptr;
  bool pa_held = false;
  std::string device_name;
  int device_index = -1;

  std::atomic<uint64_t> callbacks{0};
  std::atomic<bool> stream_failed{false};
  std::atomic<bool> stopped{false};
  std::mutex sleep_mu;
  std::condition_variable sleep_cv;

  base::WallTimeMs start_time;
  base::MonoTime start_mono;
  int64_t next_frame = 0;
  bool next_discontinuity = false;
  uint64_t reconnects = 0;
  int retry_ms = 0;
  base::MonoTime next_retry;
  uint64_t last_callbacks = 0;
  base::MonoTime last_progress;

  explicit Impl(const DeviceSourceConfig& c)
      : config(c),
        ring(static_cast<size_t>(c.ring_seconds * c.sample_rate_hz) * c.channels) {}

  static int callback(const void* input, void*, unsigned long frames,
                      const PaStreamCallbackTimeInfo*, PaStreamCallbackFlags flags, void* user) {
    auto* self = static_cast<Impl*>(user);
    self->callbacks.fetch_add(1, std::memory_order_relaxed);
    if (flags & paInputOverflow) self->health.add_overflows(1);
    if (!input) return paContinue;
    const size_t n = frames * self->config.channels;
    if (!self->ring.push(std::span<const float>(static_cast<const float*>(input), n))) {
      self->health.add_overflows(frames);
    }
    return paContinue;
  }

  static void finished(void* user) { static_cast<Impl*>(user)->stream_failed.store(true); }

  base::Status open() {
    if (!pa_held) {
      if (auto st = pa_acquire(); !st) return st;
      pa_held = true;
    }
    const auto devices = enumerate();
    const DeviceInfo* pick = nullptr;
    for (const auto& d : devices) {
      if (config.device_index >= 0 ? d.index == config.device_index
                                   : lower(d.name).find(lower(config.device)) != std::string::npos) {
        pick = &d;
        break;
      }
    }
    if (!pick) {
      const std::string wanted = config.device_index >= 0 ? "index " + std::to_string(config.device_index)
                                                          : "'" + config.device + "'";
      return make_error(ErrorCode::kNotFound,
                        "no input device matches " + wanted + " (" + device_list_text(devices) + ")");
    }
    if (static_cast<size_t>(pick->max_input_channels) < config.channels) {
      return make_error(ErrorCode::kInvalidArgument,
                        "device '" + pick->name + "' has " + std::to_string(pick->max_input_channels) +
                            " input channels, " + std::to_string(config.channels) + " were asked for");
    }
    PaStreamParameters in{};
    in.device = pick->index;
    in.channelCount = static_cast<int>(config.channels);
    in.sampleFormat = paFloat32;
    in.suggestedLatency = Pa_GetDeviceInfo(pick->index)->defaultLowInputLatency;
    PaError err = Pa_OpenStream(&stream, &in, nullptr, config.sample_rate_hz,
                                static_cast<unsigned long>(config.frames_per_buffer), paClipOff,
                                &Impl::callback, this);
    if (err != paNoError) {
      stream = nullptr;
      char rate[32];
      std::snprintf(rate, sizeof rate, "%g", config.sample_rate_hz);
      return make_error(ErrorCode::kUnavailable,
                        "opening '" + pick->name + "' at " + rate + " Hz: " + Pa_GetErrorText(err));
    }
    Pa_SetStreamFinishedCallback(stream, &Impl::finished);
    stream_failed.store(false);
    err = Pa_StartStream(stream);
    if (err != paNoError) {
      Pa_CloseStream(stream);
      stream = nullptr;
      return make_error(ErrorCode::kUnavailable, "starting '" + pick->name + "': " + Pa_GetErrorText(err));
    }
    device_name = pick->name;
    device_index = pick->index;
    last_callbacks = callbacks.load();
    last_progress = base::mono_now();
    return base::Status::success();
  }

  void close(bool terminate) {
    if (stream) {
      Pa_AbortStream(stream);
      Pa_CloseStream(stream);
      stream = nullptr;
    }
    if (terminate && pa_held) {
      pa_release();
      pa_held = false;
    }
  }

  void mark_lost(const std::string& why) {
    health.set_state(SourceState::kLost);
    health.report_error(why);
    close(true);  // PortAudio rescans devices only on a fresh initialisation
    retry_ms = retry_ms == 0 ? config.retry_initial_ms : std::min(retry_ms * 2, config.retry_max_ms);
    next_retry = base::mono_now() + std::chrono::milliseconds(retry_ms);
    next_discontinuity = true;
  }

  void sleep_ms(int ms) {
    std::unique_lock lock(sleep_mu);
    sleep_cv.wait_for(lock, std::chrono::milliseconds(ms), [&] { return stopped.load(); });
  }
};

DeviceSource::DeviceSource(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
DeviceSource::~DeviceSource() {
  stop();
  impl_->close(true);
}

base::Result<std::unique_ptr<DeviceSource>> DeviceSource::create(const DeviceSourceConfig& c) {
  std::string bad;
  if (c.device.empty() && c.device_index < 0) bad += " device name or index required;";
  if (!(c.sample_rate_hz > 0 && c.sample_rate_hz <= 384000)) bad += " sample_rate_hz must be in (0, 384000];";
  if (c.channels < 1 || c.channels > 64) bad += " channels must be in [1, 64];";
  if (c.frames_per_buffer < 16 || c.frames_per_buffer > 65536) bad += " frames_per_buffer must be in [16, 65536];";
  if (!(c.ring_seconds >= 0.1 && c.ring_seconds <= 60)) bad += " ring_seconds must be in [0.1, 60];";
  if (c.retry_initial_ms < 1 || c.retry_max_ms < c.retry_initial_ms) bad += " retry delays must be >= 1 ms and max >= initial;";
  if (!bad.empty()) {
    bad.pop_back();
    return make_error(ErrorCode::kInvalidArgument, "device source:" + bad);
  }
  return std::unique_ptr<DeviceSource>(new DeviceSource(std::make_unique<Impl>(c)));
}

SourceCapabilities DeviceSource::capabilities() const {
  return {impl_->config.sample_rate_hz, impl_->config.channels, true, false, false};
}

base::Status DeviceSource::start() {
  Impl& s = *impl_;
  s.start_time = s.config.start_time.unix_ms != 0 ? s.config.start_time : base::wall_now();
  s.start_mono = base::mono_now();
  if (auto st = s.open(); !st) {
    s.close(true);
    s.health.set_state(SourceState::kLost);
    s.health.report_error(st.error().message);
    return st;
  }
  s.health.set_state(SourceState::kRunning);
  return base::Status::success();
}

base::Result<size_t> DeviceSource::read(std::span<float> out, BlockInfo* info) {
  Impl& s = *impl_;
  if (s.stopped.load()) {
    s.health.set_state(SourceState::kFinished);
    return size_t{0};
  }
  const size_t ch = s.config.channels;
  if (out.size() < ch) return make_error(ErrorCode::kInvalidArgument, "read buffer smaller than one frame");

  if (!s.stream) {  // lost: retry when the backoff has passed
    if (base::mono_now() < s.next_retry) {
      s.sleep_ms(std::min<int>(kReadWaitMs * 5, s.retry_ms));
      return size_t{0};
    }
    if (auto st = s.open(); !st) {
      s.mark_lost(st.error().message);
      return size_t{0};
    }
    ++s.reconnects;
    s.retry_ms = 0;
    s.health.set_state(SourceState::kRunning);
    s.health.report_error("device '" + s.device_name + "' is back after a loss");
    // Frames keep true time across the gap.
    const double elapsed_s = std::chrono::duration<double>(base::mono_now() - s.start_mono).count();
    s.next_frame = std::max<int64_t>(s.next_frame, static_cast<int64_t>(elapsed_s * s.config.sample_rate_hz));
  }

  size_t got = s.ring.pop(std::span<float>(out.data(), out.size() - out.size() % ch));
  if (got == 0) {
    s.sleep_ms(kReadWaitMs);
    got = s.ring.pop(std::span<float>(out.data(), out.size() - out.size() % ch));
  }
  const uint64_t cb = s.callbacks.load(std::memory_order_relaxed);
  const auto now = base::mono_now();
  if (cb != s.last_callbacks) {
    s.last_callbacks = cb;
    s.last_progress = now;
  }
  const bool stalled = now - s.last_progress > std::chrono::milliseconds(kStallTimeoutMs);
  if (got == 0 && (s.stream_failed.load() || stalled || Pa_IsStreamActive(s.stream) != 1)) {
    s.mark_lost("device '" + s.device_name + "' stopped delivering samples" +
                (stalled ? " (no data for " + std::to_string(kStallTimeoutMs) + " ms)" : ""));
    return size_t{0};
  }
  const size_t frames = got / ch;  // the callback pushes whole frames only
  if (frames == 0) return size_t{0};
  info->first_frame = s.next_frame;
  info->frames = frames;
  info->t_first = base::wall_after_samples(s.start_time, s.next_frame, s.config.sample_rate_hz);
  info->discontinuity = s.next_discontinuity;
  s.next_discontinuity = false;
  s.next_frame += static_cast<int64_t>(frames);
  s.health.add_frames(frames);
  return frames;
}

void DeviceSource::stop() noexcept {
  impl_->stopped.store(true);
  impl_->sleep_cv.notify_all();
}

SourceHealth DeviceSource::health() const { return impl_->health.snapshot(); }

std::string DeviceSource::describe() const {
  const auto& c = impl_->config;
  return "audio device '" + (impl_->device_name.empty() ? c.device : impl_->device_name) + "', " +
         std::to_string(c.channels) + " ch at " + std::to_string(static_cast<int>(c.sample_rate_hz)) +
         " Hz, buffer " + std::to_string(c.frames_per_buffer);
}

uint64_t DeviceSource::num_reconnects() const noexcept { return impl_->reconnects; }

}  // namespace tonewarden::source
