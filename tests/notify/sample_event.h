// The alarm event the notify tests send: a critical BPFO activation on rig "bay4" at
// unix 1000000000000 ms (`date -u -d @1000000000`: 2001-09-09 01:46:40 UTC).
#pragma once

#include <string>

#include "tonewarden/notify/notifier.h"

namespace tonewarden::testing {

inline notify::NotifyEvent sample_event(const std::string& rule = "de-bpfo",
                                const std::string& severity = "critical") {
  notify::NotifyEvent e;
  e.t = base::WallTimeMs{1'000'000'000'000};
  e.rig = "bay4";
  e.rule = rule;
  e.reading = "motor-de.bpfo.amplitude";
  e.channel = "motor-de";
  e.severity = severity;
  e.state = "unacknowledged";
  e.previous_state = "normal";
  e.cause = "condition";
  e.value = 0.25;
  e.threshold = 0.2;
  return e;
}

}  // namespace tonewarden::testing
