// Plain configuration structs produced by the loader. They hold strings, enums and numbers
// only, so other modules map them to their own types without depending on config internals.
// All values are validated (ranges, enums, cross-references) before a Config is handed out.
#pragma once

#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace tonewarden::config {

enum class LogLevel { kTrace, kDebug, kInfo, kWarn, kError, kCritical, kOff };
enum class FftPlanner { kMeasure, kEstimate };

struct DaemonConfig {
  std::string data_dir;            // database, wisdom and snapshots live here
  std::string fft_wisdom_path;     // empty: <data_dir>/fftw-wisdom
  FftPlanner fft_planner = FftPlanner::kMeasure;
  LogLevel log_level = LogLevel::kInfo;
  std::string log_file;            // empty: stderr
  std::int64_t log_max_bytes = 0;  // rotate above this size; 0 = never
  std::int64_t log_max_files = 0;
  double status_interval_s = 0;    // period of the status line in the log
};

struct HttpConfig {
  bool enabled = true;
  std::string listen_host;         // from listen = "host:port"
  std::uint16_t listen_port = 0;   // 0 = any free port
  std::string token;               // bearer token; empty = none
  std::string token_file;          // read the token from this file instead
  std::int64_t max_event_streams = 0;
  std::int64_t threads = 0;
  std::string cors_origin;         // empty: no CORS headers
};

struct StoreConfig {
  std::string db_file;             // relative to data_dir unless absolute
  std::int64_t commit_interval_ms = 0;
  std::int64_t queue_capacity = 0;
  double raw_retention_days = 0;
  double rollup_retention_days = 0;
  double snapshot_interval_s = 0;  // 0 = only around alarms
  std::int64_t snapshot_keep = 0;
  std::int64_t max_db_bytes = 0;   // 0 = no cap
  std::int64_t busy_timeout_ms = 0;
};

enum class SourceKind { kSynthetic, kDevice, kFile, kPcm };
enum class Pace { kRealtime, kFast };
enum class SampleFormat { kS16, kS32, kF32 };

struct SourceConfig {
  SourceKind kind = SourceKind::kSynthetic;
  double sample_rate_hz = 0;       // synthetic, device, pcm; 0 for file (read from the file)
  std::int64_t channels = 0;       // channels delivered by the source (0: file decides)
  // device
  std::string device;              // name substring; empty if device_index is used
  std::int64_t device_index = -1;  // -1: choose by name
  std::int64_t frames_per_buffer = 0;
  // file
  std::string path;                // file: recording; pcm: raw stream or "-" for stdin
  bool loop = false;
  std::string watch_dir;           // file: analyse new files appearing here
  std::string pattern;             // file: glob for watch_dir
  Pace pace = Pace::kRealtime;     // file, synthetic
  // pcm
  SampleFormat sample_format = SampleFormat::kF32;
  // synthetic
  std::uint64_t seed = 0;
  double story_start_s = 0;        // scenario time at start
  double story_speed = 1;          // scenario seconds per real second
  double defect_onset_s = 0;       // scenario time the outer-race defect appears
  bool tach = false;               // adds a once-per-rev tach channel
};

enum class ChannelRole { kVibration, kTach };
struct ChannelConfig {
  std::string name;
  std::string description;
  std::int64_t index = 0;
  double sensitivity_v_per_unit = 0;
  std::string unit;                // "g", "m/s2", "Pa", "V"
  double full_scale_v = 0;         // clipping detection
  ChannelRole role = ChannelRole::kVibration;
};

// Every window the spectrum stage offers; names as `tonewarden analyze --window` spells them.
enum class WindowKind {
  kHann,
  kHamming,
  kBlackmanHarris,
  kFlatTop,
  kRectangular,
  kBlackman,
  kHft95,
  kKaiser,  // shape in AnalysisConfig::kaiser_beta
};
enum class AverageMode { kNone, kLinear, kExponential, kPeakHold };
enum class SpectrumScale { kAmplitudePeak, kAmplitudeRms, kPsd };

struct AnalysisConfig {
  std::int64_t block_samples = 0;
  std::int64_t pad_factor = 1;
  double overlap_pct = 0;
  WindowKind window = WindowKind::kHann;          // from window = "hann" | ... | "kaiser:BETA"
  double kaiser_beta = 0;                         // kKaiser only; [0, 50]
  AverageMode average_mode = AverageMode::kNone;  // from average = "linear:N" | "exp:S" | "peak"
  std::int64_t average_count = 0;                 // linear: N frames
  double average_time_constant_s = 0;             // exp: S seconds
  SpectrumScale scale = SpectrumScale::kAmplitudeRms;
  std::int64_t peaks = 0;
  double peak_min_snr_db = 0;
  double envelope_low_hz = 0;
  double envelope_high_hz = 0;
  double velocity_low_hz = 0;
  double velocity_high_hz = 0;
};

enum class SpeedSource { kFixed, kTach, kSpectrum };
struct SpeedConfig {
  SpeedSource source = SpeedSource::kFixed;
  double rpm = 0;                  // fixed: the speed; tach/spectrum: nominal
  std::string tach_channel;
  std::int64_t pulses_per_rev = 1;
  double trigger_level_v = 0;
  double hysteresis_v = 0;
  double min_rpm = 0;
  double max_rpm = 0;
};

enum class TargetKind { kFixed, kOrder, kBearing, kMesh, kHum };
enum class BearingDefect { kBpfo, kBpfi, kBsf, kTwoBsf, kFtf };
enum class TargetSpectrum { kPlain, kEnvelope };

struct TargetConfig {
  std::string name;
  TargetKind kind = TargetKind::kFixed;
  std::string channel;             // empty: every vibration channel
  double frequency_hz = 0;         // fixed
  double order = 0;                // order
  std::int64_t teeth = 0;          // mesh: teeth, vanes or blades per revolution
  double mains_hz = 0;             // hum
  double mains_multiple = 0;       // hum: 2 = twice line frequency
  std::int64_t balls = 0;          // bearing geometry
  double ball_diameter_mm = 0;
  double pitch_diameter_mm = 0;
  double contact_angle_deg = 0;
  BearingDefect defect = BearingDefect::kBpfo;
  std::optional<double> tolerance_hz;   // exactly one of these two is set
  std::optional<double> tolerance_pct;
  TargetSpectrum spectrum = TargetSpectrum::kPlain;
  std::int64_t harmonics = 1;
  std::int64_t sidebands = 0;
};

enum class Direction { kAbove, kBelow };
enum class ThresholdMode { kAbsolute, kBaselineDb, kBaselineSpread };

struct RuleConfig {
  std::string name;
  std::string reading;             // "motor-de.velocity_rms", "motor-de.bpfo.amplitude", "speed.rpm"
  Direction direction = Direction::kAbove;
  std::optional<double> warning;   // resolved from `preset` when one is named
  std::optional<double> critical;
  std::string preset;              // severity preset name, empty if none
  double hysteresis_pct = 0;
  double on_delay_s = 0;
  double off_delay_s = 0;
  bool latch = false;
  ThresholdMode threshold_mode = ThresholdMode::kAbsolute;
  double baseline_learn_s = 0;
};

struct RigConfig {
  std::string name;
  std::string description;
  SourceConfig source;
  std::vector<ChannelConfig> channels;
  AnalysisConfig analysis;
  SpeedConfig speed;
  std::vector<TargetConfig> targets;
  std::vector<RuleConfig> rules;
};

enum class Severity { kWarning, kCritical };
struct WebhookConfig {
  std::string url;                 // empty: off
  std::int64_t timeout_ms = 0;
  std::int64_t retries = 0;
  Severity min_severity = Severity::kWarning;
};
struct ExecConfig {
  std::vector<std::string> command;  // argv; empty: off. No shell is involved.
  double timeout_s = 0;
  Severity min_severity = Severity::kWarning;
};
struct MqttConfig {
  bool enabled = false;
  std::string host;
  std::int64_t port = 0;
  std::string topic_prefix;
  std::string client_id;
  std::int64_t qos = 0;
  std::int64_t keepalive_s = 0;
  std::string username;
  std::string password_file;
  bool publish_readings = false;
};
struct NotifyConfig {
  WebhookConfig webhook;
  ExecConfig exec;
  MqttConfig mqtt;
};

// Raw-evidence clips: the samples around each alarm activation, kept as FLAC files.
// Read at start only (changing them needs a restart).
struct EvidenceConfig {
  bool enabled = true;
  double pre_s = 0;                // seconds kept before the activation; [0, 120]
  double post_s = 0;               // seconds recorded after it; [0, 120]; pre_s + post_s > 0
  double max_total_mb = 0;         // evidence folder cap in MB; oldest clips deleted first
  double min_interval_s = 0;       // per rig: no new clip within this long of a clip's start
};

struct Config {
  DaemonConfig daemon;
  HttpConfig http;
  StoreConfig store;
  EvidenceConfig evidence;
  std::vector<RigConfig> rigs;
  NotifyConfig notify;
};

// Severity presets for velocity RMS in mm/s (ISO 10816-3 zone boundaries, from memory;
// check the current standard before relying on them). warning = B/C, critical = C/D.
struct SeverityPreset {
  const char* name;
  double warning_mm_s;
  double critical_mm_s;
  const char* help;
};
std::span<const SeverityPreset> severity_presets();
const SeverityPreset* find_severity_preset(std::string_view name);

}  // namespace tonewarden::config
