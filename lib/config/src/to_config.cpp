// Last step of the loader: maps the validated tree to the plain structs handed to modules.
#include "loader_internal.h"

namespace tonewarden::config::detail {
namespace {

template <typename E>
E pick(const std::string& value, std::initializer_list<std::pair<const char*, E>> map) {
  for (const auto& [name, e] : map) {
    if (value == name) return e;
  }
  return map.begin()->second;  // unreachable after validation
}

std::optional<double> opt_float(const Section& s, const char* key) {
  if (!s.has(key)) return std::nullopt;
  return s.get_float(key);
}

Severity severity(const Section& s) {
  return pick<Severity>(s.get_string("min_severity"), {{"warning", Severity::kWarning}, {"critical", Severity::kCritical}});
}

SourceConfig to_source(const Section& s) {
  SourceConfig c;
  c.kind = pick<SourceKind>(s.get_string("kind"), {{"synthetic", SourceKind::kSynthetic}, {"device", SourceKind::kDevice},
                                                    {"file", SourceKind::kFile}, {"pcm", SourceKind::kPcm}});
  c.sample_rate_hz = s.get_float("sample_rate_hz", 0);
  c.channels = s.get_int("channels", 0);
  if (c.kind == SourceKind::kSynthetic) c.channels = s.get_bool("tach") ? 3 : 2;
  c.device = s.get_string("device");
  c.device_index = s.get_int("device_index", -1);
  c.frames_per_buffer = s.get_int("frames_per_buffer", 0);
  c.path = s.get_string("path");
  c.loop = s.get_bool("loop");
  c.watch_dir = s.get_string("watch_dir");
  c.pattern = s.get_string("pattern");
  c.pace = pick<Pace>(s.get_string("pace", "realtime"), {{"realtime", Pace::kRealtime}, {"fast", Pace::kFast}});
  c.sample_format = pick<SampleFormat>(s.get_string("sample_format", "f32"),
                                       {{"f32", SampleFormat::kF32}, {"s16", SampleFormat::kS16}, {"s32", SampleFormat::kS32}});
  c.seed = static_cast<std::uint64_t>(s.get_int("seed", 0));
  c.story_start_s = s.get_float("story_start_s", 0);
  c.story_speed = s.get_float("story_speed", 1);
  c.defect_onset_s = s.get_float("defect_onset_s", 0);
  c.tach = s.get_bool("tach");
  return c;
}

ChannelConfig to_channel(const Section& s) {
  ChannelConfig c;
  c.name = s.get_string("name");
  c.description = s.get_string("description");
  c.index = s.get_int("index");
  c.sensitivity_v_per_unit = s.get_float("sensitivity_v_per_unit");
  c.unit = s.get_string("unit");
  c.full_scale_v = s.get_float("full_scale_v");
  c.role = pick<ChannelRole>(s.get_string("role"), {{"vibration", ChannelRole::kVibration}, {"tach", ChannelRole::kTach}});
  return c;
}

AnalysisConfig to_analysis(const Section& s) {
  AnalysisConfig c;
  c.block_samples = s.get_int("block_samples");
  c.pad_factor = s.get_int("pad_factor");
  c.overlap_pct = s.get_float("overlap_pct");
  std::string window_error;  // empty: checked already by check_semantics
  parse_window(s.get_string("window"), c.window, c.kaiser_beta, window_error);
  parse_average(s.get_string("average"), c.average_mode, c.average_count, c.average_time_constant_s);
  c.scale = pick<SpectrumScale>(s.get_string("scale"), {{"amplitude-rms", SpectrumScale::kAmplitudeRms},
                                                        {"amplitude-peak", SpectrumScale::kAmplitudePeak},
                                                        {"psd", SpectrumScale::kPsd}});
  c.peaks = s.get_int("peaks");
  c.peak_min_snr_db = s.get_float("peak_min_snr_db");
  c.envelope_low_hz = s.get_float("envelope_low_hz");
  c.envelope_high_hz = s.get_float("envelope_high_hz");
  c.velocity_low_hz = s.get_float("velocity_low_hz");
  c.velocity_high_hz = s.get_float("velocity_high_hz");
  return c;
}

SpeedConfig to_speed(const Section& s) {
  SpeedConfig c;
  c.source = pick<SpeedSource>(s.get_string("source"),
                               {{"fixed", SpeedSource::kFixed}, {"tach", SpeedSource::kTach}, {"spectrum", SpeedSource::kSpectrum}});
  c.rpm = s.get_float("rpm", 0);
  c.tach_channel = s.get_string("tach_channel");
  c.pulses_per_rev = s.get_int("pulses_per_rev", 1);
  c.trigger_level_v = s.get_float("trigger_level_v", 0);
  c.hysteresis_v = s.get_float("hysteresis_v", 0);
  c.min_rpm = s.get_float("min_rpm", 0);
  c.max_rpm = s.get_float("max_rpm", 0);
  return c;
}

TargetConfig to_target(const Section& s) {
  TargetConfig c;
  c.name = s.get_string("name");
  c.kind = pick<TargetKind>(s.get_string("kind"), {{"fixed", TargetKind::kFixed}, {"order", TargetKind::kOrder},
                                                   {"bearing", TargetKind::kBearing}, {"mesh", TargetKind::kMesh},
                                                   {"hum", TargetKind::kHum}});
  c.channel = s.get_string("channel");
  c.frequency_hz = s.get_float("frequency_hz", 0);
  c.order = s.get_float("order", 0);
  c.teeth = s.get_int("teeth", 0);
  c.mains_hz = s.get_float("mains_hz", 0);
  c.mains_multiple = s.get_float("mains_multiple", 0);
  c.balls = s.get_int("balls", 0);
  c.ball_diameter_mm = s.get_float("ball_diameter_mm", 0);
  c.pitch_diameter_mm = s.get_float("pitch_diameter_mm", 0);
  c.contact_angle_deg = s.get_float("contact_angle_deg", 0);
  c.defect = pick<BearingDefect>(s.get_string("defect", "bpfo"),
                                 {{"bpfo", BearingDefect::kBpfo}, {"bpfi", BearingDefect::kBpfi}, {"bsf", BearingDefect::kBsf},
                                  {"2bsf", BearingDefect::kTwoBsf}, {"ftf", BearingDefect::kFtf}});
  // tolerance_hz, when given, overrides the (defaulted) percentage.
  c.tolerance_hz = opt_float(s, "tolerance_hz");
  if (!c.tolerance_hz) c.tolerance_pct = opt_float(s, "tolerance_pct");
  c.spectrum = pick<TargetSpectrum>(s.get_string("spectrum"), {{"plain", TargetSpectrum::kPlain}, {"envelope", TargetSpectrum::kEnvelope}});
  c.harmonics = s.get_int("harmonics");
  c.sidebands = s.get_int("sidebands");
  return c;
}

RuleConfig to_rule(const Section& s) {
  RuleConfig c;
  c.name = s.get_string("name");
  c.reading = s.get_string("reading");
  c.direction = pick<Direction>(s.get_string("direction"), {{"above", Direction::kAbove}, {"below", Direction::kBelow}});
  c.warning = opt_float(s, "warning");
  c.critical = opt_float(s, "critical");
  const std::string preset = s.get_string("preset");
  if (const SeverityPreset* p = find_severity_preset(preset)) {
    c.preset = preset;
    c.warning = p->warning_mm_s;
    c.critical = p->critical_mm_s;
  }
  c.hysteresis_pct = s.get_float("hysteresis_pct");
  c.on_delay_s = s.get_float("on_delay_s");
  c.off_delay_s = s.get_float("off_delay_s");
  c.latch = s.get_bool("latch");
  c.threshold_mode = pick<ThresholdMode>(s.get_string("threshold_mode"),
                                         {{"absolute", ThresholdMode::kAbsolute}, {"baseline-db", ThresholdMode::kBaselineDb},
                                          {"baseline-spread", ThresholdMode::kBaselineSpread}});
  c.baseline_learn_s = s.get_float("baseline_learn_s", 0);
  return c;
}

}  // namespace

Config to_config(const Section& root) {
  Config cfg;
  const Section& d = *root.single("daemon");
  cfg.daemon.data_dir = d.get_string("data_dir");
  cfg.daemon.fft_wisdom_path = d.get_string("fft_wisdom_path");
  cfg.daemon.fft_planner = pick<FftPlanner>(d.get_string("fft_planner"), {{"measure", FftPlanner::kMeasure}, {"estimate", FftPlanner::kEstimate}});
  cfg.daemon.log_level = pick<LogLevel>(d.get_string("log_level"),
                                        {{"info", LogLevel::kInfo}, {"trace", LogLevel::kTrace}, {"debug", LogLevel::kDebug},
                                         {"warn", LogLevel::kWarn}, {"error", LogLevel::kError},
                                         {"critical", LogLevel::kCritical}, {"off", LogLevel::kOff}});
  cfg.daemon.log_file = d.get_string("log_file");
  cfg.daemon.log_max_bytes = d.get_int("log_max_bytes");
  cfg.daemon.log_max_files = d.get_int("log_max_files");
  cfg.daemon.status_interval_s = d.get_float("status_interval_s");

  const Section& h = *root.single("http");
  cfg.http.enabled = h.get_bool("enabled");
  const std::string listen = h.get_string("listen");
  const auto colon = listen.rfind(':');
  cfg.http.listen_host = listen.substr(0, colon);
  if (cfg.http.listen_host.size() >= 2 && cfg.http.listen_host.front() == '[') {
    cfg.http.listen_host = cfg.http.listen_host.substr(1, cfg.http.listen_host.size() - 2);
  }
  cfg.http.listen_port = static_cast<std::uint16_t>(std::stoi(listen.substr(colon + 1)));
  cfg.http.token = h.get_string("token");
  cfg.http.token_file = h.get_string("token_file");
  cfg.http.max_event_streams = h.get_int("max_event_streams");
  cfg.http.threads = h.get_int("threads");
  cfg.http.cors_origin = h.get_string("cors_origin");

  const Section& st = *root.single("store");
  cfg.store.db_file = st.get_string("db_file");
  cfg.store.commit_interval_ms = st.get_int("commit_interval_ms");
  cfg.store.queue_capacity = st.get_int("queue_capacity");
  cfg.store.raw_retention_days = st.get_float("raw_retention_days");
  cfg.store.rollup_retention_days = st.get_float("rollup_retention_days");
  cfg.store.snapshot_interval_s = st.get_float("snapshot_interval_s");
  cfg.store.snapshot_keep = st.get_int("snapshot_keep");
  cfg.store.max_db_bytes = st.get_int("max_db_bytes");
  cfg.store.busy_timeout_ms = st.get_int("busy_timeout_ms");

  const Section& ev = *root.single("evidence");
  cfg.evidence.enabled = ev.get_bool("enabled");
  cfg.evidence.pre_s = ev.get_float("pre_s");
  cfg.evidence.post_s = ev.get_float("post_s");
  cfg.evidence.max_total_mb = ev.get_float("max_total_mb");
  cfg.evidence.min_interval_s = ev.get_float("min_interval_s");

  for (const Section& r : root.list("rig")) {
    RigConfig rig;
    rig.name = r.get_string("name");
    rig.description = r.get_string("description");
    rig.source = to_source(*r.single("rig.source"));
    for (const Section& c : r.list("rig.channel")) rig.channels.push_back(to_channel(c));
    rig.analysis = to_analysis(*r.single("rig.analysis"));
    rig.speed = to_speed(*r.single("rig.speed"));
    for (const Section& t : r.list("rig.target")) rig.targets.push_back(to_target(t));
    for (const Section& u : r.list("rig.rule")) rig.rules.push_back(to_rule(u));
    cfg.rigs.push_back(std::move(rig));
  }

  const Section& n = *root.single("notify");
  const Section& wh = *n.single("notify.webhook");
  cfg.notify.webhook.url = wh.get_string("url");
  cfg.notify.webhook.timeout_ms = wh.get_int("timeout_ms");
  cfg.notify.webhook.retries = wh.get_int("retries");
  cfg.notify.webhook.min_severity = severity(wh);
  const Section& ex = *n.single("notify.exec");
  cfg.notify.exec.command = ex.get_list("command");
  cfg.notify.exec.timeout_s = ex.get_float("timeout_s");
  cfg.notify.exec.min_severity = severity(ex);
  const Section& mq = *n.single("notify.mqtt");
  cfg.notify.mqtt.enabled = mq.get_bool("enabled");
  cfg.notify.mqtt.host = mq.get_string("host");
  cfg.notify.mqtt.port = mq.get_int("port");
  cfg.notify.mqtt.topic_prefix = mq.get_string("topic_prefix");
  cfg.notify.mqtt.client_id = mq.get_string("client_id");
  cfg.notify.mqtt.qos = mq.get_int("qos");
  cfg.notify.mqtt.keepalive_s = mq.get_int("keepalive_s");
  cfg.notify.mqtt.username = mq.get_string("username");
  cfg.notify.mqtt.password_file = mq.get_string("password_file");
  cfg.notify.mqtt.publish_readings = mq.get_bool("publish_readings");
  return cfg;
}

}  // namespace tonewarden::config::detail
