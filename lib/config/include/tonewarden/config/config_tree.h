// The effective configuration as a generic tree: every key of every section with its value
// (from the file or the default) and where it came from. Dump, hash and diff work on it.
#pragma once

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "tonewarden/config/option_table.h"

namespace tonewarden::config {

// 1-based line and column in the source file; line 0 means "not from the file".
struct SourcePos {
  std::uint32_t line = 0;
  std::uint32_t column = 0;
};

struct Entry {
  Value value;              // never monostate once present in a Section
  SourcePos pos;            // position of the value in the file (line 0 for defaults)
  bool from_file = false;
};

struct Section {
  const SectionSpec* spec = nullptr;
  std::string label;                                // "rig[bay4].channel[motor-de]"; "" for root
  SourcePos pos;                                    // header position (or parent's)
  std::map<std::string, Entry> values;              // key -> entry (applicable keys only)
  std::map<std::string, std::vector<Section>> children;  // child section path -> instances

  const Entry* find(const std::string& key) const;
  // Typed reads for keys known to be present with a default; fall back if absent.
  std::string get_string(const std::string& key, const std::string& fallback = "") const;
  std::int64_t get_int(const std::string& key, std::int64_t fallback = 0) const;
  double get_float(const std::string& key, double fallback = 0.0) const;
  bool get_bool(const std::string& key, bool fallback = false) const;
  std::vector<std::string> get_list(const std::string& key) const;
  bool has(const std::string& key) const { return find(key) != nullptr; }
  // Position of a key if set in the file, else the section's own position.
  SourcePos pos_of(const std::string& key) const;
  const std::vector<Section>& list(const std::string& child_path) const;
  const Section* single(const std::string& child_path) const;  // first instance or null
};

// Formats a value as TOML ("text", 12, 0.5, true, ["a", "b"]).
std::string value_to_toml(const Value& value);

}  // namespace tonewarden::config
