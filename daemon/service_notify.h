// Service-manager notifications (sd_notify): READY, STATUS, WATCHDOG, STOPPING.
// Every call is a no-op when the daemon is not run by systemd (no NOTIFY_SOCKET).
#pragma once

#include <chrono>
#include <string>

namespace tonewarden::daemon {

class ServiceNotifier {
 public:
  ServiceNotifier();
  void ready(const std::string& status);
  void status(const std::string& status);
  void stopping();
  void reloading();
  // Sends WATCHDOG=1 if the watchdog is enabled and half its interval has passed.
  void watchdog_tick();
  bool watchdog_enabled() const { return watchdog_interval_.count() > 0; }

 private:
  std::chrono::microseconds watchdog_interval_{0};
  std::chrono::steady_clock::time_point last_ping_{};
};

}  // namespace tonewarden::daemon
