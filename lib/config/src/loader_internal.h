// Internal steps of the loader, shared between its source files (not installed).
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include <toml++/toml.h>

#include "tonewarden/config/config.h"
#include "tonewarden/config/config_tree.h"
#include "tonewarden/config/loader.h"

namespace tonewarden::config::detail {

// Collects issues for one file.
struct IssueSink {
  std::string file;
  std::vector<ConfigIssue>* issues;
  void add(SourcePos pos, std::string key, std::string message, std::string allowed = {}) const {
    issues->push_back(ConfigIssue{file, pos, std::move(key), std::move(message), std::move(allowed)});
  }
  // True if a problem was already reported for `key` (avoids follow-on noise).
  bool reported(const std::string& key) const {
    for (const auto& i : *issues) {
      if (i.key == key) return true;
    }
    return false;
  }
};

// "rig[bay4].channel[motor-de]" + "index" -> "rig[bay4].channel[motor-de].index".
std::string key_label(const std::string& section_label, std::string_view key);

// Builds the effective tree from a parsed document: unknown keys, types, ranges, enums,
// applicability and required keys. Defaults fill every applicable key left out.
Section build_tree(const toml::table& doc, const IssueSink& sink);

// Checks between keys: names, references, bands against Nyquist, listen address...
void check_semantics(const Section& root, const IssueSink& sink);

// Maps a tree that passed both checks to the plain structs.
Config to_config(const Section& root);

// Parses "linear:N", "exp:S", "peak" or "none". Returns false on bad syntax.
bool parse_average(const std::string& text, AverageMode& mode, std::int64_t& count,
                   double& time_constant_s);

// Parses a window name ("hann", "flattop", "kaiser:8.6"...). On failure returns false and sets
// `error` to a one-line reason (an unknown name lists the valid ones).
bool parse_window(const std::string& text, WindowKind& kind, double& kaiser_beta, std::string& error);

}  // namespace tonewarden::config::detail
