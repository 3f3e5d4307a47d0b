// Canonical TOML dump of the effective configuration, its hash for run records, and a diff
// of two configurations with the reload behaviour of each changed key (for SIGHUP).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "tonewarden/config/config_tree.h"

namespace tonewarden::config {

struct DumpOptions {
  bool redact_secrets = true;   // secrets print as "<redacted>"
  bool with_help = false;       // one comment line of help above each key
};
// Every applicable key in table order, defaults included. Reparsing an unredacted dump
// yields the same effective configuration (and so the same hash).
std::string dump_toml(const Section& root, const DumpOptions& options = {});

// FNV-1a 64 of the unredacted canonical dump, as 16 lowercase hex digits.
std::string config_hash(const Section& root);
std::uint64_t fnv1a64(std::string_view bytes) noexcept;

struct ConfigChange {
  std::string key;          // rig[bay4].rule[de-velocity].warning
  std::string old_value;    // TOML text; empty when added
  std::string new_value;    // TOML text; empty when removed
  bool reloadable = false;  // true: applies live; false: needs a restart
};
// Keys whose effective value differs, and sections added or removed (by name, or by index
// for unnamed ones). Secrets show as "<redacted>".
std::vector<ConfigChange> diff_configs(const Section& before, const Section& after);
// True if every change can be applied live.
bool all_reloadable(const std::vector<ConfigChange>& changes);

}  // namespace tonewarden::config
