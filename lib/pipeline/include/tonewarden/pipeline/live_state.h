// LiveState: what the rest of the daemon (HTTP, status, metrics) may read about a running
// rig. The analysis thread fills a snapshot and publishes it atomically (SnapshotPool);
// readers never block analysis and never see a half-written snapshot.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "tonewarden/base/time.h"
#include "tonewarden/dsp/levels.h"
#include "tonewarden/dsp/peaks.h"

namespace tonewarden::pipeline {

struct ChannelLive {
  std::string name;
  std::string unit;
  double sample_rate_hz = 0;
  size_t block = 0;
  size_t fft_length = 0;
  double bin_hz = 0;
  double resolution_hz = 0;           // ENBW·fs/block
  double enbw_hz = 0;
  std::string window;                 // canonical window name
  std::vector<float> power;           // averaged one-sided power spectrum, unit²
  double envelope_bin_hz = 0;
  std::vector<float> envelope_power;  // empty without an envelope band
  std::vector<dsp::Peak> peaks;       // strongest first; size = peaks found
  dsp::TimeStats stats;               // of the latest frame
  base::WallTimeMs t;                 // wall time of the period's end
  uint64_t periods = 0;
  uint64_t frames = 0;
  uint64_t clipped_samples = 0;       // total since start
};

struct ReadingLive {
  std::string name;   // "<channel>.<metric>" or "<channel>.<target>.<metric>", or "speed_rpm"
  std::string unit;
  double value = 0;
  bool valid = false;
  base::WallTimeMs t;
};

struct AlarmLive {
  std::string rule;
  std::string reading;
  std::string channel;
  std::string state;      // ISA-18.2: normal, unacknowledged, acknowledged, ...; or shelved
  std::string severity;   // none, warning, critical
  bool suppressed = false;
  bool learning = false;
  double value = 0;       // NaN when the reading is invalid
  double warning_threshold = 0;   // NaN when unset
  double critical_threshold = 0;
  base::WallTimeMs since;
  base::WallTimeMs shelved_until;
  std::string ack_user;
  std::string ack_comment;
};

struct SourceLive {
  std::string description;
  std::string state;        // running, waiting, lost, finished
  uint64_t frames_delivered = 0;
  uint64_t ring_overflows = 0;  // blocks the analysis could not take in time
  uint64_t source_overflows = 0;
  uint64_t underruns = 0;
  uint64_t errors = 0;
  std::string last_error;
};

struct RigLive {
  std::string rig;
  base::WallTimeMs t;                // last publication
  std::vector<ChannelLive> channels;
  std::vector<ReadingLive> readings;
  std::vector<AlarmLive> alarms;
  double speed_rpm = 0;              // valid only if speed_valid
  bool speed_valid = false;
  SourceLive source;
  uint64_t frames = 0;               // analysed frames over all channels
  uint64_t publications = 0;
};

}  // namespace tonewarden::pipeline
