// RigMonitor: the RigObserver that turns a rig's periods into readings, alarms and history.
// On the analysis thread it runs speed estimation, each channel's tracker, signal-quality
// checks and the alarm engine; it queues readings, events and snapshots to the store and
// hands events to a sink (notifiers, the live event stream). Allocation-free per period,
// except for spectrum snapshots (periodic and around alarms), which copy a spectrum.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "tonewarden/alarm/alarm_engine.h"
#include "tonewarden/alarm/signal_quality.h"
#include "tonewarden/base/result.h"
#include "tonewarden/pipeline/evidence_recorder.h"
#include "tonewarden/pipeline/rig_pipeline.h"
#include "tonewarden/store/store_writer.h"
#include "tonewarden/track/channel_tracker.h"
#include "tonewarden/track/speed.h"

namespace tonewarden::pipeline {

enum class SpeedMode { kFixed, kTach, kSpectrum };

struct RigMonitorConfig {
  std::string rig;
  std::vector<ChannelSpec> channels;        // as given to the RigPipeline
  SpeedMode speed_mode = SpeedMode::kFixed;
  double fixed_rpm = 0;
  size_t tach_channel = 0;                  // kTach: index into channels
  track::TachConfig tach;
  track::SpectralSpeedConfig spectral;      // kSpectrum: read on the first vibration channel
  double min_rpm = 0, max_rpm = 0;          // speed-range alarms when max_rpm > min_rpm > 0
  // One tracker per vibration channel, in channel order (ChannelSpec.is_tach == false).
  std::vector<track::ChannelTrackConfig> trackers;
  std::vector<alarm::RuleConfig> rules;     // the user's rules; quality rules are added
  double flat_rms_floor_v = 0;              // dead-sensor level, volts RMS
  double snapshot_interval_s = 600;         // periodic spectrum snapshots; 0: only alarms
};

// Receives what the monitor produces. Called on the analysis thread: must not block.
class RigEventSink {
 public:
  virtual ~RigEventSink() = default;
  // `evidence`: the raw clip written for this activation ("evidence/RIG/NAME.flac", relative
  // to the data dir), or empty.
  virtual void on_alarm_event(const std::string& rig, const alarm::AlarmEvent& event,
                              std::string_view evidence) = 0;
  virtual void on_readings(const std::string& rig, const track::ReadingSet& readings) = 0;
};

class RigMonitor : public RigObserver {
 public:
  // `store`, `sink` and `evidence` may be null; all outlive the monitor. `evidence` gets
  // every block and writes a raw clip when an alarm becomes active; the event names it.
  static base::Result<std::unique_ptr<RigMonitor>> create(const RigMonitorConfig& config,
                                                          const RigPipeline& pipeline,
                                                          store::StoreWriter* store,
                                                          RigEventSink* sink,
                                                          EvidenceRecorder* evidence = nullptr);
  ~RigMonitor() override;

  void on_block(std::span<const std::span<const float>> volts_per_channel, int64_t first_frame,
                base::WallTimeMs t_first, bool discontinuity) override;
  void on_period(size_t channel, const ChannelPeriod& period, base::WallTimeMs t_end,
                 RigLive& live) override;
  // On a reload: alarms of unchanged name and reading keep their state and pending commands
  // (see AlarmEngine::carry_over), so an acknowledged alarm does not raise again; the speed
  // estimate and snapshot timing continue too.
  void take_over_from(RigObserver& previous) override;

  // Thread-safe operator commands (queued for the analysis thread).
  alarm::AlarmEngine& alarms() noexcept;
  const RigMonitorConfig& config() const noexcept;
  uint64_t num_store_rejects() const noexcept;

 private:
  struct Impl;
  explicit RigMonitor(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::pipeline
