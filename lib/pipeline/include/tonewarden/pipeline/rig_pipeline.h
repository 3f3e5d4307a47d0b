// RigPipeline: runs one rig. DESIGN: two threads per rig.
//  - The capture thread reads blocks from the Source and pushes the interleaved samples,
//    plus a small marker per block, into lock-free SPSC rings. For a live device it never
//    waits on analysis: a block that does not fit is dropped and counted, and the next block
//    that fits is marked as a discontinuity, so no gap goes unnoticed (overflow policy:
//    reject-newest). Files and the synthetic rig wait for room instead and lose nothing.
//  - The analysis thread pops markers and samples, converts volts to engineering units,
//    feeds each channel's ChannelChain, hands every completed period to the observers
//    (tracking, alarms, storage) and publishes LiveState. It allocates nothing per frame.
// stop() stops capture first, lets analysis drain what was captured, then joins.
#pragma once

#include <cstdint>
#include <functional>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"
#include "tonewarden/pipeline/channel_chain.h"
#include "tonewarden/pipeline/live_state.h"
#include "tonewarden/source/source.h"

namespace tonewarden::pipeline {

struct ChannelSpec {
  std::string name;
  size_t source_index = 0;             // channel index in the source's interleaved frames
  double sensitivity_v_per_unit = 1.0; // volts per engineering unit (> 0)
  std::string unit = "V";
  double full_scale_v = 1.0;           // clipping level, volts
  bool is_tach = false;                // tach channels are not spectrum-analysed
};

struct RigPipelineConfig {
  std::string rig;
  std::vector<ChannelSpec> channels;
  ChannelChainConfig chain;            // shared by every vibration channel
  double ring_seconds = 4.0;           // capture-to-analysis buffer
  size_t read_frames = 2048;           // frames per source read
};

// Called on the analysis thread. Implementations must not block for long.
class RigObserver {
 public:
  virtual ~RigObserver() = default;
  // Raw samples of one source block, in volts, one span per ChannelSpec (tach included).
  virtual void on_block(std::span<const std::span<const float>> volts_per_channel,
                        int64_t first_frame, base::WallTimeMs t_first, bool discontinuity) = 0;
  // A completed averaging period of vibration channel `channel` (index into ChannelSpecs).
  // `live` is the snapshot being prepared: observers add readings to it.
  virtual void on_period(size_t channel, const ChannelPeriod& period, base::WallTimeMs t_end,
                         RigLive& live) = 0;
  // Analysis thread, when this observer replaces `previous` (swap_observer), before its first
  // block: carry over whatever state should survive the swap.
  virtual void take_over_from(RigObserver& /*previous*/) {}
};

class RigPipeline {
 public:
  static base::Result<std::unique_ptr<RigPipeline>> create(
      const RigPipelineConfig& config, std::unique_ptr<source::Source> source);
  ~RigPipeline();

  // Observers must be added before start(); they outlive the pipeline.
  void add_observer(RigObserver* observer);
  // Replaces `old_observer` by `fresh` between two blocks on the analysis thread, and waits
  // until it has happened (or until the analysis thread has ended). After it returns, the
  // pipeline no longer calls `old_observer`. Any thread but the analysis thread.
  void swap_observer(RigObserver* old_observer, RigObserver* fresh);
  base::Status start();
  // Stops capture, drains the rings through analysis and joins both threads. Idempotent.
  void stop();
  // True once the source has finished and analysis has drained everything.
  bool finished() const noexcept;

  std::shared_ptr<const RigLive> live() const noexcept;
  // The analysis chain of channel `channel` (index into ChannelSpecs); null for tach channels.
  // Its settings (fft length, window) are fixed; do not call its mutating methods.
  const ChannelChain* chain(size_t channel) const noexcept;
  const RigPipelineConfig& config() const noexcept;
  source::SourceCapabilities capabilities() const;
  uint64_t num_frames() const noexcept;
  uint64_t num_ring_overflows() const noexcept;
  uint64_t num_periods() const noexcept;
  std::string describe() const;
  // The time to the first analysed frame after start(), in ms, or -1 before it.
  double first_frame_latency_ms() const noexcept;

 private:
  struct Impl;
  explicit RigPipeline(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::pipeline
