// SIGHUP: re-reads the configuration. An invalid file is rejected and the running
// configuration stays. Reloadable keys apply live (log level; a rig whose targets or rules
// changed is rebuilt in place, its history continuing); other changed keys are reported as
// needing a restart and keep their running values.
#pragma once

#include <vector>

#include "daemon.h"
#include "rig_factory.h"
#include "tonewarden/config/loader.h"

namespace tonewarden::daemon {

class WebServer;

// `loaded` and `cfg` are the running configuration; they are updated when the reload applies.
// Returns true if the new file was accepted.
bool reload_config(const DaemonOptions& options, config::LoadedConfig& loaded, config::Config& cfg,
                   std::vector<Rig>& rigs, WebServer& web, const RigBuildOptions& build_options);

}  // namespace tonewarden::daemon
