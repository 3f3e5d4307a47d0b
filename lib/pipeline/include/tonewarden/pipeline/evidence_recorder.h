// EvidenceRecorder: keeps the last few seconds of a rig's raw signal and, when an alarm
// becomes active, writes the samples from pre_s before to post_s after it as a FLAC clip
// (with a JSON sidecar naming channels, units and scaling) under DATA_DIR/evidence/RIG/.
//
// DESIGN: the analysis thread feeds on_block() (allocation-free: an interleaved pre-trigger
// ring) and calls on_activation(), which allocates one clip buffer and returns the clip's
// path at once, so the alarm event can reference it. A writer thread streams the clip to
// NAME.flac.part while the post-trigger samples arrive, then renames it to NAME.flac and
// writes NAME.json. One clip at a time per rig: activations while a clip runs share it; a
// new clip starts only min_interval_s after the previous one began.
//
// Samples are stored as 24-bit FLAC scaled by each channel's full_scale_v (file value 1.0 =
// full scale), so `tonewarden analyze CLIP --sensitivity S/FS --unit U` gives engineering
// units; the sidecar carries that command line.
#pragma once

#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"
#include "tonewarden/pipeline/rig_pipeline.h"

namespace tonewarden::pipeline {

struct EvidenceRecorderConfig {
  std::string data_dir;                 // clips go under DATA_DIR/evidence/RIG/
  std::string rig;
  double sample_rate_hz = 0;            // whole Hz (FLAC)
  std::vector<ChannelSpec> channels;    // 1..8, in the pipeline's order
  double pre_s = 10;                    // [0, 120]
  double post_s = 10;                   // [0, 120]; pre_s + post_s > 0
  double min_interval_s = 60;           // >= 0
  uint64_t max_total_bytes = uint64_t{2} << 30;  // cap over DATA_DIR/evidence, oldest go first
};

// Relative folder of every rig's clips inside the data dir.
inline constexpr std::string_view kEvidenceFolder = "evidence";

class EvidenceRecorder {
 public:
  static base::Result<std::unique_ptr<EvidenceRecorder>> create(const EvidenceRecorderConfig& config);
  ~EvidenceRecorder();  // finish(), then stops the writer thread

  // Analysis thread. Volts per channel, as the pipeline delivers them.
  void on_block(std::span<const std::span<const float>> volts_per_channel, int64_t first_frame,
                base::WallTimeMs t_first, bool discontinuity) noexcept;

  // Analysis thread: an alarm became active now. Returns the clip's path relative to data_dir
  // ("evidence/RIG/NAME.flac"), or "" when no clip covers it (rate limit, writer backlog).
  std::string on_activation(base::WallTimeMs t, std::string_view rule);

  // Not on the analysis thread while it runs: ends the clip in progress with the samples it
  // has and waits until every clip is on disk.
  void finish();

  uint64_t num_clips_written() const noexcept;
  uint64_t num_clips_skipped() const noexcept;   // activations that got no clip
  uint64_t num_write_failures() const noexcept;  // clips lost to I/O errors (logged)
  const EvidenceRecorderConfig& config() const noexcept;

 private:
  struct Impl;
  explicit EvidenceRecorder(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

// Resolves an evidence path from the alarm log against data_dir. Refuses anything that is not
// a plain "evidence/RIG/NAME.flac" (no "..", no absolute paths, no other folder).
base::Result<std::string> resolve_evidence_path(const std::string& data_dir,
                                                std::string_view relative_path);

}  // namespace tonewarden::pipeline
