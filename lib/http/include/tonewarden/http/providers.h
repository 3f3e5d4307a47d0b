// Provider interfaces through which the HTTP server reads the daemon's state, and the plain
// data types they return. http depends on nothing but base: the daemon adapts pipeline and
// store to these interfaces, and tests plug in fakes.
//
// Threads: every method may be called concurrently from several HTTP worker threads, so
// implementations must be thread-safe. They run off the analysis threads and may allocate.
// Errors: return base::Error with kNotFound for an unknown id, kInvalidArgument for a request
// that the current state refuses (answered 409), kUnavailable for a transient fault (503).
#pragma once

#include <cstdint>
#include <functional>
#include <limits>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"

namespace tonewarden::http {

using base::Result;
using base::Status;
using base::WallTimeMs;

inline constexpr double kNoValue = std::numeric_limits<double>::quiet_NaN();  // JSON null

// ---------- status ----------
struct SourceStatus {
  std::string name;         // source id from config
  std::string state;        // "running", "starting", "retrying", "stopped", "failed"
  std::string detail;       // one line, empty when fine
  double sample_rate_hz = 0;
  uint64_t frames = 0;      // frames analysed since start
  uint64_t overflows = 0;   // capture ring overflows since start
  uint64_t drops = 0;       // samples lost (gaps) since start
  WallTimeMs last_frame{};  // unix_ms 0: none yet
  // Raw evidence clips of this rig since start (all 0 when clips are off).
  uint64_t evidence_clips = 0;     // written
  uint64_t evidence_skipped = 0;   // activations that got no clip (interval, busy writer)
  uint64_t evidence_failures = 0;  // clips lost to write errors (disk full, ...)
};

struct StorageStatus {
  std::string state = "ok";  // "ok", "degraded", "failed", "disabled"
  std::string detail;
  uint64_t rows_written = 0;
  uint64_t write_errors = 0;
};

struct StatusInfo {
  std::string version;
  double uptime_s = 0;
  std::vector<SourceStatus> sources;
  StorageStatus storage;
  bool healthy = true;         // false: /healthz answers 503 with unhealthy_reason
  std::string unhealthy_reason;
};

// ---------- configuration view ----------
struct RigInfo {
  std::string id;
  std::string description;
  double nominal_speed_rpm = kNoValue;
};
struct ChannelInfo {
  std::string id;  // unique across rigs
  std::string rig;
  std::string unit;  // engineering unit of the spectrum: "g", "m/s^2", "mm/s", "Pa"
  double sensitivity = kNoValue;  // e.g. mV per unit
  double sample_rate_hz = 0;
};
struct TargetInfo {
  std::string id;
  std::string rig;
  std::string channel;
  std::string kind;  // "fixed", "order", "bearing", "mesh"...
  std::string description;
};
struct RuleInfo {
  std::string id;
  std::string rig;
  std::string series;  // the reading series it watches
  std::string unit;
  double warning = kNoValue;
  double critical = kNoValue;
  double hysteresis = kNoValue;
  double on_delay_s = 0;
  double off_delay_s = 0;
};
struct ConfigView {
  std::vector<RigInfo> rigs;
  std::vector<ChannelInfo> channels;
  std::vector<TargetInfo> targets;
  std::vector<RuleInfo> rules;
};

// ---------- live ----------
struct SpectrumPeak {
  double frequency_hz = 0;
  double amplitude = 0;
};
struct TargetMarker {
  std::string target;
  double frequency_hz = 0;
  double amplitude = kNoValue;
};
struct ThresholdLine {
  std::string rule;
  std::string severity;  // "warning" or "critical"
  double level = 0;      // in the spectrum's unit
  double f_lo_hz = 0;    // frequency span the line applies to
  double f_hi_hz = 0;
};
struct LiveSpectrum {
  std::string channel;
  WallTimeMs t{};
  std::string unit;
  std::string scaling;    // e.g. "amplitude_rms"
  double bin_hz = 0;      // spacing of `magnitudes`; bin k is at k*bin_hz
  double resolution_hz = 0;  // ENBW*fs/block: the true resolution
  std::vector<float> magnitudes;
  std::vector<SpectrumPeak> peaks;
  std::vector<TargetMarker> markers;
  std::vector<ThresholdLine> thresholds;
};

struct Reading {
  std::string series;  // unique name, e.g. "bay4.motor_de.bpfo.amplitude"
  std::string rig;
  std::string channel;
  std::string target;  // empty for channel-wide metrics (overall level...)
  std::string metric;  // "amplitude", "velocity_rms", "speed"...
  std::string unit;
  double value = kNoValue;
  WallTimeMs t{};
};

// Recent spectra of one channel for a spectrogram: each row max-pooled to a fixed set of
// frequency buckets (tonal peaks keep their height) and expressed in dB.
struct SpectrogramRow {
  WallTimeMs t{};          // wall time of the spectrum's averaging period end
  std::vector<float> db;   // one value per bucket; dB re 1 unit RMS (10*log10 of unit^2)
};
struct Spectrogram {
  std::string channel;
  std::string unit;        // engineering unit the dB values refer to ("dB re 1 g RMS")
  double bin_hz = 0;       // bin spacing of the full spectrum; bin k is at k*bin_hz
  size_t num_bins = 0;     // bins of the full spectrum
  // Lowest frequency of each bucket, ascending: bucket i holds bins from frequency_hz[i]
  // up to, not including, frequency_hz[i + 1] (the last one up to (num_bins-1)*bin_hz).
  std::vector<double> frequency_hz;
  size_t capacity = 0;     // rows the history keeps at most
  std::vector<SpectrogramRow> rows;  // oldest first, times strictly increasing
};

class LiveProvider {
 public:
  virtual ~LiveProvider() = default;
  // Latest spectrum of a configured channel; kNotFound if none yet.
  virtual Result<LiveSpectrum> spectrum(const std::string& channel) = 0;
  // The newest `max_rows` (>= 1) rows of the channel's spectrogram history; kNotFound while
  // the channel has none (no spectrum yet, or its rig just restarted).
  virtual Result<Spectrogram> spectrogram(const std::string& channel, size_t max_rows) = 0;
  virtual std::vector<Reading> readings() = 0;
};

// ---------- trends ----------
struct TrendPoint {
  WallTimeMs t{};
  double mean = kNoValue;
  double min = kNoValue;
  double max = kNoValue;
  uint64_t count = 0;
};
struct TrendSeries {
  std::string series;
  std::string unit;
  std::string resolution;  // "raw", "minute", "hour"
  std::vector<TrendPoint> points;
};
struct TrendQuery {
  std::vector<std::string> series;  // 1..kMaxTrendSeries known names
  WallTimeMs from{}, to{};          // from <= to, inclusive
  size_t max_points = 0;            // per series; the provider reduces to at most this many
};

class TrendProvider {
 public:
  virtual ~TrendProvider() = default;
  virtual std::vector<std::string> series_names() = 0;
  virtual Result<std::vector<TrendSeries>> trends(const TrendQuery& query) = 0;
};

// ---------- alarms ----------
struct AlarmState {
  std::string id;        // alarm id (one per rule and channel)
  std::string rule;
  std::string rig;
  std::string series;
  std::string severity;  // "none", "warning", "critical"
  std::string state;     // "normal", "unacknowledged", "acknowledged",
                         // "returned_unacknowledged", "shelved"
  double value = kNoValue;
  WallTimeMs since{};
  WallTimeMs shelved_until{};  // unix_ms 0: not shelved
  std::string acknowledged_by;
  std::string message;
};
struct AlarmEvent {
  int64_t id = 0;
  WallTimeMs t{};
  std::string alarm;
  std::string rule;
  std::string severity;
  std::string state;  // the state entered
  double value = kNoValue;
  std::string user;   // who acknowledged or shelved; empty for automatic changes
  std::string comment;
  std::string message;
  std::string evidence;  // URL of the raw clip written around this activation; empty: none
};
struct AlarmEventQuery {
  WallTimeMs from{}, to{};
  std::string state;  // empty: any
  std::string rule;   // empty: any
  size_t limit = 0;
};

class AlarmProvider {
 public:
  virtual ~AlarmProvider() = default;
  virtual std::vector<AlarmState> states() = 0;
  virtual Result<std::vector<AlarmEvent>> events(const AlarmEventQuery& query) = 0;
  virtual Status acknowledge(const std::string& alarm, const std::string& user,
                             const std::string& comment) = 0;
  virtual Status shelve(const std::string& alarm, const std::string& user, int64_t duration_s,
                        const std::string& comment) = 0;
};

// ---------- snapshots and annotations ----------
struct SnapshotInfo {
  int64_t id = 0;
  WallTimeMs t{};
  std::string rig;
  std::string channel;
  std::string reason;  // "alarm", "periodic", "manual"
  std::string alarm;   // alarm id when reason is "alarm"
  std::string unit;
  std::string window;  // e.g. "hann"
  double bin_hz = 0;
  uint64_t fft_length = 0;
  uint64_t averages = 0;
};
struct Snapshot {
  SnapshotInfo info;
  std::vector<float> magnitudes;
};
struct SnapshotQuery {
  WallTimeMs from{}, to{};
  std::string channel;  // empty: any
  size_t limit = 0;
};

class SnapshotProvider {
 public:
  virtual ~SnapshotProvider() = default;
  virtual Result<std::vector<SnapshotInfo>> list(const SnapshotQuery& query) = 0;
  virtual Result<Snapshot> get(int64_t id) = 0;  // kNotFound for an unknown id
};

struct Annotation {
  int64_t id = 0;
  WallTimeMs t{};
  std::string rig;  // empty: all rigs
  std::string user;
  std::string text;
};

class AnnotationProvider {
 public:
  virtual ~AnnotationProvider() = default;
  virtual Result<std::vector<Annotation>> list(WallTimeMs from, WallTimeMs to, size_t limit) = 0;
  virtual Result<int64_t> add(const Annotation& note) = 0;  // returns the new id
};

// ---------- status, configuration and control ----------
class StatusProvider {
 public:
  virtual ~StatusProvider() = default;
  virtual StatusInfo status() = 0;
  virtual ConfigView config() = 0;
  // Asks the daemon to reload its config; returns once the request is queued.
  virtual Status request_reload() = 0;
};

// Non-owning; each must outlive the Server. A null provider makes its routes answer 503.
struct Providers {
  StatusProvider* status = nullptr;
  LiveProvider* live = nullptr;
  TrendProvider* trends = nullptr;
  AlarmProvider* alarms = nullptr;
  SnapshotProvider* snapshots = nullptr;
  AnnotationProvider* annotations = nullptr;
  // Called (from a worker thread) with one line when a handler throws; may be empty.
  std::function<void(std::string_view)> on_internal_error;
};

}  // namespace tonewarden::http
