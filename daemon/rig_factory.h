// Builds a running rig from its configuration: the source, the pipeline and the monitor.
// This is the one place that maps config's plain structs onto the modules' own types.
#pragma once

#include <memory>
#include <string>

#include "tonewarden/base/result.h"
#include "tonewarden/config/config.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/pipeline/evidence_recorder.h"
#include "tonewarden/pipeline/rig_monitor.h"
#include "tonewarden/pipeline/rig_pipeline.h"
#include "tonewarden/source/source.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::daemon {

struct Rig {
  std::string name;
  // Declared first so it goes last: the monitor feeds it until the pipeline stops.
  std::unique_ptr<pipeline::EvidenceRecorder> evidence;  // null when [evidence] is off
  std::unique_ptr<pipeline::RigPipeline> pipeline;
  std::unique_ptr<pipeline::RigMonitor> monitor;
};

struct RigBuildOptions {
  std::string data_dir;
  dsp::FftPlanning planning = dsp::FftPlanning::kAuto;
  store::StoreWriter* store = nullptr;         // may be null
  pipeline::RigEventSink* sink = nullptr;      // may be null
  double snapshot_interval_s = 600;
  config::EvidenceConfig evidence{.enabled = false};  // raw clips around activations
};

base::Result<std::unique_ptr<source::Source>> make_source(const config::RigConfig& rig,
                                                          const std::string& data_dir);
base::Result<std::unique_ptr<source::Source>> make_device_source(const config::RigConfig& rig);
base::Result<Rig> build_rig(const config::RigConfig& rig, const RigBuildOptions& options);
// The monitor alone (targets, rules, speed) for a rig whose pipeline already runs: used by a
// reload, which swaps it into the running pipeline.
// `evidence` (may be null) is the rig's running recorder, kept across reloads.
base::Result<std::unique_ptr<pipeline::RigMonitor>> build_monitor(
    const config::RigConfig& rig, const pipeline::RigPipeline& pipeline,
    const RigBuildOptions& options, pipeline::EvidenceRecorder* evidence);

// Engineering-unit names we convert for velocity: g and m/s².
bool is_acceleration_unit(const std::string& unit);

}  // namespace tonewarden::daemon
