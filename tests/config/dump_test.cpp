// Focus: the canonical dump reparses to the same configuration and hash; FNV-1a against its
// published vectors; the diff lists changed keys with their reload behaviour.
#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

#include "tonewarden/config/dump.h"
#include "tonewarden/config/loader.h"

namespace tonewarden::config {
namespace {

std::string read_text(const std::string& path) {
  std::ifstream in(path);
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

std::string demo_text() { return read_text(std::string(TONEWARDEN_SOURCE_DIR) + "/config/demo.toml"); }

// Replaces the first occurrence of `from` (which must exist) with `to`.
std::string edit(std::string text, const std::string& from, const std::string& to) {
  const auto at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  if (at != std::string::npos) text.replace(at, from.size(), to);
  return text;
}

TEST(ConfigDumpTest, Fnv1a64MatchesPublishedVectors) {
  // FNV-1a 64 test vectors from the FNV reference (Fowler/Noll/Vo test suite): "", "a", "foobar".
  EXPECT_EQ(fnv1a64(""), 0xcbf29ce484222325ULL);
  EXPECT_EQ(fnv1a64("a"), 0xaf63dc4c8601ec8cULL);
  EXPECT_EQ(fnv1a64("foobar"), 0x85944171f73967e8ULL);
}

TEST(ConfigDumpTest, DumpReparsesToTheSameHashForBothShippedConfigs) {
  // Expected: dump -> parse -> dump is a fixed point, so the hash of a run record is stable.
  for (const char* rel : {"/config/demo.toml", "/config/example-rig.toml"}) {
    const LoadedConfig a = load_config_text(read_text(std::string(TONEWARDEN_SOURCE_DIR) + rel), rel);
    ASSERT_TRUE(a.ok()) << rel;
    DumpOptions full;
    full.redact_secrets = false;
    const std::string dumped = dump_toml(a.tree, full);
    const LoadedConfig b = load_config_text(dumped, "dump.toml");
    ASSERT_TRUE(b.ok()) << (b.issues.empty() ? "" : format_issue(b.issues[0]));
    EXPECT_EQ(config_hash(a.tree), config_hash(b.tree)) << rel;
    EXPECT_EQ(dump_toml(b.tree, full), dumped);
    EXPECT_TRUE(diff_configs(a.tree, b.tree).empty());
  }
}

TEST(ConfigDumpTest, DumpWithHelpStillParses) {
  // Expected: help comments do not change the configuration (same hash as without them).
  const LoadedConfig a = load_config_text(demo_text(), "demo.toml");
  ASSERT_TRUE(a.ok());
  DumpOptions o;
  o.redact_secrets = false;
  o.with_help = true;
  const LoadedConfig b = load_config_text(dump_toml(a.tree, o), "dump.toml");
  ASSERT_TRUE(b.ok());
  EXPECT_EQ(config_hash(a.tree), config_hash(b.tree));
}

TEST(ConfigDumpTest, HashChangesWithAnyValueAndIgnoresComments) {
  // Expected: a default written out explicitly, or a comment, leaves the effective config and
  // hash alone; a changed value does not.
  const std::string text = demo_text();
  const std::string base = config_hash(load_config_text(text, "a").tree);
  EXPECT_EQ(config_hash(load_config_text(text + "\n# a comment\n", "b").tree), base);
  EXPECT_EQ(config_hash(load_config_text(edit(text, "[http]\n", "[http]\nthreads = 4\n"), "c").tree), base);
  EXPECT_NE(config_hash(load_config_text(edit(text, "seed = 4", "seed = 5"), "d").tree), base);
  EXPECT_EQ(base.size(), 16u);
}

TEST(ConfigDumpTest, SecretsAreRedactedInTheDumpButNotInTheHash) {
  // Expected: the token text never appears in the people-facing dump; changing it changes the hash.
  const std::string with_token = edit(demo_text(), "[http]\n", "[http]\ntoken = \"s3cret-value\"\n");
  const LoadedConfig a = load_config_text(with_token, "a");
  ASSERT_TRUE(a.ok());
  const std::string shown = dump_toml(a.tree);
  EXPECT_EQ(shown.find("s3cret-value"), std::string::npos);
  EXPECT_NE(shown.find("token = \"<redacted>\""), std::string::npos);
  const LoadedConfig b = load_config_text(edit(with_token, "s3cret-value", "other-value"), "b");
  EXPECT_NE(config_hash(a.tree), config_hash(b.tree));
  const auto changes = diff_configs(a.tree, b.tree);
  ASSERT_EQ(changes.size(), 1u);
  EXPECT_EQ(changes[0].key, "http.token");
  EXPECT_EQ(changes[0].old_value, "\"<redacted>\"");
}

TEST(ConfigDiffTest, ListsChangedKeysWithReloadBehaviour) {
  // Expected reload flags come from the option table: rule levels and log_level are live;
  // block_samples (FFT plans) and the listen address need a restart.
  const std::string before = demo_text();
  std::string after = edit(before, "warning = 0.02", "warning = 0.03");
  after = edit(after, "log_level = \"info\"", "log_level = \"debug\"");
  after = edit(after, "block_samples = 16384", "block_samples = 32768");
  after = edit(after, "127.0.0.1:8765", "127.0.0.1:9000");
  const LoadedConfig a = load_config_text(before, "a");
  const LoadedConfig b = load_config_text(after, "b");
  ASSERT_TRUE(a.ok() && b.ok());
  const auto changes = diff_configs(a.tree, b.tree);
  ASSERT_EQ(changes.size(), 4u);
  EXPECT_EQ(changes[0].key, "daemon.log_level");
  EXPECT_EQ(changes[0].old_value, "\"info\"");
  EXPECT_EQ(changes[0].new_value, "\"debug\"");
  EXPECT_TRUE(changes[0].reloadable);
  EXPECT_EQ(changes[1].key, "http.listen");
  EXPECT_FALSE(changes[1].reloadable);
  EXPECT_EQ(changes[2].key, "rig[bay4-pump].analysis.block_samples");
  EXPECT_FALSE(changes[2].reloadable);
  EXPECT_EQ(changes[3].key, "rig[bay4-pump].rule[motor-de-bpfo].warning");
  EXPECT_EQ(changes[3].old_value, "0.02");
  EXPECT_EQ(changes[3].new_value, "0.03");
  EXPECT_TRUE(changes[3].reloadable);
  EXPECT_FALSE(all_reloadable(changes));
}

TEST(ConfigDiffTest, AddedRuleIsLiveAddedChannelNeedsRestart) {
  // Expected: [[rig.rule]] instances may come and go live; [[rig.channel]] changes the capture
  // layout and needs a restart (section flags in option_table.cpp).
  const std::string before = demo_text();
  const std::string rule = "\n[[rig.rule]]\nname = \"pump-vane\"\nreading = \"pump-nde.vane-pass.amplitude\"\nwarning = 0.5\n";
  const LoadedConfig a = load_config_text(before, "a");
  const LoadedConfig b = load_config_text(before + rule, "b");
  ASSERT_TRUE(b.ok()) << (b.issues.empty() ? "" : format_issue(b.issues[0]));
  auto changes = diff_configs(a.tree, b.tree);
  ASSERT_EQ(changes.size(), 1u);
  EXPECT_EQ(changes[0].key, "rig[bay4-pump].rule[pump-vane]");
  EXPECT_EQ(changes[0].old_value, "");
  EXPECT_EQ(changes[0].new_value, "[section]");
  EXPECT_TRUE(all_reloadable(changes));

  const std::string device_rig = R"(
[[rig]]
name = "r1"
[rig.source]
kind = "device"
channels = 4
[[rig.channel]]
name = "ch0"
index = 0
sensitivity_v_per_unit = 0.1
[rig.speed]
rpm = 1500
)";
  const std::string spare = "[[rig.channel]]\nname = \"spare\"\nindex = 3\nsensitivity_v_per_unit = 0.1\n";
  const LoadedConfig c = load_config_text(device_rig, "c");
  const LoadedConfig d = load_config_text(edit(device_rig, "[rig.speed]", spare + "[rig.speed]"), "d");
  ASSERT_TRUE(c.ok() && d.ok());
  changes = diff_configs(c.tree, d.tree);
  ASSERT_EQ(changes.size(), 1u);
  EXPECT_EQ(changes[0].key, "rig[r1].channel[spare]");
  EXPECT_FALSE(changes[0].reloadable);
}

}  // namespace
}  // namespace tonewarden::config
