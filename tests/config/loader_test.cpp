// Focus: loading good configs into structs with defaults, and the exact file:line:column
// message for each bad config in tests/data/config/bad.
#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <map>
#include <sstream>

#include "support/subprocess.h"
#include "tonewarden/config/loader.h"

namespace tonewarden::config {
namespace {

std::string read_text(const std::string& path) {
  std::ifstream in(path);
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string source_file(const std::string& rel) { return std::string(TONEWARDEN_SOURCE_DIR) + "/" + rel; }

// A smallest valid config: one synthetic rig, one channel, a fixed speed.
constexpr const char* kMinimal = R"(
[[rig]]
name = "r1"

[rig.source]
kind = "synthetic"

[[rig.channel]]
name = "ch0"
index = 0
sensitivity_v_per_unit = 0.1

[rig.speed]
rpm = 1500
)";

std::vector<std::string> messages(const LoadedConfig& loaded) {
  std::vector<std::string> out;
  for (const auto& issue : loaded.issues) out.push_back(format_issue(issue));
  return out;
}

TEST(ConfigLoaderTest, ShippedConfigsPassValidation) {
  // Expected: no issues in either shipped file (they are what users start from).
  for (const char* rel : {"config/demo.toml", "config/example-rig.toml"}) {
    const LoadedConfig loaded = load_config_file(source_file(rel));
    EXPECT_TRUE(loaded.ok()) << rel << ":\n" << ::testing::PrintToString(messages(loaded));
  }
}

TEST(ConfigLoaderTest, DemoConfigMapsToTheBay4Scenario) {
  // Expected values are the ones written in config/demo.toml (the invented Bay 4 scenario),
  // and preset levels from the table in severity_presets.cpp (ISO 10816-3, from memory).
  const LoadedConfig loaded = load_config_file(source_file("config/demo.toml"));
  ASSERT_TRUE(loaded.ok());
  const Config& c = loaded.config;
  EXPECT_EQ(c.http.listen_host, "127.0.0.1");
  EXPECT_EQ(c.http.listen_port, 8765);
  ASSERT_EQ(c.rigs.size(), 1u);
  const RigConfig& rig = c.rigs[0];
  EXPECT_EQ(rig.source.kind, SourceKind::kSynthetic);
  EXPECT_DOUBLE_EQ(rig.source.sample_rate_hz, 48000);
  EXPECT_EQ(rig.source.channels, 3);  // two accelerometers plus the tach
  EXPECT_LT(rig.source.story_start_s, rig.source.defect_onset_s);
  ASSERT_EQ(rig.channels.size(), 3u);
  EXPECT_EQ(rig.channels[0].name, "motor-de");
  EXPECT_DOUBLE_EQ(rig.channels[0].sensitivity_v_per_unit, 0.1);  // 100 mV/g
  EXPECT_EQ(rig.channels[2].role, ChannelRole::kTach);
  EXPECT_EQ(rig.speed.source, SpeedSource::kTach);
  EXPECT_EQ(rig.analysis.average_mode, AverageMode::kLinear);
  EXPECT_EQ(rig.analysis.average_count, 4);
  const auto bpfo = std::find_if(rig.targets.begin(), rig.targets.end(), [](auto& t) { return t.name == "bpfo"; });
  ASSERT_NE(bpfo, rig.targets.end());
  EXPECT_EQ(bpfo->kind, TargetKind::kBearing);
  EXPECT_EQ(bpfo->balls, 9);
  EXPECT_EQ(bpfo->spectrum, TargetSpectrum::kEnvelope);
  ASSERT_TRUE(bpfo->tolerance_pct.has_value());  // the table default, 2 %
  EXPECT_DOUBLE_EQ(*bpfo->tolerance_pct, 2.0);
  const auto hum = std::find_if(rig.targets.begin(), rig.targets.end(), [](auto& t) { return t.name == "hum"; });
  ASSERT_NE(hum, rig.targets.end());
  EXPECT_DOUBLE_EQ(hum->tolerance_hz.value_or(-1), 0.5);
  EXPECT_FALSE(hum->tolerance_pct.has_value());  // tolerance_hz replaces it
  const RuleConfig& vel = rig.rules[1];
  EXPECT_EQ(vel.preset, "iso10816-3-g3-rigid");
  EXPECT_DOUBLE_EQ(vel.warning.value_or(-1), 4.5);
  EXPECT_DOUBLE_EQ(vel.critical.value_or(-1), 7.1);
}

TEST(ConfigLoaderTest, MinimalConfigGetsTableDefaults) {
  // Expected: the defaults written in option_table.cpp for every key left out.
  const LoadedConfig loaded = load_config_text(kMinimal, "minimal.toml");
  ASSERT_TRUE(loaded.ok()) << ::testing::PrintToString(messages(loaded));
  const Config& c = loaded.config;
  EXPECT_EQ(c.daemon.log_level, LogLevel::kInfo);
  EXPECT_EQ(c.http.listen_host, "127.0.0.1");
  EXPECT_EQ(c.http.listen_port, 8765);
  EXPECT_EQ(c.store.max_db_bytes, 0);
  EXPECT_EQ(c.store.commit_interval_ms, 1000);
  const RigConfig& rig = c.rigs[0];
  EXPECT_DOUBLE_EQ(rig.analysis.velocity_low_hz, 10);
  EXPECT_DOUBLE_EQ(rig.analysis.velocity_high_hz, 1000);
  EXPECT_EQ(rig.channels[0].unit, "g");
  EXPECT_EQ(rig.speed.source, SpeedSource::kFixed);
  EXPECT_DOUBLE_EQ(rig.speed.rpm, 1500);
  EXPECT_TRUE(c.notify.webhook.url.empty());
  EXPECT_TRUE(c.notify.exec.command.empty());
  EXPECT_FALSE(c.notify.mqtt.enabled);
  // Every applicable default is in the tree, marked as not from the file.
  for (const OptionSpec* o : options_of("daemon")) {
    const Entry* e = loaded.tree.single("daemon")->find(std::string(o->key));
    ASSERT_NE(e, nullptr) << o->path();
    EXPECT_FALSE(e->from_file);
    EXPECT_EQ(e->value, o->default_value) << o->path();
  }
  // Keys for other source kinds are absent, not defaulted.
  EXPECT_FALSE(loaded.tree.list("rig")[0].single("rig.source")->has("frames_per_buffer"));
}

TEST(ConfigLoaderTest, UnreadableFileIsOneIssue) {
  // Expected: errno text for a missing file (ENOENT), no position.
  const LoadedConfig loaded = load_config_file("/nonexistent/tw.toml");
  EXPECT_EQ(messages(loaded), std::vector<std::string>{"/nonexistent/tw.toml: cannot read: No such file or directory"});
  EXPECT_FALSE(load_config("/nonexistent/tw.toml").ok());
}

TEST(ConfigLoaderTest, IntegerIsAcceptedForANumberButNotTheReverse) {
  // Expected: TOML integer 1500 is fine for a float key; 1.5 for an integer key is a type error.
  std::string text = kMinimal;
  text.replace(text.find("index = 0"), 9, "index = 1.5");
  const LoadedConfig loaded = load_config_text(text, "f.toml");
  EXPECT_EQ(messages(loaded), std::vector<std::string>{
      "f.toml:10:9: rig[r1].channel[ch0].index: expected integer, got float (allowed: integer 0..63)"});
}

// Expected output for every file in tests/data/config/bad, written by hand from the files:
// line and column of the offending key or value (of the section header when a key is
// missing), the key path, and the allowed range from option_table.cpp.
const std::map<std::string, std::vector<std::string>>& bad_expectations() {
  static const std::map<std::string, std::vector<std::string>> kExpect = {
      {"unknown_key.toml",
       {"unknown_key.toml:3:1: daemon.log_levl: unknown key (allowed: data_dir, fft_wisdom_path, fft_planner, "
        "log_level, log_file, log_max_bytes, log_max_files, status_interval_s)",
        "unknown_key.toml:5:2: daemom: unknown key (allowed: daemon, http, store, evidence, rig, notify)"}},
      {"wrong_type.toml",
       {"wrong_type.toml:3:21: http.max_event_streams: expected integer, got string (allowed: integer 1..256 streams)",
        "wrong_type.toml:4:11: http.enabled: expected boolean, got integer (allowed: boolean)",
        "wrong_type.toml:23:9: rig[r1].target[t].order: expected number, got array (allowed: number 0.01..1000 x)"}},
      {"out_of_range.toml",
       {"out_of_range.toml:3:22: store.commit_interval_ms: value 5 is out of range (allowed: integer 10..60000 ms)",
        "out_of_range.toml:10:18: rig[r1].source.sample_rate_hz: value 500 is out of range (allowed: number "
        "1000..768000 Hz)",
        "out_of_range.toml:19:15: rig[r1].analysis.overlap_pct: value 99.5 is out of range (allowed: number 0..95 %)"}},
      {"syntax_error.toml",
       {"syntax_error.toml:3:11: TOML syntax error: Error while parsing string: unescaped control characters other "
        "than TAB (U+0009) are explicitly prohibited"}},
      {"bad_enum.toml",
       {"bad_enum.toml:3:13: daemon.log_level: unknown value \"verbose\" (allowed: "
        "trace|debug|info|warn|error|critical|off)",
        // The window list is the spectrum module's (lib/dsp/src/window.cpp), as `analyze` prints it.
        "bad_enum.toml:20:10: rig[r1].analysis.window: unknown window 'hanning'; valid: rect hann hamming "
        "blackman blackman-harris flattop hft95 kaiser:BETA"}},
      {"duplicate_names.toml",
       {"duplicate_names.toml:14:8: rig[r1].channel[ch0].name: duplicate channel name \"ch0\"",
        "duplicate_names.toml:15:9: rig[r1].channel[ch0].index: channel index 0 is used twice",
        "duplicate_names.toml:27:8: rig[r1].rule[high].name: duplicate rule name \"high\""}},
      {"dangling_reference.toml",
       {"dangling_reference.toml:15:16: rig[r1].speed.tach_channel: channel \"ch0\" has role \"vibration\", not "
        "\"tach\"",
        "dangling_reference.toml:20:11: rig[r1].target[bpfo].channel: no channel named \"ch1\" (allowed: ch0)",
        "dangling_reference.toml:28:11: rig[r1].rule[a].reading: reading \"ch9.velocity_rms\" names no channel "
        "\"ch9\" (allowed: ch0)",
        "dangling_reference.toml:33:11: rig[r1].rule[b].reading: reading \"ch0.bpfi.amplitude\" names no target "
        "\"bpfi\" (allowed: bpfo)",
        "dangling_reference.toml:38:11: rig[r1].rule[c].reading: unknown channel metric \"loudness\" (allowed: "
        "rms|peak|crest_factor|kurtosis|velocity_rms)"}},
      {"several_errors.toml",
       {"several_errors.toml:3:13: daemon.log_level: unknown value \"loud\" (allowed: "
        "trace|debug|info|warn|error|critical|off)",
        "several_errors.toml:4:21: daemon.status_interval_s: value 0 is out of range (allowed: number 1..86400 s)",
        "several_errors.toml:7:10: http.listen: listening on \"0.0.0.0\" beyond loopback needs token or token_file",
        "several_errors.toml:10:11: store.db_file: path may not contain \"..\"",
        "several_errors.toml:11:17: store.snapshot_keep: expected integer, got string (allowed: integer 1..1000000 "
        "snapshots)",
        "several_errors.toml:28:11: rig[r1].analysis.average: invalid average \"linear:0\" (allowed: linear:N (N "
        "1..10000), exp:S (S 0.01..86400 s), peak, none)",
        "several_errors.toml:29:20: rig[r1].analysis.envelope_high_hz: value 30000 is above the Nyquist frequency "
        "(allowed: up to 24000 Hz)",
        "several_errors.toml:35:12: rig[r1].rule[v].critical: critical (4) must be above warning (7) when "
        "direction = \"above\""}},
      {"wrong_kind_key.toml",
       {"wrong_kind_key.toml:7:8: rig[r1].source.path: applies only when kind is file|pcm (here kind = "
        "\"synthetic\")",
        "wrong_kind_key.toml:9:1: rig[r1].channel[ch0].sensitivity_v_per_unit: missing required key (allowed: "
        "number 1e-06..1000 V/unit)",
        "wrong_kind_key.toml:13:1: rig[r1].speed.rpm: source = \"fixed\" needs rpm (allowed: number 1..200000 rpm)",
        "wrong_kind_key.toml:15:11: rig[r1].speed.min_rpm: applies only when source is tach|spectrum (here source "
        "= \"fixed\")",
        "wrong_kind_key.toml:17:1: rig[r1].target[gear].teeth: kind = \"mesh\" needs teeth (allowed: integer "
        "1..10000 teeth)",
        "wrong_kind_key.toml:21:1: rig[r1].rule[r].warning: a rule needs warning, critical or preset"}},
      {"no_rig.toml", {"no_rig.toml:1:1: rig: at least one [[rig]] table is required"}},
      {"wrong_shape.toml",
       {"wrong_shape.toml:2:1: daemon: expected [daemon] table, got array",
        "wrong_shape.toml:7:14: http.token_file: set token or token_file, not both",
        "wrong_shape.toml:9:1: rig[has.dot].speed.rpm: source = \"fixed\" needs rpm (allowed: number 1..200000 rpm)",
        "wrong_shape.toml:10:8: rig[has.dot].name: invalid rig name \"has.dot\" (allowed: 1-64 letters, digits, "
        "'-' or '_')",
        "wrong_shape.toml:11:54: rig[has.dot].source.sample_format: unknown value \"s24\" (allowed: s16|s32|f32)",
        "wrong_shape.toml:13:1: rig[has.dot].channel: expected [[rig.channel]] tables, got table",
        "wrong_shape.toml:17:11: notify.exec.command: the program \"page.sh\" must be an absolute path",
        "wrong_shape.toml:20:7: notify.webhook.url: invalid URL \"ftp://example.invalid/hook\" (allowed: "
        "http://... or https://...)"}},

      {"geometry_and_levels.toml",
       {"geometry_and_levels.toml:9:16: rig[r1].source.device_index: set device or device_index, not both",
        "geometry_and_levels.toml:13:9: rig[r1].channel[ch0].index: index 2 is beyond the source's 2 channels "
        "(allowed: 0..1)",
        "geometry_and_levels.toml:23:20: rig[r1].target[bsf].ball_diameter_mm: ball diameter must be smaller than "
        "pitch diameter (39.04 mm)",
        "geometry_and_levels.toml:27:17: rig[r1].target[bsf].tolerance_pct: set tolerance_hz or tolerance_pct, not "
        "both",
        "geometry_and_levels.toml:32:10: rig[r1].rule[p].preset: severity presets apply to CHANNEL.velocity_rms "
        "readings (mm/s)",
        "geometry_and_levels.toml:33:11: rig[r1].rule[p].warning: set levels or preset, not both"}},
  };
  return kExpect;
}

TEST(ConfigLoaderTest, EveryBadConfigGivesItsExactMessages) {
  const std::string dir = testing::test_data("config/bad");
  size_t files = 0;
  for (const auto& entry : std::filesystem::directory_iterator(dir)) {
    if (entry.path().extension() != ".toml") continue;
    ++files;
    const std::string name = entry.path().filename().string();
    SCOPED_TRACE(name);
    const auto it = bad_expectations().find(name);
    ASSERT_NE(it, bad_expectations().end()) << "add an expectation for " << name;
    const LoadedConfig loaded = load_config_text(read_text(entry.path().string()), name);
    EXPECT_FALSE(loaded.ok());
    EXPECT_EQ(messages(loaded), it->second);
  }
  EXPECT_EQ(files, bad_expectations().size());
}

TEST(ConfigLoaderTest, ResultFormListsEveryIssueOnItsOwnLine) {
  // Expected: the 8 issues of several_errors.toml, one per line, as kInvalidArgument (exit 2 class).
  const auto result = load_config(testing::test_data("config/bad/several_errors.toml"));
  ASSERT_FALSE(result.ok());
  EXPECT_EQ(result.error().code, base::ErrorCode::kInvalidArgument);
  EXPECT_EQ(std::count(result.error().message.begin(), result.error().message.end(), '\n'), 7);
}

}  // namespace
}  // namespace tonewarden::config
