// Focus: the [evidence] section (raw clips around alarms): defaults, ranges, the clip-length
// check, and that its keys need a restart.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "one_rig_text.h"
#include "tonewarden/config/dump.h"
#include "tonewarden/config/loader.h"
#include "tonewarden/config/option_table.h"

namespace tonewarden::config {
namespace {

using testing::kOneRig;
using testing::messages;

// The [evidence] header on line 15, the given lines from line 16 on.
LoadedConfig with_evidence(const std::string& lines) {
  return load_config_text(std::string(kOneRig) + "\n[evidence]\n" + lines, "e.toml");
}

TEST(ConfigEvidenceTest, DefaultsWhenTheSectionIsLeftOut) {
  // Expected: the defaults in option_table.cpp: on, 10 s before, 10 s after, 2048 MB, 60 s.
  const LoadedConfig loaded = load_config_text(kOneRig, "d.toml");
  ASSERT_TRUE(loaded.ok()) << ::testing::PrintToString(messages(loaded));
  const EvidenceConfig& e = loaded.config.evidence;
  EXPECT_TRUE(e.enabled);
  EXPECT_DOUBLE_EQ(e.pre_s, 10);
  EXPECT_DOUBLE_EQ(e.post_s, 10);
  EXPECT_DOUBLE_EQ(e.max_total_mb, 2048);
  EXPECT_DOUBLE_EQ(e.min_interval_s, 60);
}

TEST(ConfigEvidenceTest, ValuesFromTheFileReachTheStruct) {
  // Expected: the values written below, integers accepted for the float keys.
  const LoadedConfig loaded =
      with_evidence("enabled = false\npre_s = 2.5\npost_s = 120\nmax_total_mb = 1\nmin_interval_s = 0\n");
  ASSERT_TRUE(loaded.ok()) << ::testing::PrintToString(messages(loaded));
  const EvidenceConfig& e = loaded.config.evidence;
  EXPECT_FALSE(e.enabled);
  EXPECT_DOUBLE_EQ(e.pre_s, 2.5);
  EXPECT_DOUBLE_EQ(e.post_s, 120);
  EXPECT_DOUBLE_EQ(e.max_total_mb, 1);
  EXPECT_DOUBLE_EQ(e.min_interval_s, 0);
}

TEST(ConfigEvidenceTest, OutOfRangeValuesArePositioned) {
  // Expected: each value just past its range in option_table.cpp, reported at its line and
  // value column with the allowed range and unit.
  const LoadedConfig loaded = with_evidence(
      "pre_s = 120.5\npost_s = -1\nmax_total_mb = 0.5\nmin_interval_s = 86401\nenabled = \"yes\"\n");
  EXPECT_EQ(messages(loaded),
            (std::vector<std::string>{
                "e.toml:16:9: evidence.pre_s: value 120.5 is out of range (allowed: number 0..120 s)",
                "e.toml:17:10: evidence.post_s: value -1 is out of range (allowed: number 0..120 s)",
                "e.toml:18:16: evidence.max_total_mb: value 0.5 is out of range (allowed: number 1..1000000 MB)",
                "e.toml:19:18: evidence.min_interval_s: value 86401 is out of range (allowed: number 0..86400 s)",
                "e.toml:20:11: evidence.enabled: expected boolean, got string (allowed: boolean)"}));
  const LoadedConfig top = with_evidence("max_total_mb = 1000001\n");
  EXPECT_EQ(messages(top), std::vector<std::string>{"e.toml:16:16: evidence.max_total_mb: value 1000001 is out of "
                                                    "range (allowed: number 1..1000000 MB)"});
}

TEST(ConfigEvidenceTest, UnknownKeyListsTheEvidenceKeys) {
  // Expected: the five keys of the section, in table order.
  EXPECT_EQ(messages(with_evidence("pre_seconds = 5\n")),
            std::vector<std::string>{"e.toml:16:1: evidence.pre_seconds: unknown key (allowed: enabled, pre_s, "
                                     "post_s, max_total_mb, min_interval_s)"});
}

TEST(ConfigEvidenceTest, EnabledClipsNeedSomeLength) {
  // Expected: pre_s + post_s = 0 with enabled is one error at post_s; a zero on one side only,
  // or the same zeros with enabled = false, is fine.
  EXPECT_EQ(messages(with_evidence("pre_s = 0\npost_s = 0\n")),
            std::vector<std::string>{"e.toml:17:10: evidence.post_s: pre_s + post_s must be above 0 when enabled "
                                     "(set enabled = false for no clips)"});
  EXPECT_TRUE(with_evidence("pre_s = 0\npost_s = 0.5\n").ok());
  EXPECT_TRUE(with_evidence("pre_s = 3\npost_s = 0\n").ok());
  EXPECT_TRUE(with_evidence("enabled = false\npre_s = 0\npost_s = 0\n").ok());
}

TEST(ConfigEvidenceTest, AnOutOfRangeSideGivesNoSecondError) {
  // Expected: only the range error for pre_s; the sum check does not guess at its value.
  EXPECT_EQ(messages(with_evidence("pre_s = -3\npost_s = 0\n")),
            std::vector<std::string>{"e.toml:16:9: evidence.pre_s: value -3 is out of range (allowed: number 0..120 s)"});
}

TEST(ConfigEvidenceTest, KeysNeedARestartAndAppearInTheDump) {
  // Expected: none of the keys is live (the recorder reads them at start), so a change shows
  // as "needs a restart" in the reload diff; the dump carries the section with its defaults.
  for (const OptionSpec* o : options_of("evidence")) EXPECT_FALSE(o->reloadable) << o->path();
  EXPECT_EQ(options_of("evidence").size(), 5u);
  const LoadedConfig before = load_config_text(kOneRig, "a.toml");
  const LoadedConfig after = with_evidence("pre_s = 30\n");
  ASSERT_TRUE(before.ok());
  ASSERT_TRUE(after.ok());
  const auto changes = diff_configs(before.tree, after.tree);
  ASSERT_EQ(changes.size(), 1u);
  EXPECT_EQ(changes[0].key, "evidence.pre_s");
  EXPECT_EQ(changes[0].old_value, "10.0");
  EXPECT_EQ(changes[0].new_value, "30.0");
  EXPECT_FALSE(changes[0].reloadable);
  const std::string dump = dump_toml(before.tree);
  EXPECT_NE(dump.find("[evidence]\nenabled = true\npre_s = 10.0\npost_s = 10.0\nmax_total_mb = 2048.0\n"
                      "min_interval_s = 60.0\n"),
            std::string::npos)
      << dump;
}

}  // namespace
}  // namespace tonewarden::config
