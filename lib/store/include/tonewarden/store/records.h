// Plain record types that the store keeps: series, readings, alarm events, spectrum
// snapshots, run records and operator annotations. No behaviour, no SQLite.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "tonewarden/base/time.h"

namespace tonewarden::store {

using base::WallTimeMs;

// One trend's identity. Together the four strings are unique; each is at most
// kMaxNameBytes long and not empty (unit may be empty for dimensionless values).
struct SeriesKey {
  std::string rig;      // e.g. "pump-3"
  std::string channel;  // e.g. "de-accel"
  std::string metric;   // e.g. "rms", "order1_amp", "bpfo_db"
  std::string unit;     // e.g. "m/s^2", "dB", "" for ratios
  friend bool operator==(const SeriesKey&, const SeriesKey&) = default;
};
inline constexpr size_t kMaxNameBytes = 200;

using SeriesId = int64_t;  // > 0; handed out by StoreWriter::register_series

struct SeriesInfo {
  SeriesId id = 0;
  SeriesKey key;
};

// One trend value. 24 bytes, trivially copyable: the hot-path unit of the writer queue.
struct Reading {
  SeriesId series_id = 0;
  int64_t t_unix_ms = 0;
  double value = 0.0;  // in the series' unit; NaN and infinities are rejected at append
};

// ISA-18.2 alarm states.
enum class AlarmState { kNormal, kUnacknowledged, kAcknowledged, kReturnedUnacknowledged, kShelved };
const char* to_string(AlarmState s) noexcept;  // "normal", "unacknowledged", ...
bool parse_alarm_state(const std::string& text, AlarmState* out);

enum class Severity { kInfo, kWarning, kCritical };
const char* to_string(Severity s) noexcept;  // "info", "warning", "critical"
bool parse_severity(const std::string& text, Severity* out);

// One transition of one alarm; the event log is append-only.
struct AlarmEvent {
  int64_t id = 0;  // assigned by the database; 0 when writing
  WallTimeMs t;
  std::string rig;
  std::string channel;
  std::string rule;  // the rule's configured name
  Severity severity = Severity::kWarning;
  AlarmState state = AlarmState::kUnacknowledged;
  double value = 0.0;      // the measured value that caused the transition
  double threshold = 0.0;  // the limit it was compared with
  std::string message;
  std::string evidence_path;  // relative path of a saved clip or spectrum; may be empty
  std::string user;           // who acknowledged/shelved; empty for automatic transitions
  std::string comment;
};

// A stored spectrum with the settings needed to read it back. `magnitude` holds
// fft_length/2+1 (or fewer, if cropped) non-negative linear values in `unit` and `scale`,
// bin k at k*bin_hz. Stored as 16-bit log codes (see spectrum_codec.h): the round trip keeps
// every non-zero value within 0.005 dB (0.06 %) and zeros exactly.
struct Snapshot {
  int64_t id = 0;  // assigned by the database; 0 when writing
  WallTimeMs t;
  std::string rig;
  std::string channel;
  std::string reason;  // "periodic", "alarm", "operator", ...
  double sample_rate_hz = 0.0;
  int64_t fft_length = 0;
  double bin_hz = 0.0;
  std::string window;  // "hann", "flattop", ...
  std::string scale;   // "peak", "rms", "psd", ...
  std::string unit;    // unit of the magnitudes
  std::vector<float> magnitude;
};

// One daemon run. stop is 0 while it runs (or if it died without stopping).
struct RunRecord {
  int64_t id = 0;  // assigned by StoreWriter::begin_run
  WallTimeMs start;
  WallTimeMs stop;
  std::string config_hash;  // hex digest of the effective config
  std::string version;      // tonewarden version string
};

// A note from an operator, e.g. "bearing replaced".
struct Annotation {
  int64_t id = 0;  // assigned by the database; 0 when writing
  WallTimeMs t;
  std::string rig;
  std::string text;
  std::string author;
};

}  // namespace tonewarden::store
