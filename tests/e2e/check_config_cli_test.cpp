// Focus: `tonewarden check-config` end to end: exit codes 0 and 2, one line per problem, and
// a --dump that check-config itself accepts with the same hash.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <unistd.h>

#include "support/subprocess.h"

namespace tonewarden::testing {
namespace {

std::string source_file(const std::string& rel) { return std::string(TONEWARDEN_SOURCE_DIR) + "/" + rel; }

std::string hash_line(const std::string& text) {
  const auto at = text.find("config hash");
  return at == std::string::npos ? "" : text.substr(at, text.find('\n', at) - at);
}

TEST(CheckConfigCliTest, ShippedConfigsExitZeroAndSayOk) {
  // Expected: exit 0 (DESIGN.md exit codes) and exactly "FILE: ok" for both shipped configs.
  for (const char* rel : {"config/demo.toml", "config/example-rig.toml"}) {
    const std::string path = source_file(rel);
    const ProcessResult r = run_process({tonewarden_binary(), "check-config", path});
    EXPECT_EQ(r.exit_code, 0) << r.stderr_text;
    EXPECT_EQ(r.stdout_text, path + ": ok\n");
  }
}

TEST(CheckConfigCliTest, BadConfigExitsTwoWithEveryErrorOnItsOwnLine) {
  // Expected: exit 2 (config error) and the 8 problems of several_errors.toml, in file order,
  // each as FILE:LINE:COL: key: message (see tests/config/loader_test.cpp for the full text).
  const std::string path = test_data("config/bad/several_errors.toml");
  const ProcessResult r = run_process({tonewarden_binary(), "check-config", path});
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_EQ(std::count(r.stderr_text.begin(), r.stderr_text.end(), '\n'), 8) << r.stderr_text;
  EXPECT_EQ(r.stderr_text.rfind(path + ":3:13: daemon.log_level: unknown value \"loud\"", 0), 0u) << r.stderr_text;
  EXPECT_NE(r.stderr_text.find(path + ":35:12: rig[r1].rule[v].critical: "), std::string::npos);
  EXPECT_EQ(r.stdout_text, "");
}

TEST(CheckConfigCliTest, SyntaxErrorAndMissingFileExitTwo) {
  // Expected: exit 2 with file:line:column for the TOML syntax error; errno text for a missing file.
  const std::string bad = test_data("config/bad/syntax_error.toml");
  const ProcessResult r = run_process({tonewarden_binary(), "check-config", bad});
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_EQ(r.stderr_text.rfind(bad + ":3:11: TOML syntax error: ", 0), 0u) << r.stderr_text;
  const ProcessResult m = run_process({tonewarden_binary(), "check-config", "/nonexistent/tw.toml"});
  EXPECT_EQ(m.exit_code, 2);
  EXPECT_EQ(m.stderr_text, "/nonexistent/tw.toml: cannot read: No such file or directory\n");
}

TEST(CheckConfigCliTest, DumpIsAcceptedAgainWithTheSameHash) {
  // Expected: the dump of demo.toml is itself a valid config whose dump carries the same hash.
  const ProcessResult first = run_process({tonewarden_binary(), "check-config", source_file("config/demo.toml"), "--dump"});
  ASSERT_EQ(first.exit_code, 0) << first.stderr_text;
  const std::string body = first.stdout_text.substr(first.stdout_text.find('\n') + 1);
  EXPECT_NE(body.find("[rig.analysis]\nblock_samples = 16384\n"), std::string::npos);
  EXPECT_NE(body.find("velocity_high_hz = 1000.0"), std::string::npos);  // a default filled in
  const std::string dumped = (std::filesystem::temp_directory_path() /
                              ("tw_check_config_dump_" + std::to_string(::getpid()) + ".toml")).string();
  { std::ofstream(dumped) << body; }
  const ProcessResult second = run_process({tonewarden_binary(), "check-config", dumped, "--dump"});
  std::filesystem::remove(dumped);
  ASSERT_EQ(second.exit_code, 0) << second.stderr_text;
  EXPECT_FALSE(hash_line(first.stdout_text).empty());
  EXPECT_EQ(hash_line(first.stdout_text), hash_line(second.stdout_text));
}

}  // namespace
}  // namespace tonewarden::testing
