// Source: where samples come from. Every source (file, device, PCM stream, synthetic rig)
// yields blocks of interleaved float samples with a running frame index and a wall-clock
// timestamp computed from that index, so a run that is fast or paused stays consistent.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <string>
#include <string_view>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"

namespace tonewarden::source {

// What a source is doing now (shown in status).
enum class SourceState {
  kRunning,   // delivering samples
  kWaiting,   // alive but nothing to deliver yet (idle pipe, empty watched folder)
  kLost,      // the device or stream failed; the owner may retry
  kFinished,  // end of data, or stop() was called; read() returns 0 from now on
};
const char* to_string(SourceState state) noexcept;

// Describes one block returned by read().
struct BlockInfo {
  int64_t first_frame = 0;   // frames since start() of the block's first frame
  size_t frames = 0;         // frames in the block (== read()'s value)
  base::WallTimeMs t_first;  // wall time of the first frame: start time + first_frame / rate
  // True on the first block after a break in the signal (a new file, a loop wrap). Filters
  // and framers should restart there; the frame index and timestamps keep counting.
  bool discontinuity = false;
};

struct SourceCapabilities {
  double sample_rate_hz = 0.0;  // > 0
  size_t channels = 0;          // >= 1; samples are interleaved frame by frame
  bool is_live = false;         // samples arrive on their own clock (a device)
  bool paced = false;           // read() holds blocks back to real time
  bool can_loop = false;        // a finite source that may be configured to loop
};

// Health counters, read by status while the capture thread runs.
struct SourceHealth {
  SourceState state = SourceState::kWaiting;
  uint64_t frames_delivered = 0;
  uint64_t overflows = 0;  // samples dropped because the consumer was too slow
  uint64_t underruns = 0;  // gaps: data wanted but not there
  uint64_t errors = 0;     // bad input, skipped files, read failures
  std::string last_error;  // one line; empty if none yet
};

// Threads: start(), read() and describe() belong to one capture thread. stop() and health()
// may be called from any thread; stop() makes a blocked read() return 0 promptly.
class Source {
 public:
  virtual ~Source() = default;

  virtual SourceCapabilities capabilities() const = 0;
  // Opens the input, fixes the start time and anchors pacing. Call once, before read().
  virtual base::Status start() = 0;
  // Fills whole frames into `out_interleaved` (its size is rounded down to whole frames;
  // it must hold at least one frame). Returns the number of frames written: 0 means no
  // data right now, and health().state tells whether the source is waiting or finished.
  // An Error means the call itself was wrong (not started, buffer too small) or the
  // source failed for good; recoverable faults are counted in health() instead.
  virtual base::Result<size_t> read(std::span<float> out_interleaved, BlockInfo* info) = 0;
  // Thread-safe; idempotent. After it, read() returns 0 with state kFinished.
  virtual void stop() noexcept = 0;
  virtual SourceHealth health() const = 0;
  // One line for the startup log.
  virtual std::string describe() const = 0;
};

}  // namespace tonewarden::source
