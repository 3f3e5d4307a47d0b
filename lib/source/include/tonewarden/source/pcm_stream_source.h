// PcmStreamSource: raw interleaved PCM (s16le, s32le or f32le) from standard input, a file
// or a named pipe, at a declared rate and channel count. Integer PCM is scaled to [-1, 1)
// (full scale = 1.0); float samples pass unchanged, except non-finite ones, which become 0
// and are counted. A stream that ends inside a frame loses only those trailing bytes; they
// are counted and reported.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"
#include "tonewarden/source/pacer.h"
#include "tonewarden/source/source.h"
#include "tonewarden/source/source_health.h"

namespace tonewarden::source {

enum class PcmFormat { kS16Le, kS32Le, kF32Le };
const char* to_string(PcmFormat format) noexcept;
// "s16le", "s32le", "f32le"; nullopt otherwise.
std::optional<PcmFormat> parse_pcm_format(std::string_view text) noexcept;
size_t bytes_per_sample(PcmFormat format) noexcept;

struct PcmStreamConfig {
  std::string path = "-";  // "-" = standard input; else a file or a named pipe
  PcmFormat format = PcmFormat::kF32Le;
  double sample_rate_hz = 48000.0;  // (0, 1e6]
  size_t channels = 1;              // [1, 64]
  Pace pace = Pace::kFast;
  base::WallTimeMs start_time{};  // unix_ms 0: the wall clock at start()
  int idle_timeout_ms = 200;      // [1, 60000]: read() returns 0 (state kWaiting) after this
                                  // long with no data
};

// Threads: as Source. start() opens the path; stop() wakes a read() blocked on the stream.
class PcmStreamSource final : public Source {
 public:
  static base::Result<std::unique_ptr<PcmStreamSource>> create(const PcmStreamConfig& config);
  ~PcmStreamSource() override;

  SourceCapabilities capabilities() const override;
  // kNotFound / kIo (with errno text) when the path cannot be opened.
  base::Status start() override;
  // Blocks until at least one whole frame is there (or the idle timeout, end of stream or
  // stop()), then returns every whole frame available without further waiting, up to the
  // buffer size. Allocation-free. A read failure is returned as kIo and sets kLost.
  base::Result<size_t> read(std::span<float> out_interleaved, BlockInfo* info) override;
  void stop() noexcept override;
  SourceHealth health() const override { return health_.snapshot(); }
  std::string describe() const override;

  // Streams that ended inside a frame (0 or 1), and the bytes dropped there.
  uint64_t num_partial_frames() const noexcept { return partial_frames_; }
  uint64_t num_dropped_bytes() const noexcept { return dropped_bytes_; }
  // Float samples that were NaN or infinite (delivered as 0).
  uint64_t num_nonfinite() const noexcept { return nonfinite_; }
  // Times read() slept to hold real time (always 0 when fast).
  uint64_t num_pacing_sleeps() const noexcept { return pacer_.num_sleeps(); }

 private:
  explicit PcmStreamSource(const PcmStreamConfig& config);
  enum class Wait { kData, kIdle, kStopped, kFailed };
  Wait wait_readable(int timeout_ms);
  size_t convert(float* out, size_t frames) noexcept;
  void finish_at_eof();
  std::string name() const;

  PcmStreamConfig config_;
  size_t frame_bytes_;
  Pacer pacer_;
  HealthTracker health_;
  int fd_ = -1;
  bool owns_fd_ = false;
  int stop_fd_ = -1;  // eventfd that stop() signals
  bool started_ = false;
  bool eof_ = false;
  base::WallTimeMs start_wall_{};
  std::vector<unsigned char> buf_;  // raw bytes; [head_, tail_) not yet converted
  size_t head_ = 0;
  size_t tail_ = 0;
  int64_t frame_ = 0;
  uint64_t partial_frames_ = 0;
  uint64_t dropped_bytes_ = 0;
  uint64_t nonfinite_ = 0;
};

}  // namespace tonewarden::source
