// Loads a TOML configuration: syntax, unknown keys, types, ranges and cross-references are
// all checked, and every problem is collected (not just the first) with file:line:column.
#pragma once

#include <string>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/config/config.h"
#include "tonewarden/config/config_tree.h"

namespace tonewarden::config {

// One problem in a config file. Formats as "FILE:LINE:COL: key: message (allowed: ...)".
struct ConfigIssue {
  std::string file;
  SourcePos pos;
  std::string key;       // dotted path with instance names: rig[bay4].channel[motor-de].index
  std::string message;
  std::string allowed;   // empty when there is nothing useful to say
};
std::string format_issue(const ConfigIssue& issue);

struct LoadedConfig {
  std::string file;                  // name used in messages
  Section tree;                      // effective values (file + defaults); valid if issues empty
  Config config;                     // filled only when issues is empty
  std::vector<ConfigIssue> issues;   // sorted by line, then column
  bool ok() const { return issues.empty(); }
};

// Parses `text`, naming it `file_name` in messages. Never throws.
LoadedConfig load_config_text(const std::string& text, const std::string& file_name);
// Reads and parses a file; an unreadable file is one issue at line 0.
LoadedConfig load_config_file(const std::string& path);

// Convenience for callers that want a Result: the config, or an error whose message lists
// every issue on its own line.
base::Result<Config> load_config(const std::string& path);

}  // namespace tonewarden::config
