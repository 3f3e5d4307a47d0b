// Focus: the option table is self-consistent, and config/example-rig.toml documents every key.
#include <gtest/gtest.h>

#include <fstream>
#include <regex>
#include <set>
#include <sstream>
#include <string>

#include "tonewarden/config/config.h"
#include "tonewarden/config/option_table.h"

namespace tonewarden::config {
namespace {

std::string read_text(const std::string& path) {
  std::ifstream in(path);
  std::ostringstream ss;
  ss << in.rdbuf();
  return ss.str();
}

const std::string kExamplePath = std::string(TONEWARDEN_SOURCE_DIR) + "/config/example-rig.toml";

TEST(OptionTableTest, EveryDefaultHasItsOptionsTypeAndRange) {
  // Expected: each default matches the row's own type, range and choices (the table is the source).
  for (const OptionSpec& o : option_table()) {
    SCOPED_TRACE(o.path());
    const Value& d = o.default_value;
    if (std::holds_alternative<std::monostate>(d)) continue;
    switch (o.type) {
      case OptionType::kBool: EXPECT_TRUE(std::holds_alternative<bool>(d)); break;
      case OptionType::kInt: {
        ASSERT_TRUE(std::holds_alternative<std::int64_t>(d));
        const double v = static_cast<double>(std::get<std::int64_t>(d));
        EXPECT_GE(v, o.min);
        EXPECT_LE(v, o.max);
        break;
      }
      case OptionType::kFloat: {
        ASSERT_TRUE(std::holds_alternative<double>(d));
        EXPECT_GE(std::get<double>(d), o.min);
        EXPECT_LE(std::get<double>(d), o.max);
        break;
      }
      case OptionType::kString: EXPECT_TRUE(std::holds_alternative<std::string>(d)); break;
      case OptionType::kEnum:
        ASSERT_TRUE(std::holds_alternative<std::string>(d));
        EXPECT_TRUE(choice_contains(o.choices, std::get<std::string>(d)));
        break;
      case OptionType::kStringList: EXPECT_TRUE(std::holds_alternative<std::vector<std::string>>(d)); break;
    }
  }
}

TEST(OptionTableTest, RowsAreUniqueHaveHelpAndKnownSections) {
  // Expected: no key twice in a section, help on every row, and every row's section and
  // discriminator exist (otherwise the loader could never accept the key).
  std::set<std::string> seen;
  for (const OptionSpec& o : option_table()) {
    SCOPED_TRACE(o.path());
    EXPECT_TRUE(seen.insert(o.path()).second);
    EXPECT_FALSE(o.help.empty());
    EXPECT_NE(find_section(o.section), nullptr);
    if (!o.when_key.empty()) {
      const OptionSpec* d = find_option(o.section, o.when_key);
      ASSERT_NE(d, nullptr);
      EXPECT_EQ(d->type, OptionType::kEnum);
    }
    if (o.type == OptionType::kEnum) {
      EXPECT_FALSE(o.choices.empty());
    }
  }
}

TEST(OptionTableTest, AllowedTextNamesRangeAndUnit) {
  // Expected strings follow from the rows for these keys (defined in option_table.cpp).
  EXPECT_EQ(find_option("rig.source", "sample_rate_hz")->allowed(), "number 1000..768000 Hz");
  EXPECT_EQ(find_option("store", "commit_interval_ms")->allowed(), "integer 10..60000 ms");
  EXPECT_EQ(find_option("daemon", "log_level")->allowed(), "trace|debug|info|warn|error|critical|off");
  EXPECT_EQ(find_option("rig.rule", "warning")->allowed(), "number");
}

TEST(OptionTableTest, SeverityPresetsMatchTheEnumChoices) {
  // Expected: the preset enum is exactly "none" plus the preset list, so every accepted name resolves.
  const OptionSpec* preset = find_option("rig.rule", "preset");
  ASSERT_NE(preset, nullptr);
  std::string names = "none";
  for (const SeverityPreset& p : severity_presets()) names += std::string("|") + p.name;
  EXPECT_EQ(std::string(preset->choices), names);
}

TEST(OptionTableTest, SeverityPresetZonesAreOrdered) {
  // ISO 10816-3 (from memory) group 3, rigid foundation: B/C 4.5 mm/s, C/D 7.1 mm/s.
  const SeverityPreset* g3 = find_severity_preset("iso10816-3-g3-rigid");
  ASSERT_NE(g3, nullptr);
  EXPECT_DOUBLE_EQ(g3->warning_mm_s, 4.5);
  EXPECT_DOUBLE_EQ(g3->critical_mm_s, 7.1);
  for (const SeverityPreset& p : severity_presets()) EXPECT_LT(p.warning_mm_s, p.critical_mm_s) << p.name;
  EXPECT_EQ(find_severity_preset("none"), nullptr);
}

// Lines of the example, active or commented out: "[section]" headers and "key = value" lines.
struct ExampleScan {
  std::set<std::string> documented;          // "section.key"
  std::vector<std::string> undocumented;     // key lines without a comment beside them
};

ExampleScan scan_example(const std::string& text) {
  static const std::regex kHeader(R"(^\s*#?\s*\[\[?([a-z_.]+)\]\]?.*$)");
  static const std::regex kKey(R"(^\s*(#?)\s*([a-z0-9_]+)\s*=(.*)$)");
  ExampleScan scan;
  std::string section;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) {
    std::smatch m;
    if (std::regex_match(line, m, kHeader)) {
      section = m[1];
      continue;
    }
    if (std::regex_match(line, m, kKey)) {
      scan.documented.insert(section + "." + std::string(m[2]));
      // A comment must follow the value on the same line ("#" after the "=").
      if (std::string(m[3]).find('#') == std::string::npos) scan.undocumented.push_back(line);
    }
  }
  return scan;
}

TEST(OptionTableTest, ExampleRigDocumentsEveryOptionBesideIt) {
  // Expected: every row of the option table appears in config/example-rig.toml under its own
  // section header (as a setting or a commented alternative), each with a comment beside it.
  const std::string text = read_text(kExamplePath);
  ASSERT_FALSE(text.empty()) << kExamplePath;
  const ExampleScan scan = scan_example(text);
  for (const OptionSpec& o : option_table()) {
    EXPECT_TRUE(scan.documented.count(o.path()) == 1) << o.path() << " is missing from example-rig.toml";
  }
  for (const std::string& line : scan.undocumented) ADD_FAILURE() << "no comment beside: " << line;
  for (const std::string& key : scan.documented) {
    const auto dot = key.rfind('.');
    EXPECT_NE(find_option(key.substr(0, dot), key.substr(dot + 1)), nullptr) << key << " is not in the table";
  }
}

TEST(OptionTableTest, BothShippedConfigsCarryTheSafetyCaution) {
  // Expected: the caution wording of DESIGN.md's safety section in both headers.
  for (const char* name : {"/config/demo.toml", "/config/example-rig.toml"}) {
    const std::string text = read_text(std::string(TONEWARDEN_SOURCE_DIR) + name);
    EXPECT_NE(text.find("not a machinery-protection or safety-rated"), std::string::npos) << name;
    EXPECT_NE(text.find("local codes"), std::string::npos) << name;
  }
}

}  // namespace
}  // namespace tonewarden::config
