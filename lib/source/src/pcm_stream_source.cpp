// PcmStreamSource: poll() on the stream and an eventfd (so stop() wakes a blocked read),
// a fixed byte buffer that carries partial frames between reads, and in-place conversion.
#include "tonewarden/source/pcm_stream_source.h"

#include <fcntl.h>
#include <poll.h>
#include <sys/eventfd.h>
#include <sys/stat.h>
#include <unistd.h>

#include <bit>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstring>

namespace tonewarden::source {
namespace {

static_assert(std::endian::native == std::endian::little,
              "PCM conversion assumes a little-endian host");

// Raw bytes read per system call at most; whole frames are converted out of it.
constexpr size_t kBufferBytes = 64 * 1024;
constexpr size_t kMaxChannels = 64;

}  // namespace

const char* to_string(PcmFormat format) noexcept {
  switch (format) {
    case PcmFormat::kS16Le: return "s16le";
    case PcmFormat::kS32Le: return "s32le";
    case PcmFormat::kF32Le: return "f32le";
  }
  return "f32le";
}

std::optional<PcmFormat> parse_pcm_format(std::string_view text) noexcept {
  if (text == "s16le") return PcmFormat::kS16Le;
  if (text == "s32le") return PcmFormat::kS32Le;
  if (text == "f32le") return PcmFormat::kF32Le;
  return std::nullopt;
}

size_t bytes_per_sample(PcmFormat format) noexcept {
  return format == PcmFormat::kS16Le ? 2 : 4;
}

base::Result<std::unique_ptr<PcmStreamSource>> PcmStreamSource::create(
    const PcmStreamConfig& config) {
  auto bad = [&](const std::string& what) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "pcm stream " + config.path + ": " + what);
  };
  if (config.path.empty()) return bad("empty path (use \"-\" for standard input)");
  if (!(config.sample_rate_hz > 0.0 && config.sample_rate_hz <= 1e6)) {
    return bad("sample_rate_hz " + std::to_string(config.sample_rate_hz) +
               " out of range (0, 1000000]");
  }
  if (config.channels < 1 || config.channels > kMaxChannels) {
    return bad("channels " + std::to_string(config.channels) + " out of range [1, 64]");
  }
  if (config.idle_timeout_ms < 1 || config.idle_timeout_ms > 60000) {
    return bad("idle_timeout_ms " + std::to_string(config.idle_timeout_ms) +
               " out of range [1, 60000]");
  }
  std::unique_ptr<PcmStreamSource> s(new PcmStreamSource(config));
  s->stop_fd_ = eventfd(0, EFD_CLOEXEC | EFD_NONBLOCK);
  if (s->stop_fd_ < 0) return base::errno_error(base::ErrorCode::kIo, "pcm stream: eventfd", errno);
  s->buf_.resize(kBufferBytes);
  return s;
}

PcmStreamSource::PcmStreamSource(const PcmStreamConfig& config)
    : config_(config),
      frame_bytes_(bytes_per_sample(config.format) * config.channels),
      pacer_(config.pace, config.sample_rate_hz) {}

PcmStreamSource::~PcmStreamSource() {
  if (owns_fd_ && fd_ >= 0) ::close(fd_);
  if (stop_fd_ >= 0) ::close(stop_fd_);
}

std::string PcmStreamSource::name() const {
  return config_.path == "-" ? "pcm stream stdin" : "pcm stream " + config_.path;
}

SourceCapabilities PcmStreamSource::capabilities() const {
  SourceCapabilities caps;
  caps.sample_rate_hz = config_.sample_rate_hz;
  caps.channels = config_.channels;
  caps.is_live = false;
  caps.paced = config_.pace == Pace::kRealTime;
  caps.can_loop = false;
  return caps;
}

base::Status PcmStreamSource::start() {
  if (started_) return base::make_error(base::ErrorCode::kInternal, name() + ": start() called twice");
  if (config_.path == "-") {
    fd_ = STDIN_FILENO;
    owns_fd_ = false;
  } else {
    // O_NONBLOCK so that opening a named pipe does not wait for its writer; reads are
    // preceded by poll() anyway.
    fd_ = ::open(config_.path.c_str(), O_RDONLY | O_CLOEXEC | O_NONBLOCK);
    if (fd_ < 0) {
      const int err = errno;
      return base::errno_error(err == ENOENT ? base::ErrorCode::kNotFound : base::ErrorCode::kIo,
                               name() + ": cannot open", err);
    }
    owns_fd_ = true;
    struct stat st {};
    if (::fstat(fd_, &st) == 0 && S_ISDIR(st.st_mode)) {
      return base::make_error(base::ErrorCode::kInvalidArgument, name() + ": is a directory");
    }
  }
  started_ = true;
  start_wall_ = config_.start_time.unix_ms != 0 ? config_.start_time : base::wall_now();
  pacer_.start();
  health_.set_state(SourceState::kWaiting);
  return base::Status::success();
}

void PcmStreamSource::stop() noexcept {
  pacer_.stop();
  health_.set_state(SourceState::kFinished);
  const uint64_t one = 1;
  [[maybe_unused]] const ssize_t n = ::write(stop_fd_, &one, sizeof one);
}

PcmStreamSource::Wait PcmStreamSource::wait_readable(int timeout_ms) {
  struct pollfd fds[2] = {{fd_, POLLIN, 0}, {stop_fd_, POLLIN, 0}};
  for (;;) {
    const int r = ::poll(fds, 2, timeout_ms);
    if (r < 0) {
      if (errno == EINTR) continue;
      return Wait::kFailed;
    }
    if (fds[1].revents != 0) return Wait::kStopped;
    if (r == 0) return Wait::kIdle;
    // POLLHUP: the writer went away; read() then reports the end of the stream.
    return Wait::kData;
  }
}

size_t PcmStreamSource::convert(float* out, size_t frames) noexcept {
  const size_t samples = frames * config_.channels;
  const unsigned char* p = buf_.data() + head_;
  switch (config_.format) {
    case PcmFormat::kS16Le:
      for (size_t i = 0; i < samples; ++i) {
        int16_t v;
        std::memcpy(&v, p + 2 * i, 2);
        out[i] = static_cast<float>(v) * (1.0f / 32768.0f);
      }
      break;
    case PcmFormat::kS32Le:
      for (size_t i = 0; i < samples; ++i) {
        int32_t v;
        std::memcpy(&v, p + 4 * i, 4);
        out[i] = static_cast<float>(static_cast<double>(v) * (1.0 / 2147483648.0));
      }
      break;
    case PcmFormat::kF32Le:
      for (size_t i = 0; i < samples; ++i) {
        float v;
        std::memcpy(&v, p + 4 * i, 4);
        // A NaN or infinity would poison every spectrum it touches: zero it and count it.
        if (!std::isfinite(v)) {
          v = 0.0f;
          ++nonfinite_;
        }
        out[i] = v;
      }
      break;
  }
  head_ += frames * frame_bytes_;
  return frames;
}

void PcmStreamSource::finish_at_eof() {
  eof_ = true;
  const size_t leftover = tail_ - head_;
  if (leftover > 0) {
    ++partial_frames_;
    dropped_bytes_ += leftover;
    health_.report_error(name() + ": stream ended inside a frame: " + std::to_string(leftover) +
                         " trailing bytes of a " + std::to_string(frame_bytes_) +
                         "-byte frame dropped after frame " + std::to_string(frame_));
    head_ = tail_;
  }
}

base::Result<size_t> PcmStreamSource::read(std::span<float> out, BlockInfo* info) {
  if (!started_) return base::make_error(base::ErrorCode::kInternal, name() + ": read() before start()");
  const size_t nch = config_.channels;
  if (out.size() < nch) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            name() + ": read buffer of " + std::to_string(out.size()) +
                                " samples is smaller than one frame of " + std::to_string(nch));
  }
  if (pacer_.stopped()) {
    health_.set_state(SourceState::kFinished);
    return size_t{0};
  }
  const size_t want = out.size() / nch;
  const uint64_t nonfinite_before = nonfinite_;
  auto buffered_frames = [&] { return (tail_ - head_) / frame_bytes_; };
  size_t got = convert(out.data(), std::min(want, buffered_frames()));
  bool stopped = false;
  while (got < want && !eof_) {
    const Wait w = wait_readable(got == 0 ? config_.idle_timeout_ms : 0);
    if (w == Wait::kStopped) { stopped = true; break; }
    if (w == Wait::kIdle) break;
    if (w == Wait::kFailed) {
      const int err = errno;
      health_.set_state(SourceState::kLost);
      base::Error e = base::errno_error(base::ErrorCode::kIo, name() + ": poll", err);
      health_.report_error(e.message);
      return e;
    }
    if (head_ > 0) {  // keep the partial frame, make room behind it
      std::memmove(buf_.data(), buf_.data() + head_, tail_ - head_);
      tail_ -= head_;
      head_ = 0;
    }
    const ssize_t n = ::read(fd_, buf_.data() + tail_, buf_.size() - tail_);
    if (n < 0) {
      if (errno == EINTR || errno == EAGAIN) continue;
      const int err = errno;
      health_.set_state(SourceState::kLost);
      base::Error e = base::errno_error(base::ErrorCode::kIo, name() + ": read", err);
      health_.report_error(e.message);
      return e;
    }
    if (n == 0) {
      finish_at_eof();
      break;
    }
    tail_ += static_cast<size_t>(n);
    got += convert(out.data() + got * nch, std::min(want - got, buffered_frames()));
  }
  if (nonfinite_ > nonfinite_before) {
    health_.report_error(name() + ": " + std::to_string(nonfinite_ - nonfinite_before) +
                         " non-finite float samples replaced by 0 near frame " +
                         std::to_string(frame_));
  }
  if (stopped || (got > 0 && !pacer_.wait_until_due(frame_ + static_cast<int64_t>(got)))) {
    health_.set_state(SourceState::kFinished);
    return size_t{0};
  }
  if (got == 0) {
    health_.set_state(eof_ ? SourceState::kFinished : SourceState::kWaiting);
    return size_t{0};
  }
  if (info != nullptr) {
    info->first_frame = frame_;
    info->frames = got;
    info->t_first = base::wall_after_samples(start_wall_, frame_, config_.sample_rate_hz);
    info->discontinuity = false;
  }
  frame_ += static_cast<int64_t>(got);
  health_.add_frames(got);
  health_.set_state(SourceState::kRunning);
  return got;
}

std::string PcmStreamSource::describe() const {
  char buf[256];
  std::snprintf(buf, sizeof buf, "%s: %s, %zu ch at %g Hz, %s", name().c_str(),
                to_string(config_.format), config_.channels, config_.sample_rate_hz,
                to_string(config_.pace));
  return buf;
}

}  // namespace tonewarden::source
