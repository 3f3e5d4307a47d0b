// Bearer-token helpers (see auth.h).
#include "tonewarden/http/auth.h"

#include <sys/stat.h>

#include <cctype>
#include <cerrno>
#include <fstream>

#include "tonewarden/http/limits.h"

namespace tonewarden::http {

using base::ErrorCode;

bool constant_time_equals(std::string_view provided, std::string_view expected) noexcept {
  // Fold the length difference into the accumulator, then compare expected.size() bytes,
  // reading a zero past the end of a shorter `provided` (never an early exit).
  volatile unsigned char diff = provided.size() == expected.size() ? 0 : 1;
  for (size_t i = 0; i < expected.size(); ++i) {
    const unsigned char p = i < provided.size() ? static_cast<unsigned char>(provided[i]) : 0;
    diff = diff | static_cast<unsigned char>(p ^ static_cast<unsigned char>(expected[i]));
  }
  return diff == 0;
}

bool is_loopback_address(std::string_view address) noexcept {
  if (address == "localhost" || address == "::1" || address == "[::1]") return true;
  // 127.x.y.z with four decimal parts, each 0..255.
  if (address.substr(0, 4) != "127.") return false;
  int parts = 0, value = -1;
  for (char c : address) {
    if (c == '.') {
      if (value < 0) return false;
      ++parts;
      value = -1;
    } else if (std::isdigit(static_cast<unsigned char>(c))) {
      value = (value < 0 ? 0 : value * 10) + (c - '0');
      if (value > 255) return false;
    } else {
      return false;
    }
  }
  return parts == 3 && value >= 0;
}

base::Status validate_token(std::string_view token) {
  if (token.size() < kMinTokenChars || token.size() > kMaxTokenChars)
    return base::make_error(ErrorCode::kInvalidArgument,
                            "bearer token must have " + std::to_string(kMinTokenChars) + ".." +
                                std::to_string(kMaxTokenChars) + " characters, got " +
                                std::to_string(token.size()));
  for (char c : token) {
    const auto u = static_cast<unsigned char>(c);
    if (u <= 0x20 || u >= 0x7f)
      return base::make_error(ErrorCode::kInvalidArgument,
                              "bearer token must be printable ASCII without spaces");
  }
  return base::Status::success();
}

base::Result<std::string> load_token_file(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0)
    return base::errno_error(ErrorCode::kNotFound, "token file " + path, errno);
  if (!S_ISREG(st.st_mode))
    return base::make_error(ErrorCode::kInvalidArgument,
                            "token file " + path + ": not a regular file");
  if ((st.st_mode & 0077) != 0)
    return base::make_error(ErrorCode::kInvalidArgument,
                            "token file " + path +
                                ": readable or writable by group/others; chmod 600 it");
  if (st.st_size > static_cast<off_t>(kMaxTokenChars + 2))
    return base::make_error(ErrorCode::kInvalidArgument,
                            "token file " + path + ": larger than " +
                                std::to_string(kMaxTokenChars) + " bytes");
  std::ifstream in(path);
  if (!in) return base::errno_error(ErrorCode::kIo, "token file " + path, errno);
  std::string line;
  std::getline(in, line);
  const auto first = line.find_first_not_of(" \t\r");
  const auto last = line.find_last_not_of(" \t\r");
  std::string token = first == std::string::npos ? "" : line.substr(first, last - first + 1);
  auto ok = validate_token(token);
  if (!ok) return std::move(ok).error().with_context("token file " + path);
  return token;
}

std::string_view bearer_token(std::string_view header) noexcept {
  constexpr std::string_view kScheme = "bearer";
  if (header.size() <= kScheme.size() + 1) return {};
  for (size_t i = 0; i < kScheme.size(); ++i)
    if (std::tolower(static_cast<unsigned char>(header[i])) != kScheme[i]) return {};
  if (header[kScheme.size()] != ' ') return {};
  std::string_view rest = header.substr(kScheme.size() + 1);
  while (!rest.empty() && rest.front() == ' ') rest.remove_prefix(1);
  while (!rest.empty() && rest.back() == ' ') rest.remove_suffix(1);
  return rest;
}

}  // namespace tonewarden::http
