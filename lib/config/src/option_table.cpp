// The option table itself: one row per key. Defaults, ranges and units live here and nowhere
// else; the loader, check-config, the dump, the diff and the docs test all read these rows.
#include "tonewarden/config/option_table.h"

#include <cmath>
#include <cstdio>

namespace tonewarden::config {
namespace {

using T = OptionType;

// Small builder so each row reads as one line of intent.
struct Opt {
  OptionSpec s;
  Opt(std::string_view section, std::string_view key, OptionType type, std::string_view help) {
    s.section = section;
    s.key = key;
    s.type = type;
    s.help = help;
  }
  Opt& def(Value v) { s.default_value = std::move(v); return *this; }
  Opt& range(double lo, double hi, std::string_view unit = {}) {
    s.min = lo; s.max = hi; s.unit = unit; return *this;
  }
  Opt& unit(std::string_view u) { s.unit = u; return *this; }
  Opt& choices(std::string_view c) { s.choices = c; return *this; }
  Opt& req() { s.required = true; return *this; }
  Opt& live() { s.reloadable = true; return *this; }
  Opt& secret() { s.secret = true; return *this; }
  Opt& when(std::string_view key, std::string_view values) {
    s.when_key = key; s.when_values = values; return *this;
  }
  Opt& excluded_by(std::string_view key) { s.excluded_by = key; return *this; }
  operator OptionSpec() const { return s; }  // NOLINT: builder
};

Value str(const char* s) { return Value{std::string(s)}; }
Value i64(std::int64_t v) { return Value{v}; }
Value f64(double v) { return Value{v}; }

const std::vector<SectionSpec>& sections() {
  static const std::vector<SectionSpec> kSections = {
      {"daemon", false, false, false, "", "process-wide settings: data directory, logging, FFT wisdom"},
      {"http", false, false, false, "", "HTTP API and dashboard"},
      {"store", false, false, false, "", "SQLite history: batching, retention, snapshots"},
      {"evidence", false, false, false, "", "raw FLAC clips of the samples around alarm activations"},
      {"rig", true, true, false, "name", "one watched machine"},
      {"rig.source", false, true, false, "", "where the rig's samples come from"},
      {"rig.channel", true, true, false, "name", "one sensor signal"},
      {"rig.analysis", false, false, false, "", "framing, FFT and spectrum settings"},
      {"rig.speed", false, false, false, "", "where shaft speed comes from"},
      {"rig.target", true, false, true, "name", "a named frequency to follow"},
      {"rig.rule", true, false, true, "name", "an alarm condition on a reading"},
      {"notify", false, false, false, "", "where alarm events go besides the store"},
      {"notify.webhook", false, false, false, "", "HTTP POST of each alarm event"},
      {"notify.exec", false, false, false, "", "run a command on each alarm event"},
      {"notify.mqtt", false, false, false, "", "publish events to an MQTT broker"},
  };
  return kSections;
}

constexpr std::string_view kPresets =
    "none|iso10816-3-g1-rigid|iso10816-3-g1-flexible|iso10816-3-g2-rigid|"
    "iso10816-3-g2-flexible|iso10816-3-g3-rigid|iso10816-3-g3-flexible|"
    "iso10816-3-g4-rigid|iso10816-3-g4-flexible";

std::vector<OptionSpec> build_options() {
  std::vector<OptionSpec> o;
  auto add = [&o](const Opt& x) { o.push_back(x); };
  // [daemon]
  add(Opt("daemon", "data_dir", T::kString, "directory for the database, FFT wisdom and state")
          .def(str("/var/lib/tonewarden")));
  add(Opt("daemon", "fft_wisdom_path", T::kString, "FFT wisdom file; empty: <data_dir>/fftw-wisdom")
          .def(str("")));
  add(Opt("daemon", "fft_planner", T::kEnum, "measure: slow first start, fast FFTs; estimate: quick start")
          .choices("measure|estimate").def(str("measure")));
  add(Opt("daemon", "log_level", T::kEnum, "least severe log level written")
          .choices("trace|debug|info|warn|error|critical|off").def(str("info")).live());
  add(Opt("daemon", "log_file", T::kString, "log file; empty: standard error").def(str("")));
  add(Opt("daemon", "log_max_bytes", T::kInt, "rotate the log file above this size; 0: never")
          .def(i64(10'485'760)).range(0, 1e12, "bytes"));
  add(Opt("daemon", "log_max_files", T::kInt, "rotated log files kept")
          .def(i64(5)).range(1, 100, "files"));
  add(Opt("daemon", "status_interval_s", T::kFloat, "period of the one-line status in the log")
          .def(f64(60)).range(1, 86400, "s").live());
  // [http]
  add(Opt("http", "enabled", T::kBool, "serve the HTTP API and dashboard").def(Value{true}));
  add(Opt("http", "listen", T::kString, "host:port to listen on; port 0 picks a free port")
          .def(str("127.0.0.1:8765")));
  add(Opt("http", "token", T::kString, "bearer token required on every request; empty: none")
          .def(str("")).secret());
  add(Opt("http", "token_file", T::kString, "read the bearer token from this file instead")
          .def(str("")));
  add(Opt("http", "max_event_streams", T::kInt, "open live event streams allowed at once")
          .def(i64(8)).range(1, 256, "streams"));
  add(Opt("http", "threads", T::kInt, "request threads besides event streams")
          .def(i64(4)).range(1, 64, "threads"));
  add(Opt("http", "cors_origin", T::kString, "origin allowed for cross-site requests; empty: off")
          .def(str("")).live());
  // [store]
  add(Opt("store", "db_file", T::kString, "SQLite file, relative to data_dir unless absolute")
          .def(str("tonewarden.db")));
  add(Opt("store", "commit_interval_ms", T::kInt, "rows are committed in one transaction this often")
          .def(i64(1000)).range(10, 60000, "ms").live());
  add(Opt("store", "queue_capacity", T::kInt, "rows buffered for the writer; beyond it rows are dropped and counted")
          .def(i64(65536)).range(1024, 16'777'216, "rows"));
  add(Opt("store", "raw_retention_days", T::kFloat, "keep raw readings this long")
          .def(f64(30)).range(0.01, 3650, "days").live());
  add(Opt("store", "rollup_retention_days", T::kFloat, "keep minute and hour rollups this long")
          .def(f64(730)).range(1, 36500, "days").live());
  add(Opt("store", "snapshot_interval_s", T::kFloat, "routine spectrum snapshot period; 0: only around alarms")
          .def(f64(3600)).range(0, 604800, "s").live());
  add(Opt("store", "snapshot_keep", T::kInt, "snapshots kept per rig; oldest go first")
          .def(i64(1000)).range(1, 1'000'000, "snapshots").live());
  add(Opt("store", "max_db_bytes", T::kInt, "trim the oldest raw rows above this size; 0: no cap")
          .def(i64(0)).range(0, 1e15, "bytes").live());
  add(Opt("store", "busy_timeout_ms", T::kInt, "wait this long for a busy database")
          .def(i64(5000)).range(0, 600000, "ms"));
  // [evidence]
  add(Opt("evidence", "enabled", T::kBool, "write raw FLAC clips around alarm activations")
          .def(Value{true}));
  add(Opt("evidence", "pre_s", T::kFloat, "seconds of samples kept before the activation")
          .def(f64(10)).range(0, 120, "s"));
  add(Opt("evidence", "post_s", T::kFloat, "seconds recorded after the activation")
          .def(f64(10)).range(0, 120, "s"));
  add(Opt("evidence", "max_total_mb", T::kFloat,
          "size cap of the evidence folder (1 MB = 1000000 bytes); oldest clips are deleted first")
          .def(f64(2048)).range(1, 1e6, "MB"));
  add(Opt("evidence", "min_interval_s", T::kFloat,
          "per rig: an activation within this long of a clip's start starts no new clip")
          .def(f64(60)).range(0, 86400, "s"));
  // [[rig]]
  add(Opt("rig", "name", T::kString, "short unique name: letters, digits, '-' and '_'").req());
  add(Opt("rig", "description", T::kString, "free text for people").def(str("")).live());
  // [rig.source]
  add(Opt("rig.source", "kind", T::kEnum, "synthetic scenario, audio device, recorded files or raw PCM stream")
          .choices("synthetic|device|file|pcm").req());
  add(Opt("rig.source", "sample_rate_hz", T::kFloat, "sampling rate")
          .def(f64(48000)).range(1000, 768000, "Hz").when("kind", "synthetic|device|pcm"));
  add(Opt("rig.source", "channels", T::kInt, "channels captured")
          .def(i64(2)).range(1, 64, "channels").when("kind", "device|pcm"));
  add(Opt("rig.source", "device", T::kString, "part of the capture device's name; empty: default device")
          .def(str("")).when("kind", "device"));
  add(Opt("rig.source", "device_index", T::kInt, "capture device number from `tonewarden devices`; -1: by name")
          .def(i64(-1)).range(-1, 1023).when("kind", "device"));
  add(Opt("rig.source", "frames_per_buffer", T::kInt, "frames per device callback")
          .def(i64(1024)).range(32, 65536, "frames").when("kind", "device"));
  add(Opt("rig.source", "path", T::kString, "file: recording to read; pcm: raw stream file, or \"-\" for standard input")
          .when("kind", "file|pcm"));
  add(Opt("rig.source", "loop", T::kBool, "start the recording again at its end")
          .def(Value{false}).when("kind", "file"));
  add(Opt("rig.source", "watch_dir", T::kString, "analyse each new file that appears here")
          .def(str("")).when("kind", "file"));
  add(Opt("rig.source", "pattern", T::kString, "glob for files in watch_dir")
          .def(str("*.wav")).when("kind", "file"));
  add(Opt("rig.source", "pace", T::kEnum, "realtime: as the samples' own clock; fast: as fast as the CPU allows")
          .choices("realtime|fast").def(str("realtime")).when("kind", "file|synthetic"));
  add(Opt("rig.source", "sample_format", T::kEnum, "raw sample encoding, little-endian, interleaved")
          .choices("s16|s32|f32").def(str("f32")).when("kind", "pcm"));
  add(Opt("rig.source", "seed", T::kInt, "random seed of the synthetic scenario")
          .def(i64(1)).range(0, 9.007199254740992e15).when("kind", "synthetic"));
  add(Opt("rig.source", "story_start_s", T::kFloat, "scenario time at start (5400 = 01:30 into the night)")
          .def(f64(0)).range(0, 604800, "s").when("kind", "synthetic"));
  add(Opt("rig.source", "story_speed", T::kFloat, "scenario seconds per real second (speed drift, defect growth)")
          .def(f64(1)).range(0.01, 10000, "x").when("kind", "synthetic"));
  add(Opt("rig.source", "defect_onset_s", T::kFloat, "scenario time when the outer-race defect appears")
          .def(f64(5400)).range(0, 604800, "s").when("kind", "synthetic"));
  add(Opt("rig.source", "tach", T::kBool, "add a once-per-revolution tach channel after the two accelerometers")
          .def(Value{true}).when("kind", "synthetic"));
  // [[rig.channel]]
  add(Opt("rig.channel", "name", T::kString, "short unique name within the rig").req());
  add(Opt("rig.channel", "description", T::kString, "sensor place and type, for people").def(str("")).live());
  add(Opt("rig.channel", "index", T::kInt, "channel number in the source, from 0").req().range(0, 63));
  add(Opt("rig.channel", "sensitivity_v_per_unit", T::kFloat, "sensor sensitivity (0.1 = 100 mV/g)")
          .req().range(1e-6, 1000, "V/unit"));
  add(Opt("rig.channel", "unit", T::kEnum, "engineering unit the sensor measures")
          .choices("g|m/s2|Pa|V").def(str("g")));
  add(Opt("rig.channel", "full_scale_v", T::kFloat, "input full scale; samples near it count as clipping")
          .def(f64(10)).range(0.001, 1000, "V"));
  add(Opt("rig.channel", "role", T::kEnum, "vibration or sound signal, or a tach pulse train")
          .choices("vibration|tach").def(str("vibration")));
  // [rig.analysis]
  add(Opt("rig.analysis", "block_samples", T::kInt, "samples per frame")
          .def(i64(16384)).range(64, 1'048'576, "samples"));
  add(Opt("rig.analysis", "pad_factor", T::kInt, "zero padding at the end: FFT length >= block * pad")
          .def(i64(2)).range(1, 16, "x"));
  add(Opt("rig.analysis", "overlap_pct", T::kFloat, "overlap of consecutive frames")
          .def(f64(50)).range(0, 95, "%"));
  // A string, not an enum: kaiser takes its shape as "kaiser:BETA". Checked by the spectrum
  // module's own window parser (check_semantics.cpp), so the names match `analyze --window`.
  add(Opt("rig.analysis", "window", T::kString,
          "window function: rect, hann, hamming, blackman, blackman-harris, flattop, hft95 or kaiser:BETA "
          "(BETA 0..50); flattop for amplitude, hann for general work")
          .def(str("hann")));
  add(Opt("rig.analysis", "average", T::kString, "linear:N frames, exp:S seconds time constant, peak hold, or none")
          .def(str("linear:4")));
  add(Opt("rig.analysis", "scale", T::kEnum, "spectrum scaling")
          .choices("amplitude-peak|amplitude-rms|psd").def(str("amplitude-rms")));
  add(Opt("rig.analysis", "peaks", T::kInt, "strongest peaks reported per spectrum")
          .def(i64(20)).range(0, 1000, "peaks").live());
  add(Opt("rig.analysis", "peak_min_snr_db", T::kFloat, "a peak must stand this far above the local floor")
          .def(f64(6)).range(0, 100, "dB").live());
  add(Opt("rig.analysis", "envelope_low_hz", T::kFloat, "envelope band-pass lower edge")
          .def(f64(2000)).range(1, 384000, "Hz"));
  add(Opt("rig.analysis", "envelope_high_hz", T::kFloat, "envelope band-pass upper edge")
          .def(f64(8000)).range(1, 384000, "Hz"));
  add(Opt("rig.analysis", "velocity_low_hz", T::kFloat, "velocity RMS band lower edge (ISO 20816 uses 10 Hz)")
          .def(f64(10)).range(0.1, 384000, "Hz"));
  add(Opt("rig.analysis", "velocity_high_hz", T::kFloat, "velocity RMS band upper edge (ISO 20816 uses 1000 Hz)")
          .def(f64(1000)).range(1, 384000, "Hz"));
  // [rig.speed]
  add(Opt("rig.speed", "source", T::kEnum, "fixed rpm, a tach channel, or the strongest order in the spectrum")
          .choices("fixed|tach|spectrum").def(str("fixed")));
  add(Opt("rig.speed", "rpm", T::kFloat, "fixed: the shaft speed; tach/spectrum: nominal speed")
          .range(1, 200000, "rpm"));
  add(Opt("rig.speed", "tach_channel", T::kString, "name of the channel with role = \"tach\"")
          .when("source", "tach"));
  add(Opt("rig.speed", "pulses_per_rev", T::kInt, "tach pulses per shaft revolution")
          .def(i64(1)).range(1, 1024, "pulses").when("source", "tach"));
  add(Opt("rig.speed", "trigger_level_v", T::kFloat, "tach trigger level")
          .def(f64(2.5)).range(-100, 100, "V").when("source", "tach"));
  add(Opt("rig.speed", "hysteresis_v", T::kFloat, "tach trigger hysteresis")
          .def(f64(0.5)).range(0, 100, "V").when("source", "tach"));
  add(Opt("rig.speed", "min_rpm", T::kFloat, "lowest plausible speed")
          .def(f64(60)).range(1, 200000, "rpm").when("source", "tach|spectrum"));
  add(Opt("rig.speed", "max_rpm", T::kFloat, "highest plausible speed")
          .def(f64(6000)).range(1, 200000, "rpm").when("source", "tach|spectrum"));
  // [[rig.target]]
  add(Opt("rig.target", "name", T::kString, "short unique name within the rig").req());
  add(Opt("rig.target", "kind", T::kEnum, "fixed Hz, shaft order, bearing defect, mesh (teeth x speed) or mains hum")
          .choices("fixed|order|bearing|mesh|hum").req());
  add(Opt("rig.target", "channel", T::kString, "channel to follow it on; empty: every vibration channel")
          .def(str("")));
  add(Opt("rig.target", "frequency_hz", T::kFloat, "the frequency").range(0.01, 384000, "Hz")
          .when("kind", "fixed").live());
  add(Opt("rig.target", "order", T::kFloat, "multiple of shaft speed").range(0.01, 1000, "x")
          .when("kind", "order").live());
  add(Opt("rig.target", "teeth", T::kInt, "teeth, vanes or blades passing per revolution")
          .range(1, 10000, "teeth").when("kind", "mesh").live());
  add(Opt("rig.target", "mains_hz", T::kFloat, "mains frequency").def(f64(50)).range(10, 1000, "Hz")
          .when("kind", "hum").live());
  add(Opt("rig.target", "mains_multiple", T::kFloat, "multiple of mains (2: magnetic hum at twice line)")
          .def(f64(2)).range(0.5, 100, "x").when("kind", "hum").live());
  add(Opt("rig.target", "balls", T::kInt, "rolling elements").range(3, 100, "balls").when("kind", "bearing").live());
  add(Opt("rig.target", "ball_diameter_mm", T::kFloat, "rolling element diameter")
          .range(0.1, 1000, "mm").when("kind", "bearing").live());
  add(Opt("rig.target", "pitch_diameter_mm", T::kFloat, "pitch circle diameter")
          .range(1, 10000, "mm").when("kind", "bearing").live());
  add(Opt("rig.target", "contact_angle_deg", T::kFloat, "contact angle; 0 for deep-groove ball bearings")
          .def(f64(0)).range(0, 60, "deg").when("kind", "bearing").live());
  add(Opt("rig.target", "defect", T::kEnum, "outer race, inner race, ball spin (1x or 2x), cage")
          .choices("bpfo|bpfi|bsf|2bsf|ftf").when("kind", "bearing").live());
  add(Opt("rig.target", "tolerance_hz", T::kFloat, "search half-width in Hz; when set, overrides tolerance_pct")
          .range(0.001, 1000, "Hz").live());
  add(Opt("rig.target", "tolerance_pct", T::kFloat, "search half-width as percent of the expected frequency")
          .def(f64(2)).range(0.01, 50, "%").excluded_by("tolerance_hz").live());
  add(Opt("rig.target", "spectrum", T::kEnum, "look in the plain spectrum or the envelope spectrum")
          .choices("plain|envelope").def(str("plain")).live());
  add(Opt("rig.target", "harmonics", T::kInt, "harmonics followed, counting the fundamental")
          .def(i64(1)).range(1, 50, "harmonics").live());
  add(Opt("rig.target", "sidebands", T::kInt, "shaft-speed sidebands followed on each side")
          .def(i64(0)).range(0, 20, "sidebands").live());
  // [[rig.rule]]
  add(Opt("rig.rule", "name", T::kString, "short unique name within the rig").req());
  add(Opt("rig.rule", "reading", T::kString,
          "CHANNEL.METRIC (rms, peak, crest_factor, kurtosis, velocity_rms), "
          "CHANNEL.TARGET.amplitude|frequency_hz|snr_db (dB above the local floor), or speed.rpm").req().live());
  add(Opt("rig.rule", "direction", T::kEnum, "alarm when the reading goes above or below the levels")
          .choices("above|below").def(str("above")).live());
  add(Opt("rig.rule", "warning", T::kFloat, "warning level, in the reading's unit (or dB / spreads over baseline)").live());
  add(Opt("rig.rule", "critical", T::kFloat, "critical level, same unit as warning").live());
  add(Opt("rig.rule", "preset", T::kEnum, "velocity severity zones (ISO 10816-3 from memory; check the current standard)")
          .choices(kPresets).def(str("none")).live());
  add(Opt("rig.rule", "hysteresis_pct", T::kFloat, "a level clears only this far back on the safe side")
          .def(f64(5)).range(0, 50, "%").live());
  add(Opt("rig.rule", "on_delay_s", T::kFloat, "the condition must hold this long before the alarm raises")
          .def(f64(10)).range(0, 86400, "s").live());
  add(Opt("rig.rule", "off_delay_s", T::kFloat, "the condition must be gone this long before the alarm clears")
          .def(f64(30)).range(0, 86400, "s").live());
  add(Opt("rig.rule", "latch", T::kBool, "stay in alarm until acknowledged, even once clear")
          .def(Value{false}).live());
  add(Opt("rig.rule", "threshold_mode", T::kEnum,
          "absolute levels; baseline-db: dB over the learnt baseline; baseline-spread: standard deviations over it")
          .choices("absolute|baseline-db|baseline-spread").def(str("absolute")).live());
  add(Opt("rig.rule", "baseline_learn_s", T::kFloat, "learn the baseline over this long after start")
          .def(f64(3600)).range(10, 2'592'000, "s").when("threshold_mode", "baseline-db|baseline-spread").live());
  // [notify.*] (read at start: the notifier threads are built once)
  add(Opt("notify.webhook", "url", T::kString, "http:// or https:// URL to POST events to; empty: off")
          .def(str("")));
  add(Opt("notify.webhook", "timeout_ms", T::kInt, "give up on one attempt after this long")
          .def(i64(5000)).range(100, 60000, "ms"));
  add(Opt("notify.webhook", "retries", T::kInt, "extra attempts after a failure, with backoff")
          .def(i64(3)).range(0, 20, "retries"));
  add(Opt("notify.webhook", "min_severity", T::kEnum, "least severe event sent")
          .choices("warning|critical").def(str("warning")));
  add(Opt("notify.exec", "command", T::kStringList, "program and arguments, run without a shell; event JSON on stdin; empty: off")
          .def(Value{std::vector<std::string>{}}));
  add(Opt("notify.exec", "timeout_s", T::kFloat, "kill the command after this long")
          .def(f64(10)).range(0.1, 3600, "s"));
  add(Opt("notify.exec", "min_severity", T::kEnum, "least severe event that runs the command")
          .choices("warning|critical").def(str("warning")));
  add(Opt("notify.mqtt", "enabled", T::kBool, "publish events to an MQTT broker").def(Value{false}));
  add(Opt("notify.mqtt", "host", T::kString, "broker host").def(str("127.0.0.1")));
  add(Opt("notify.mqtt", "port", T::kInt, "broker port").def(i64(1883)).range(1, 65535));
  add(Opt("notify.mqtt", "topic_prefix", T::kString, "topics are PREFIX/RIG/alarm and PREFIX/RIG/reading")
          .def(str("tonewarden")));
  add(Opt("notify.mqtt", "client_id", T::kString, "MQTT client id; empty: tonewarden-<host name>").def(str("")));
  add(Opt("notify.mqtt", "qos", T::kInt, "MQTT quality of service").def(i64(1)).range(0, 2));
  add(Opt("notify.mqtt", "keepalive_s", T::kInt, "MQTT keepalive").def(i64(30)).range(5, 3600, "s"));
  add(Opt("notify.mqtt", "username", T::kString, "broker user; empty: anonymous").def(str("")));
  add(Opt("notify.mqtt", "password_file", T::kString, "file holding the broker password").def(str("")));
  add(Opt("notify.mqtt", "publish_readings", T::kBool, "also publish every reading, not only alarm events")
          .def(Value{false}));
  return o;
}

const std::vector<OptionSpec>& options() {
  static const std::vector<OptionSpec> kOptions = build_options();
  return kOptions;
}

std::string format_number(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

}  // namespace

const char* to_string(OptionType type) noexcept {
  switch (type) {
    case OptionType::kBool: return "boolean";
    case OptionType::kInt: return "integer";
    case OptionType::kFloat: return "number";
    case OptionType::kString: return "string";
    case OptionType::kEnum: return "string";
    case OptionType::kStringList: return "array of strings";
  }
  return "?";
}

std::string OptionSpec::path() const { return std::string(section) + "." + std::string(key); }

std::string OptionSpec::allowed() const {
  if (type == OptionType::kEnum) return std::string(choices);
  if (type == OptionType::kInt || type == OptionType::kFloat) {
    std::string s = (type == OptionType::kInt) ? "integer " : "number ";
    if (std::isinf(min) && std::isinf(max)) return s.substr(0, s.size() - 1);
    s += format_number(min) + ".." + format_number(max);
    if (!unit.empty()) s += " " + std::string(unit);
    return s;
  }
  return to_string(type);
}

std::span<const SectionSpec> section_table() { return sections(); }
std::span<const OptionSpec> option_table() { return options(); }

const SectionSpec* find_section(std::string_view path) {
  for (const auto& s : sections()) {
    if (s.path == path) return &s;
  }
  return nullptr;
}

const OptionSpec* find_option(std::string_view section, std::string_view key) {
  for (const auto& o : options()) {
    if (o.section == section && o.key == key) return &o;
  }
  return nullptr;
}

std::vector<const OptionSpec*> options_of(std::string_view section) {
  std::vector<const OptionSpec*> out;
  for (const auto& o : options()) {
    if (o.section == section) out.push_back(&o);
  }
  return out;
}

std::vector<const SectionSpec*> children_of(std::string_view section) {
  std::vector<const SectionSpec*> out;
  for (const auto& s : sections()) {
    const auto dot = s.path.rfind('.');
    const std::string_view parent = dot == std::string_view::npos ? "" : s.path.substr(0, dot);
    if (parent == section) out.push_back(&s);
  }
  return out;
}

bool choice_contains(std::string_view choices, std::string_view value) {
  while (!choices.empty()) {
    const auto bar = choices.find('|');
    const std::string_view item = choices.substr(0, bar);
    if (item == value) return true;
    if (bar == std::string_view::npos) break;
    choices.remove_prefix(bar + 1);
  }
  return false;
}

}  // namespace tonewarden::config
