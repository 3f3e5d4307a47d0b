// Child-process runner for tests: fork/exec with pipes for stdin, stdout and stderr.
#include "support/subprocess.h"

#include <fcntl.h>
#include <poll.h>
#include <sys/wait.h>
#include <unistd.h>

#include <csignal>
#include <cstring>

namespace tonewarden::testing {

ProcessResult run_process(const std::vector<std::string>& argv, const std::string& stdin_text) {
  ProcessResult result;
  int in_pipe[2], out_pipe[2], err_pipe[2];
  if (pipe2(in_pipe, O_CLOEXEC) || pipe2(out_pipe, O_CLOEXEC) || pipe2(err_pipe, O_CLOEXEC)) {
    result.stderr_text = "pipe failed";
    return result;
  }
  const pid_t pid = fork();
  if (pid == 0) {
    dup2(in_pipe[0], 0);
    dup2(out_pipe[1], 1);
    dup2(err_pipe[1], 2);
    std::vector<char*> args;
    for (const auto& a : argv) args.push_back(const_cast<char*>(a.c_str()));
    args.push_back(nullptr);
    execv(args[0], args.data());
    std::fprintf(stderr, "exec %s failed: %s\n", args[0], std::strerror(errno));
    _exit(127);
  }
  close(in_pipe[0]);
  close(out_pipe[1]);
  close(err_pipe[1]);
  std::signal(SIGPIPE, SIG_IGN);
  size_t written = 0;
  if (stdin_text.empty()) {
    close(in_pipe[1]);
    in_pipe[1] = -1;
  }
  fcntl(in_pipe[1], F_SETFL, O_NONBLOCK);
  pollfd fds[3] = {{out_pipe[0], POLLIN, 0}, {err_pipe[0], POLLIN, 0}, {in_pipe[1], POLLOUT, 0}};
  int open_outputs = 2;
  char buf[65536];
  while (open_outputs > 0) {
    const int nfds = in_pipe[1] >= 0 ? 3 : 2;
    if (poll(fds, nfds, -1) < 0) {
      if (errno == EINTR) continue;
      break;
    }
    for (int i = 0; i < 2; ++i) {
      if (fds[i].fd >= 0 && (fds[i].revents & (POLLIN | POLLHUP))) {
        const ssize_t n = read(fds[i].fd, buf, sizeof buf);
        if (n > 0) {
          (i == 0 ? result.stdout_text : result.stderr_text).append(buf, static_cast<size_t>(n));
        } else {
          close(fds[i].fd);
          fds[i].fd = -1;
          --open_outputs;
        }
      }
    }
    if (in_pipe[1] >= 0 && (fds[2].revents & (POLLOUT | POLLERR | POLLHUP))) {
      const ssize_t n = write(in_pipe[1], stdin_text.data() + written, stdin_text.size() - written);
      if (n > 0) written += static_cast<size_t>(n);
      if (n < 0 || written == stdin_text.size()) {
        close(in_pipe[1]);
        in_pipe[1] = -1;
      }
    }
  }
  if (in_pipe[1] >= 0) close(in_pipe[1]);
  int status = 0;
  waitpid(pid, &status, 0);
  result.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return result;
}

std::string tonewarden_binary() { return TONEWARDEN_BINARY_PATH; }
std::string reference_script(const std::string& name) {
  return std::string(TONEWARDEN_TEST_SCRIPTS_DIR) + "/" + name;
}
std::string test_data(const std::string& name) {
  return std::string(TONEWARDEN_TEST_DATA_DIR) + "/" + name;
}

}  // namespace tonewarden::testing
