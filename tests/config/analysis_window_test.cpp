// Focus: [rig.analysis] window accepts every name `tonewarden analyze --window` does, kaiser:BETA
// included, and a bad name or beta is one error at the value's line and column.
#include <gtest/gtest.h>

#include <set>
#include <string>
#include <utility>
#include <vector>

#include "one_rig_text.h"
#include "tonewarden/config/loader.h"
#include "tonewarden/config/option_table.h"

namespace tonewarden::config {
namespace {

using testing::kOneRig;
using testing::messages;

// `window = "NAME"` on line 16; its value starts at column 10.
LoadedConfig with_window(const std::string& name) {
  return load_config_text(std::string(kOneRig) + "\n[rig.analysis]\nwindow = \"" + name + "\"\n", "w.toml");
}

struct Named {
  const char* name;
  WindowKind kind;
};
// The names of `tonewarden analyze --window` (daemon/analyze_command.cpp help text).
constexpr Named kAnalyzerNames[] = {
    {"rect", WindowKind::kRectangular}, {"hann", WindowKind::kHann},
    {"hamming", WindowKind::kHamming},  {"blackman", WindowKind::kBlackman},
    {"blackman-harris", WindowKind::kBlackmanHarris}, {"flattop", WindowKind::kFlatTop},
    {"hft95", WindowKind::kHft95},      {"kaiser:8", WindowKind::kKaiser},
};

TEST(ConfigWindowTest, EveryAnalyzerNameParsesToItsOwnKind) {
  // Expected: each name gives the kind in kAnalyzerNames, and the eight names give eight
  // different kinds, i.e. every WindowKind value (kKaiser is the last of the enum).
  std::set<WindowKind> kinds;
  for (const Named& n : kAnalyzerNames) {
    SCOPED_TRACE(n.name);
    const LoadedConfig loaded = with_window(n.name);
    ASSERT_TRUE(loaded.ok()) << ::testing::PrintToString(messages(loaded));
    EXPECT_EQ(loaded.config.rigs[0].analysis.window, n.kind);
    kinds.insert(loaded.config.rigs[0].analysis.window);
  }
  EXPECT_EQ(kinds.size(), static_cast<size_t>(WindowKind::kKaiser) + 1);
}

TEST(ConfigWindowTest, OptionHelpNamesEveryWindow) {
  // Expected: the help that `check-config --dump` and the docs show names each window.
  const OptionSpec* window = find_option("rig.analysis", "window");
  ASSERT_NE(window, nullptr);
  for (const char* name : {"rect", "hann", "hamming", "blackman,", "blackman-harris", "flattop", "hft95",
                           "kaiser:BETA", "0..50"}) {
    EXPECT_NE(window->help.find(name), std::string_view::npos) << name;
  }
}

TEST(ConfigWindowTest, DefaultIsHannWithNoBeta) {
  // Expected: the table default "hann" (option_table.cpp); beta stays 0 for a non-Kaiser window.
  const LoadedConfig loaded = load_config_text(kOneRig, "d.toml");
  ASSERT_TRUE(loaded.ok()) << ::testing::PrintToString(messages(loaded));
  EXPECT_EQ(loaded.config.rigs[0].analysis.window, WindowKind::kHann);
  EXPECT_EQ(loaded.config.rigs[0].analysis.kaiser_beta, 0.0);
}

TEST(ConfigWindowTest, KaiserKeepsItsBetaAndAcceptsTheRangeEnds) {
  // Expected: the beta written in the name; 0 and 50 are the inclusive ends of [0, 50].
  for (const auto& [name, beta] : std::vector<std::pair<std::string, double>>{
           {"kaiser:8.6", 8.6}, {"kaiser:0", 0.0}, {"kaiser:50", 50.0}, {"kaiser:12", 12.0}}) {
    SCOPED_TRACE(name);
    const LoadedConfig loaded = with_window(name);
    ASSERT_TRUE(loaded.ok()) << ::testing::PrintToString(messages(loaded));
    EXPECT_EQ(loaded.config.rigs[0].analysis.window, WindowKind::kKaiser);
    EXPECT_DOUBLE_EQ(loaded.config.rigs[0].analysis.kaiser_beta, beta);
  }
}

TEST(ConfigWindowTest, BadKaiserBetaIsOneErrorAtTheValue) {
  // Expected: line 16, column 10 (the value), with the spectrum module's wording.
  const std::vector<std::pair<std::string, std::string>> cases = {
      {"kaiser:60", "w.toml:16:10: rig[r1].analysis.window: window 'kaiser:60': kaiser beta must be in [0, 50]"},
      {"kaiser:-0.5",
       "w.toml:16:10: rig[r1].analysis.window: window 'kaiser:-0.5': kaiser beta must be in [0, 50]"},
      {"kaiser:abc",
       "w.toml:16:10: rig[r1].analysis.window: window 'kaiser:abc': kaiser beta must be a number, e.g. kaiser:8"},
      {"kaiser:",
       "w.toml:16:10: rig[r1].analysis.window: window 'kaiser:': kaiser beta must be a number, e.g. kaiser:8"},
      {"kaiser:nan",
       "w.toml:16:10: rig[r1].analysis.window: window 'kaiser:nan': kaiser beta must be a number, e.g. kaiser:8"},
  };
  for (const auto& [name, expected] : cases) {
    SCOPED_TRACE(name);
    EXPECT_EQ(messages(with_window(name)), std::vector<std::string>{expected});
  }
}

TEST(ConfigWindowTest, UnknownNameListsTheValidOnes) {
  // Expected: one positioned error listing the eight choices, for a misspelling and for a
  // bare "kaiser" without its beta.
  for (const char* name : {"hanning", "kaiser", "HANN"}) {
    SCOPED_TRACE(name);
    EXPECT_EQ(messages(with_window(name)),
              std::vector<std::string>{"w.toml:16:10: rig[r1].analysis.window: unknown window '" +
                                       std::string(name) +
                                       "'; valid: rect hann hamming blackman blackman-harris flattop hft95 "
                                       "kaiser:BETA"});
  }
}

TEST(ConfigWindowTest, EarlierConfigSpellingsStillLoad) {
  // Expected: "flat-top" and "rectangular", the names config files used before, map to the
  // same kinds as "flattop" and "rect".
  EXPECT_EQ(with_window("flat-top").config.rigs.at(0).analysis.window, WindowKind::kFlatTop);
  EXPECT_EQ(with_window("rectangular").config.rigs.at(0).analysis.window, WindowKind::kRectangular);
}

TEST(ConfigWindowTest, WrongTypeIsOneTypeError) {
  // Expected: a number is not a window (or average) name: one type error at each value, and no
  // second "unknown window" / "invalid average" message for the same key.
  const LoadedConfig loaded =
      load_config_text(std::string(kOneRig) + "\n[rig.analysis]\nwindow = 4\naverage = 2\n", "w.toml");
  EXPECT_EQ(messages(loaded),
            (std::vector<std::string>{
                "w.toml:16:10: rig[r1].analysis.window: expected string, got integer (allowed: string)",
                "w.toml:17:11: rig[r1].analysis.average: expected string, got integer (allowed: string)"}));
}

}  // namespace
}  // namespace tonewarden::config
