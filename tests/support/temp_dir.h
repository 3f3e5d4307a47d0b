// TempDir: a fresh directory under /tmp for one test, removed with its contents at the end.
#pragma once

#include <stdlib.h>

#include <filesystem>
#include <stdexcept>
#include <string>
#include <system_error>

namespace tonewarden::testing {

class TempDir {
 public:
  // Creates /tmp/<prefix>_XXXXXX; throws if it cannot (the test then fails loudly).
  explicit TempDir(const std::string& prefix = "tw_test") {
    std::string tmpl = "/tmp/" + prefix + "_XXXXXX";
    if (mkdtemp(tmpl.data()) == nullptr) throw std::runtime_error("mkdtemp failed: " + tmpl);
    path_ = tmpl;
  }
  ~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
  }
  TempDir(const TempDir&) = delete;
  TempDir& operator=(const TempDir&) = delete;

  const std::filesystem::path& path() const noexcept { return path_; }
  std::filesystem::path operator/(const std::string& name) const { return path_ / name; }

 private:
  std::filesystem::path path_;
};

}  // namespace tonewarden::testing
