// Runs a child process for tests (the tonewarden binary, Debian's python3 with scipy) and
// captures its output. No shell is involved: arguments are passed as they are.
#pragma once

#include <string>
#include <vector>

namespace tonewarden::testing {

struct ProcessResult {
  int exit_code = -1;    // -1 if it did not exit normally
  std::string stdout_text;
  std::string stderr_text;
};

// argv[0] is the program path. `stdin_text` is written to the child's stdin.
ProcessResult run_process(const std::vector<std::string>& argv, const std::string& stdin_text = "");

// The tonewarden binary built with the tests.
std::string tonewarden_binary();
// Debian's interpreter with numpy/scipy (the first python3 on PATH may lack them).
inline constexpr const char* kReferencePython = "/usr/bin/python3";
// Path of a script in tests/reference/scripts.
std::string reference_script(const std::string& name);
// Path of a file in tests/data.
std::string test_data(const std::string& name);

}  // namespace tonewarden::testing
