// The option table: every configuration key with its type, default, range, unit, reload
// behaviour and help. Parsing, validation, `check-config`, the dump and the diff all read it.
#pragma once

#include <cstdint>
#include <limits>
#include <span>
#include <string>
#include <string_view>
#include <variant>
#include <vector>

namespace tonewarden::config {

enum class OptionType { kBool, kInt, kFloat, kString, kEnum, kStringList };
const char* to_string(OptionType type) noexcept;

// A configuration value. Floats accept TOML integers too (rpm = 2975 is fine).
using Value = std::variant<std::monostate, bool, std::int64_t, double, std::string,
                           std::vector<std::string>>;

// A table in the file: "daemon", "rig" (array), "rig.channel" (array inside each rig)...
struct SectionSpec {
  std::string_view path;         // dotted path from the root, no indices
  bool is_array = false;         // [[path]] (array of tables) rather than [path]
  bool required = false;         // at least one instance (arrays) / must be present (tables)
  bool reloadable = false;       // may instances be added or removed while running?
  std::string_view name_key;     // key naming array instances ("name"), empty if none
  std::string_view help;
};

struct OptionSpec {
  std::string_view section;      // SectionSpec::path
  std::string_view key;          // key inside the section
  OptionType type = OptionType::kString;
  Value default_value;           // monostate: no default (optional, or required below)
  bool required = false;         // must be given (when it applies)
  double min = -std::numeric_limits<double>::infinity();  // inclusive, numbers only
  double max = std::numeric_limits<double>::infinity();   // inclusive, numbers only
  std::string_view unit;         // shown with the range; empty if dimensionless
  std::string_view choices;      // kEnum: "a|b|c"
  bool reloadable = false;       // applies live on SIGHUP; else needs a restart
  bool secret = false;           // redacted in dumps shown to people
  // Applies only when another key of the same section has one of these values:
  // when_key = "kind", when_values = "device|pcm". Empty: always applies.
  std::string_view when_key;
  std::string_view when_values;
  // Another key of the same section that replaces this one: when it is given, this key gets
  // no default, and giving both is an error.
  std::string_view excluded_by;
  std::string_view help;

  std::string path() const;                // "rig.channel.sensitivity_v_per_unit"
  std::string allowed() const;             // "0.0001..100 V/unit", "trace|debug|...", "string"
};

std::span<const SectionSpec> section_table();
std::span<const OptionSpec> option_table();

const SectionSpec* find_section(std::string_view path);
const OptionSpec* find_option(std::string_view section, std::string_view key);
// Options of one section, in table order.
std::vector<const OptionSpec*> options_of(std::string_view section);
// Direct child sections of `section` ("" for the root), in table order.
std::vector<const SectionSpec*> children_of(std::string_view section);
// True if `value` is one of the '|'-separated `choices`.
bool choice_contains(std::string_view choices, std::string_view value);

}  // namespace tonewarden::config
