// Flag-only signal handlers plus a self-pipe so the main loop can sleep and still wake at once.
#include "signals.h"

#include <fcntl.h>
#include <poll.h>
#include <unistd.h>

#include <atomic>
#include <csignal>

namespace tonewarden::daemon {
namespace {

std::atomic<int> g_stop{0};
std::atomic<int> g_reload{0};
int g_wake_pipe[2] = {-1, -1};

extern "C" void on_signal(int sig) {
  if (sig == SIGHUP) {
    g_reload.store(1);
  } else {
    g_stop.store(1);
  }
  if (g_wake_pipe[1] >= 0) {
    const int saved = errno;
    const char c = 1;
    [[maybe_unused]] ssize_t n = write(g_wake_pipe[1], &c, 1);
    errno = saved;
  }
}

}  // namespace

void install_signal_handlers() {
  if (g_wake_pipe[0] < 0 && pipe2(g_wake_pipe, O_CLOEXEC | O_NONBLOCK) != 0) {
    g_wake_pipe[0] = g_wake_pipe[1] = -1;
  }
  struct sigaction sa {};
  sa.sa_handler = on_signal;
  sigemptyset(&sa.sa_mask);
  sa.sa_flags = SA_RESTART;
  sigaction(SIGTERM, &sa, nullptr);
  sigaction(SIGINT, &sa, nullptr);
  sigaction(SIGHUP, &sa, nullptr);
  std::signal(SIGPIPE, SIG_IGN);
}

SignalFlags take_signal_flags() {
  SignalFlags f;
  f.stop = g_stop.exchange(0) != 0;
  f.reload = g_reload.exchange(0) != 0;
  return f;
}

void wait_for_signal(int timeout_ms) {
  if (g_wake_pipe[0] < 0) {
    usleep(static_cast<useconds_t>(timeout_ms) * 1000);
    return;
  }
  if (g_stop.load() || g_reload.load()) return;
  pollfd p{g_wake_pipe[0], POLLIN, 0};
  if (poll(&p, 1, timeout_ms) > 0) {
    char buf[64];
    while (read(g_wake_pipe[0], buf, sizeof buf) > 0) {
    }
  }
}

}  // namespace tonewarden::daemon
