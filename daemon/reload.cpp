// Configuration reload on SIGHUP.
#include "reload.h"

#include <set>
#include <utility>

#include "tonewarden/base/log.h"
#include "tonewarden/config/dump.h"
#include "web_server.h"

namespace tonewarden::daemon {
namespace {

// "rig[bay4].rule[x].warning" -> "bay4"; "" when the key is not inside a rig.
std::string rig_of_key(const std::string& key) {
  if (key.rfind("rig[", 0) != 0) return "";
  const auto end = key.find(']');
  return end == std::string::npos ? "" : key.substr(4, end - 4);
}

}  // namespace

bool reload_config(const DaemonOptions& options, config::LoadedConfig& loaded, config::Config& cfg,
                   std::vector<Rig>& rigs, WebServer& web, const RigBuildOptions& build_options) {
  base::log_info("reload: reading " + options.config_path);
  config::LoadedConfig next = config::load_config_file(options.config_path);
  if (!next.ok()) {
    base::log_error("reload: rejected; the running configuration stays. " +
                    std::to_string(next.issues.size()) + " problem(s):");
    for (const auto& issue : next.issues) base::log_error("  " + config::format_issue(issue));
    return false;
  }
  const std::vector<config::ConfigChange> changes = config::diff_configs(loaded.tree, next.tree);
  if (changes.empty()) {
    base::log_info("reload: no changes");
    return true;
  }
  std::set<std::string> rigs_to_rebuild;
  size_t restart_needed = 0;
  for (const auto& ch : changes) {
    if (!ch.reloadable) {
      ++restart_needed;
      base::log_warn("reload: " + ch.key + " changed (" + ch.old_value + " -> " + ch.new_value +
                     "): needs a restart; the running value stays");
      continue;
    }
    const std::string rig = rig_of_key(ch.key);
    if (!rig.empty()) rigs_to_rebuild.insert(rig);
    base::log_info("reload: " + ch.key + ": " + ch.old_value + " -> " + ch.new_value);
  }
  if (restart_needed > 0) {
    // Keep running values for keys that cannot change live: apply only the reloadable parts
    // that we know how to apply, and keep the running tree so the next diff still shows them.
    base::log_warn("reload: " + std::to_string(restart_needed) +
                   " changed key(s) need a restart; reloadable changes apply now");
  }

  config::Config merged = cfg;
  merged.daemon.log_level = next.config.daemon.log_level;
  base::set_log_level(to_log_level(merged.daemon.log_level));
  for (const std::string& name : rigs_to_rebuild) {
    const config::RigConfig* fresh = nullptr;
    for (const auto& r : next.config.rigs) {
      if (r.name == name) fresh = &r;
    }
    if (!fresh) continue;  // an added or removed rig needs a restart
    for (size_t i = 0; i < rigs.size(); ++i) {
      if (rigs[i].name != name) continue;
      // Keep what needs a restart (source, channels, analysis) from the running rig.
      config::RigConfig updated = merged.rigs[i];
      updated.description = fresh->description;
      updated.targets = fresh->targets;
      updated.rules = fresh->rules;
      auto monitor = build_monitor(updated, *rigs[i].pipeline, build_options, rigs[i].evidence.get());
      if (!monitor) {
        base::log_error("reload: rig '" + name + "' keeps its running targets and rules: " +
                        monitor.error().message);
        continue;
      }
      // Operator commands go to the new monitor from here on. The pipeline keeps capturing;
      // between two blocks the new monitor takes over the old one's alarm states and the
      // commands still queued there, then the old one goes.
      std::unique_ptr<pipeline::RigMonitor> old;
      {
        auto guard = web.lock_rigs_for_change();
        old = std::exchange(rigs[i].monitor, std::move(monitor).value());
      }
      rigs[i].pipeline->swap_observer(old.get(), rigs[i].monitor.get());
      merged.rigs[i] = updated;
      base::log_info("reload: rig '" + name + "' now runs its new targets and rules");
    }
  }
  cfg = merged;
  if (restart_needed == 0) loaded = std::move(next);
  return true;
}

}  // namespace tonewarden::daemon
