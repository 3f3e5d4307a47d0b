// Exec hook: runs a configured command with the event in environment variables, time-limited.
// Variables: TONEWARDEN_RIG, _RULE, _READING, _CHANNEL, _SEVERITY, _STATE, _PREVIOUS_STATE,
// _CAUSE, _VALUE, _THRESHOLD, _TIME (RFC 3339), _USER, _COMMENT, _EVIDENCE (the raw clip's path,
// written a few seconds after an activation), and TONEWARDEN_EVENT_JSON.
#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstring>
#include <thread>

#include "tonewarden/notify/notifier.h"

extern char** environ;

namespace tonewarden::notify {
namespace {

using base::ErrorCode;
using base::make_error;

std::string number_text(double v) {
  if (!std::isfinite(v)) return "";
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.9g", v);
  return buf;
}

class ExecSink final : public Sink {
 public:
  explicit ExecSink(const ExecConfig& c) : config_(c) { min_severity = c.min_severity; }

  base::Status deliver(const NotifyEvent& e) override {
    std::vector<std::string> env_strings;
    for (char** p = environ; *p; ++p) {
      if (std::strncmp(*p, "TONEWARDEN_", 11) != 0) env_strings.emplace_back(*p);
    }
    auto set = [&](const char* k, const std::string& v) { env_strings.push_back(std::string("TONEWARDEN_") + k + "=" + v); };
    set("RIG", e.rig);
    set("RULE", e.rule);
    set("READING", e.reading);
    set("CHANNEL", e.channel);
    set("SEVERITY", e.severity);
    set("STATE", e.state);
    set("PREVIOUS_STATE", e.previous_state);
    set("CAUSE", e.cause);
    set("VALUE", number_text(e.value));
    set("THRESHOLD", number_text(e.threshold));
    set("TIME", base::format_rfc3339(e.t));
    set("USER", e.user);
    set("COMMENT", e.comment);
    set("EVIDENCE", e.evidence);
    set("EVENT_JSON", to_json(e));
    std::vector<char*> envp, argv;
    for (auto& s : env_strings) envp.push_back(s.data());
    envp.push_back(nullptr);
    std::vector<std::string> args = config_.argv;
    for (auto& s : args) argv.push_back(s.data());
    argv.push_back(nullptr);

    const pid_t pid = fork();
    if (pid < 0) return base::errno_error(ErrorCode::kUnavailable, "exec hook: fork", errno);
    if (pid == 0) {
      execve(argv[0], argv.data(), envp.data());
      _exit(127);
    }
    const auto deadline = std::chrono::steady_clock::now() + config_.timeout;
    int status = 0;
    bool term_sent = false;
    auto kill_at = deadline + std::chrono::seconds(1);
    while (true) {
      const pid_t r = waitpid(pid, &status, WNOHANG);
      if (r == pid) break;
      const auto now = std::chrono::steady_clock::now();
      if (!term_sent && now >= deadline) {
        kill(pid, SIGTERM);
        term_sent = true;
      } else if (term_sent && now >= kill_at) {
        kill(pid, SIGKILL);
        waitpid(pid, &status, 0);
        break;
      }
      std::this_thread::sleep_for(std::chrono::milliseconds(10));
    }
    if (term_sent) {
      return make_error(ErrorCode::kUnavailable, "exec hook " + config_.argv[0] + " ran past its " +
                                                     std::to_string(config_.timeout.count()) + " ms limit and was stopped");
    }
    if (WIFEXITED(status) && WEXITSTATUS(status) == 0) return base::Status::success();
    if (WIFEXITED(status) && WEXITSTATUS(status) == 127) {
      return make_error(ErrorCode::kNotFound, "exec hook " + config_.argv[0] + " could not be started");
    }
    return make_error(ErrorCode::kUnavailable, "exec hook " + config_.argv[0] + " exited with " +
                                                   (WIFEXITED(status) ? std::to_string(WEXITSTATUS(status))
                                                                      : "signal " + std::to_string(WTERMSIG(status))));
  }

  int max_attempts() const override { return 1; }  // a hook that acts on a rig is not repeated
  std::string describe() const override { return "exec hook " + config_.argv[0]; }

 private:
  ExecConfig config_;
};

}  // namespace

base::Result<std::unique_ptr<Sink>> make_exec_sink(const ExecConfig& c) {
  if (c.argv.empty() || c.argv[0].empty() || c.argv[0][0] != '/') {
    return make_error(ErrorCode::kInvalidArgument, "exec hook command must start with an absolute path");
  }
  if (c.timeout.count() < 1) return make_error(ErrorCode::kInvalidArgument, "exec hook timeout must be >= 1 ms");
  return std::unique_ptr<Sink>(new ExecSink(c));
}

}  // namespace tonewarden::notify
