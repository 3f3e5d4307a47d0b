// Second pass of the loader: checks that span keys. Names are unique and well formed, every
// reference (rule reading, tach channel, target channel) resolves, bands fit below Nyquist,
// each kind has the keys it needs, and the HTTP listener is not exposed without a token.
#include <charconv>
#include <set>

#include "loader_internal.h"

namespace tonewarden::config::detail {
namespace {

// As the channel tracker names its readings (velocity_rms only for g and m/s2 channels).
constexpr const char* kChannelMetrics = "rms|peak|crest_factor|kurtosis|velocity_rms";
constexpr const char* kTargetFields = "amplitude|frequency_hz|snr_db";

bool valid_name(const std::string& s) {
  if (s.empty() || s.size() > 64) return false;
  for (const char c : s) {
    const bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                    c == '-' || c == '_';
    if (!ok) return false;
  }
  return true;
}

std::vector<std::string> split(const std::string& s, char sep) {
  std::vector<std::string> out;
  size_t start = 0;
  while (true) {
    const size_t p = s.find(sep, start);
    out.push_back(s.substr(start, p == std::string::npos ? std::string::npos : p - start));
    if (p == std::string::npos) break;
    start = p + 1;
  }
  return out;
}

std::string num(double v) {
  char buf[40];
  std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

bool is_loopback(const std::string& host) {
  return host == "localhost" || host == "::1" || host == "[::1]" || host.rfind("127.", 0) == 0;
}

// Names in one list of sections: well formed and unique.
void check_names(const std::vector<Section>& list, const std::string& what, const IssueSink& sink) {
  std::set<std::string> seen;
  for (const Section& s : list) {
    if (!s.has("name")) continue;  // reported as missing already
    const std::string name = s.get_string("name");
    const std::string key = key_label(s.label, "name");
    if (!valid_name(name)) {
      sink.add(s.pos_of("name"), key, "invalid " + what + " name \"" + name + "\"",
               "1-64 letters, digits, '-' or '_'");
    } else if (!seen.insert(name).second) {
      sink.add(s.pos_of("name"), key, "duplicate " + what + " name \"" + name + "\"");
    }
  }
}

void check_http(const Section& http, const IssueSink& sink) {
  const bool has_token = !http.get_string("token").empty();
  const bool has_token_file = !http.get_string("token_file").empty();
  if (has_token && has_token_file) {
    sink.add(http.pos_of("token_file"), key_label(http.label, "token_file"),
             "set token or token_file, not both");
  }
  const std::string listen = http.get_string("listen");
  const auto colon = listen.rfind(':');
  std::string host = colon == std::string::npos ? "" : listen.substr(0, colon);
  const std::string port_text = colon == std::string::npos ? "" : listen.substr(colon + 1);
  int port = -1;
  const auto r = std::from_chars(port_text.data(), port_text.data() + port_text.size(), port);
  if (host.empty() || r.ec != std::errc() || r.ptr != port_text.data() + port_text.size() || port < 0 ||
      port > 65535) {
    sink.add(http.pos_of("listen"), key_label(http.label, "listen"), "invalid address \"" + listen + "\"",
             "HOST:PORT with port 0..65535");
    return;
  }
  if (http.get_bool("enabled") && !is_loopback(host) && !has_token && !has_token_file) {
    sink.add(http.pos_of("listen"), key_label(http.label, "listen"),
             "listening on \"" + host + "\" beyond loopback needs token or token_file");
  }
}

void check_store(const Section& store, const IssueSink& sink) {
  for (const std::string& part : split(store.get_string("db_file"), '/')) {
    if (part == "..") {
      sink.add(store.pos_of("db_file"), key_label(store.label, "db_file"),
               "path may not contain \"..\"");
      break;
    }
  }
  if (store.get_string("db_file").empty()) {
    sink.add(store.pos_of("db_file"), key_label(store.label, "db_file"), "must not be empty");
  }
}

void check_evidence(const Section& ev, const IssueSink& sink) {
  // A key missing here had a bad value, reported already; don't pile a second message on it.
  if (!ev.has("enabled") || !ev.has("pre_s") || !ev.has("post_s") || !ev.get_bool("enabled")) return;
  const double pre_s = ev.get_float("pre_s");
  const double post_s = ev.get_float("post_s");
  if (!(pre_s + post_s > 0)) {
    // Both defaults are above 0, so post_s is in the file here: point at it.
    sink.add(ev.pos_of("post_s"), key_label(ev.label, "post_s"),
             "pre_s + post_s must be above 0 when enabled (set enabled = false for no clips)");
  }
}

// Channels the source delivers; 0 when only the data can tell (file sources).
std::int64_t source_channel_count(const Section& src) {
  const std::string kind = src.get_string("kind");
  if (kind == "synthetic") return src.get_bool("tach") ? 3 : 2;
  if (kind == "device" || kind == "pcm") return src.get_int("channels");
  return 0;
}

void check_source(const Section& src, const IssueSink& sink) {
  const std::string kind = src.get_string("kind");
  if (kind == "file") {
    const bool has_path = !src.get_string("path").empty();
    const bool has_dir = !src.get_string("watch_dir").empty();
    if (has_path == has_dir) {
      sink.add(has_path ? src.pos_of("watch_dir") : src.pos, key_label(src.label, "path"),
               "a file source needs exactly one of path and watch_dir");
    }
  } else if (kind == "pcm") {
    if (src.get_string("path").empty()) {
      sink.add(src.pos, key_label(src.label, "path"), "a pcm source needs path (\"-\" for standard input)");
    }
  } else if (kind == "device") {
    if (!src.get_string("device").empty() && src.get_int("device_index") >= 0) {
      sink.add(src.pos_of("device_index"), key_label(src.label, "device_index"),
               "set device or device_index, not both");
    }
  }
}

void check_band(const Section& an, const char* low_key, const char* high_key, double nyquist_hz,
                const IssueSink& sink) {
  const double lo = an.get_float(low_key);
  const double hi = an.get_float(high_key);
  if (lo >= hi) {
    sink.add(an.pos_of(low_key), key_label(an.label, low_key),
             "must be below " + std::string(high_key) + " (" + num(hi) + " Hz)");
  }
  if (nyquist_hz > 0 && hi > nyquist_hz) {
    sink.add(an.pos_of(high_key), key_label(an.label, high_key),
             "value " + num(hi) + " is above the Nyquist frequency", "up to " + num(nyquist_hz) + " Hz");
  }
}

struct RigIndex {
  std::map<std::string, const Section*> channels;  // name -> section
  std::map<std::string, const Section*> targets;
};

void check_reading(const Section& rule, const RigIndex& rig, const IssueSink& sink) {
  const std::string reading = rule.get_string("reading");
  const std::string key = key_label(rule.label, "reading");
  const SourcePos pos = rule.pos_of("reading");
  const auto parts = split(reading, '.');
  const std::string shapes = "CHANNEL.METRIC, CHANNEL.TARGET.FIELD or speed.rpm";
  if (parts.size() == 2 && parts[0] == "speed") {
    if (parts[1] != "rpm") sink.add(pos, key, "unknown speed reading \"" + reading + "\"", "speed.rpm");
    return;
  }
  if (parts.size() != 2 && parts.size() != 3) {
    sink.add(pos, key, "malformed reading \"" + reading + "\"", shapes);
    return;
  }
  const auto ch = rig.channels.find(parts[0]);
  if (ch == rig.channels.end()) {
    std::string names;
    for (const auto& [n, s] : rig.channels) names += (names.empty() ? "" : ", ") + n;
    sink.add(pos, key, "reading \"" + reading + "\" names no channel \"" + parts[0] + "\"", names);
    return;
  }
  if (ch->second->get_string("role") != "vibration") {
    sink.add(pos, key, "channel \"" + parts[0] + "\" is a tach channel; use speed.rpm");
    return;
  }
  if (parts.size() == 2) {
    if (!choice_contains(kChannelMetrics, parts[1])) {
      sink.add(pos, key, "unknown channel metric \"" + parts[1] + "\"", kChannelMetrics);
    }
    return;
  }
  const auto tg = rig.targets.find(parts[1]);
  if (tg == rig.targets.end()) {
    std::string names;
    for (const auto& [n, s] : rig.targets) names += (names.empty() ? "" : ", ") + n;
    sink.add(pos, key, "reading \"" + reading + "\" names no target \"" + parts[1] + "\"", names);
    return;
  }
  const std::string target_channel = tg->second->get_string("channel");
  if (!target_channel.empty() && target_channel != parts[0]) {
    sink.add(pos, key, "target \"" + parts[1] + "\" is followed on channel \"" + target_channel +
                           "\", not \"" + parts[0] + "\"");
  }
  if (!choice_contains(kTargetFields, parts[2])) {
    sink.add(pos, key, "unknown target field \"" + parts[2] + "\"", kTargetFields);
  }
}

void check_rule_levels(const Section& rule, const IssueSink& sink) {
  const std::string preset = rule.get_string("preset");
  const bool has_w = rule.has("warning");
  const bool has_c = rule.has("critical");
  if (preset != "none") {
    if (has_w || has_c) {
      sink.add(rule.pos_of(has_w ? "warning" : "critical"), key_label(rule.label, has_w ? "warning" : "critical"),
               "set levels or preset, not both");
    }
    const std::string reading = rule.get_string("reading");
    if (reading.size() < 13 || reading.compare(reading.size() - 13, 13, ".velocity_rms") != 0) {
      sink.add(rule.pos_of("preset"), key_label(rule.label, "preset"),
               "severity presets apply to CHANNEL.velocity_rms readings (mm/s)");
    }
    if (rule.get_string("threshold_mode") != "absolute" || rule.get_string("direction") != "above") {
      sink.add(rule.pos_of("preset"), key_label(rule.label, "preset"),
               "severity presets need threshold_mode = \"absolute\" and direction = \"above\"");
    }
    return;
  }
  if (!has_w && !has_c) {
    if (sink.reported(key_label(rule.label, "warning")) || sink.reported(key_label(rule.label, "critical"))) return;
    sink.add(rule.pos, key_label(rule.label, "warning"), "a rule needs warning, critical or preset");
    return;
  }
  if (has_w && has_c) {
    const double w = rule.get_float("warning");
    const double c = rule.get_float("critical");
    const bool above = rule.get_string("direction") == "above";
    if (above ? !(w < c) : !(w > c)) {
      sink.add(rule.pos_of("critical"), key_label(rule.label, "critical"),
               "critical (" + num(c) + ") must be " + (above ? "above" : "below") + " warning (" + num(w) +
                   ") when direction = \"" + (above ? "above" : "below") + "\"");
    }
  }
}

void check_target(const Section& t, const RigIndex& rig, double nyquist_hz, const IssueSink& sink) {
  const std::string kind = t.get_string("kind");
  auto need = [&](const char* key) {
    if (!t.has(key) && !sink.reported(key_label(t.label, key))) {
      const OptionSpec* o = find_option("rig.target", key);
      sink.add(t.pos, key_label(t.label, key), "kind = \"" + kind + "\" needs " + key, o->allowed());
    }
  };
  if (kind == "fixed") need("frequency_hz");
  if (kind == "order") need("order");
  if (kind == "mesh") need("teeth");
  if (kind == "bearing") {
    need("balls");
    need("ball_diameter_mm");
    need("pitch_diameter_mm");
    need("defect");
    if (t.has("ball_diameter_mm") && t.has("pitch_diameter_mm") &&
        t.get_float("ball_diameter_mm") >= t.get_float("pitch_diameter_mm")) {
      sink.add(t.pos_of("ball_diameter_mm"), key_label(t.label, "ball_diameter_mm"),
               "ball diameter must be smaller than pitch diameter (" + num(t.get_float("pitch_diameter_mm")) +
                   " mm)");
    }
  }
  if (kind == "fixed" && t.has("frequency_hz") && nyquist_hz > 0 && t.get_float("frequency_hz") >= nyquist_hz) {
    sink.add(t.pos_of("frequency_hz"), key_label(t.label, "frequency_hz"), "value is above the Nyquist frequency",
             "below " + num(nyquist_hz) + " Hz");
  }
  const std::string ch = t.get_string("channel");
  if (!ch.empty()) {
    const auto it = rig.channels.find(ch);
    if (it == rig.channels.end()) {
      std::string names;
      for (const auto& [n, s] : rig.channels) names += (names.empty() ? "" : ", ") + n;
      sink.add(t.pos_of("channel"), key_label(t.label, "channel"), "no channel named \"" + ch + "\"", names);
    } else if (it->second->get_string("role") != "vibration") {
      sink.add(t.pos_of("channel"), key_label(t.label, "channel"), "channel \"" + ch + "\" is a tach channel");
    }
  }
}

void check_rig(const Section& rig, const IssueSink& sink) {
  const Section* src = rig.single("rig.source");
  const Section* an = rig.single("rig.analysis");
  const Section* speed = rig.single("rig.speed");
  const auto& channels = rig.list("rig.channel");
  const auto& targets = rig.list("rig.target");
  const auto& rules = rig.list("rig.rule");
  check_names(channels, "channel", sink);
  check_names(targets, "target", sink);
  check_names(rules, "rule", sink);

  RigIndex index;
  for (const Section& c : channels) index.channels.emplace(c.get_string("name"), &c);
  for (const Section& t : targets) index.targets.emplace(t.get_string("name"), &t);

  double nyquist_hz = 0;
  std::int64_t source_channels = 0;
  if (src != nullptr) {
    check_source(*src, sink);
    if (src->has("sample_rate_hz")) nyquist_hz = src->get_float("sample_rate_hz") / 2;
    source_channels = source_channel_count(*src);
  }
  std::set<std::int64_t> indices;
  for (const Section& c : channels) {
    if (c.get_string("name") == "speed") {
      sink.add(c.pos_of("name"), key_label(c.label, "name"), "\"speed\" is reserved for speed readings");
    }
    if (!c.has("index")) continue;
    const std::int64_t i = c.get_int("index");
    if (!indices.insert(i).second) {
      sink.add(c.pos_of("index"), key_label(c.label, "index"), "channel index " + std::to_string(i) + " is used twice");
    } else if (source_channels > 0 && i >= source_channels) {
      sink.add(c.pos_of("index"), key_label(c.label, "index"),
               "index " + std::to_string(i) + " is beyond the source's " + std::to_string(source_channels) +
                   " channels",
               "0.." + std::to_string(source_channels - 1));
    }
  }
  if (an != nullptr) {
    check_band(*an, "envelope_low_hz", "envelope_high_hz", nyquist_hz, sink);
    check_band(*an, "velocity_low_hz", "velocity_high_hz", nyquist_hz, sink);
    WindowKind window = WindowKind::kHann;
    double kaiser_beta = 0;
    std::string window_error;
    // A missing key had a bad type, reported already: no second message for it.
    if (an->has("window") && !parse_window(an->get_string("window"), window, kaiser_beta, window_error)) {
      sink.add(an->pos_of("window"), key_label(an->label, "window"), window_error);
    }
    AverageMode mode;
    std::int64_t count = 0;
    double tau = 0;
    if (an->has("average") && !parse_average(an->get_string("average"), mode, count, tau)) {
      sink.add(an->pos_of("average"), key_label(an->label, "average"),
               "invalid average \"" + an->get_string("average") + "\"",
               "linear:N (N 1..10000), exp:S (S 0.01..86400 s), peak, none");
    }
  }
  if (speed != nullptr) {
    const std::string source = speed->get_string("source");
    if (source == "fixed" && !speed->has("rpm") && !sink.reported(key_label(speed->label, "rpm"))) {
      sink.add(speed->pos, key_label(speed->label, "rpm"), "source = \"fixed\" needs rpm",
               find_option("rig.speed", "rpm")->allowed());
    }
    if (source == "tach") {
      const std::string tach = speed->get_string("tach_channel");
      const auto it = index.channels.find(tach);
      if (!speed->has("tach_channel")) {
        sink.add(speed->pos, key_label(speed->label, "tach_channel"), "source = \"tach\" needs tach_channel");
      } else if (it == index.channels.end()) {
        sink.add(speed->pos_of("tach_channel"), key_label(speed->label, "tach_channel"),
                 "no channel named \"" + tach + "\"");
      } else if (it->second->get_string("role") != "tach") {
        sink.add(speed->pos_of("tach_channel"), key_label(speed->label, "tach_channel"),
                 "channel \"" + tach + "\" has role \"" + it->second->get_string("role") + "\", not \"tach\"");
      }
    }
    if (source != "fixed" && speed->get_float("min_rpm") >= speed->get_float("max_rpm")) {
      sink.add(speed->pos_of("min_rpm"), key_label(speed->label, "min_rpm"),
               "must be below max_rpm (" + num(speed->get_float("max_rpm")) + " rpm)");
    }
  }
  for (const Section& t : targets) check_target(t, index, nyquist_hz, sink);
  for (const Section& r : rules) {
    if (r.has("reading")) check_reading(r, index, sink);
    check_rule_levels(r, sink);
  }
}

void check_notify(const Section& notify, const IssueSink& sink) {
  if (const Section* wh = notify.single("notify.webhook")) {
    const std::string url = wh->get_string("url");
    if (!url.empty() && url.rfind("http://", 0) != 0 && url.rfind("https://", 0) != 0) {
      sink.add(wh->pos_of("url"), key_label(wh->label, "url"), "invalid URL \"" + url + "\"",
               "http://... or https://...");
    }
  }
  if (const Section* ex = notify.single("notify.exec")) {
    const auto cmd = ex->get_list("command");
    if (!cmd.empty() && (cmd[0].empty() || cmd[0][0] != '/')) {
      sink.add(ex->pos_of("command"), key_label(ex->label, "command"),
               "the program \"" + cmd[0] + "\" must be an absolute path");
    }
  }
  if (const Section* mq = notify.single("notify.mqtt")) {
    if (mq->get_bool("enabled") && mq->get_string("host").empty()) {
      sink.add(mq->pos_of("host"), key_label(mq->label, "host"), "enabled MQTT needs a host");
    }
    // The same limits the MQTT sink enforces at start, reported here with a position.
    const std::string prefix = mq->get_string("topic_prefix");
    if (prefix.find_first_of("+#") != std::string::npos) {
      sink.add(mq->pos_of("topic_prefix"), key_label(mq->label, "topic_prefix"),
               "topic_prefix \"" + prefix + "\" must not contain the wildcards '+' or '#'");
    } else if (!prefix.empty() && prefix[0] == '$') {
      sink.add(mq->pos_of("topic_prefix"), key_label(mq->label, "topic_prefix"),
               "topic_prefix \"" + prefix + "\" must not start with '$' (topics kept for the broker)");
    }
    if (!mq->get_string("password_file").empty() && mq->get_string("username").empty()) {
      sink.add(mq->pos_of("password_file"), key_label(mq->label, "password_file"),
               "password_file needs a username");
    }
  }
}

}  // namespace

bool parse_average(const std::string& text, AverageMode& mode, std::int64_t& count, double& time_constant_s) {
  count = 0;
  time_constant_s = 0;
  if (text == "none") { mode = AverageMode::kNone; return true; }
  if (text == "peak") { mode = AverageMode::kPeakHold; return true; }
  const auto colon = text.find(':');
  if (colon == std::string::npos) return false;
  const std::string head = text.substr(0, colon);
  const char* first = text.data() + colon + 1;
  const char* last = text.data() + text.size();
  if (head == "linear") {
    std::int64_t n = 0;
    const auto r = std::from_chars(first, last, n);
    if (r.ec != std::errc() || r.ptr != last || n < 1 || n > 10000) return false;
    mode = AverageMode::kLinear;
    count = n;
    return true;
  }
  if (head == "exp") {
    double s = 0;
    const auto r = std::from_chars(first, last, s);
    if (r.ec != std::errc() || r.ptr != last || !(s >= 0.01 && s <= 86400)) return false;
    mode = AverageMode::kExponential;
    time_constant_s = s;
    return true;
  }
  return false;
}

void check_semantics(const Section& root, const IssueSink& sink) {
  if (const Section* http = root.single("http")) check_http(*http, sink);
  if (const Section* store = root.single("store")) check_store(*store, sink);
  if (const Section* evidence = root.single("evidence")) check_evidence(*evidence, sink);
  const auto& rigs = root.list("rig");
  check_names(rigs, "rig", sink);
  for (const Section& rig : rigs) check_rig(rig, sink);
  if (const Section* notify = root.single("notify")) check_notify(*notify, sink);
}

}  // namespace tonewarden::config::detail
