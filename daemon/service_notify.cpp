// sd_notify wrapper; libsystemd already handles a missing NOTIFY_SOCKET as a no-op.
#include "service_notify.h"

#include <systemd/sd-daemon.h>

namespace tonewarden::daemon {

ServiceNotifier::ServiceNotifier() {
  uint64_t usec = 0;
  if (sd_watchdog_enabled(0, &usec) > 0) watchdog_interval_ = std::chrono::microseconds(usec);
}

void ServiceNotifier::ready(const std::string& status) {
  sd_notifyf(0, "READY=1\nSTATUS=%s", status.c_str());
}

void ServiceNotifier::status(const std::string& status) {
  sd_notifyf(0, "STATUS=%s", status.c_str());
}

void ServiceNotifier::stopping() { sd_notify(0, "STOPPING=1"); }

void ServiceNotifier::reloading() { sd_notify(0, "RELOADING=1"); }

void ServiceNotifier::watchdog_tick() {
  if (!watchdog_enabled()) return;
  const auto now = std::chrono::steady_clock::now();
  if (now - last_ping_ >= watchdog_interval_ / 2) {
    sd_notify(0, "WATCHDOG=1");
    last_ping_ = now;
  }
}

}  // namespace tonewarden::daemon
