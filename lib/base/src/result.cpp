// Error helpers and the always-on invariant check.
#include "tonewarden/base/result.h"

#include <cstdio>
#include <cstdlib>
#include <cstring>

#include "tonewarden/base/check.h"

namespace tonewarden::base {

const char* to_string(ErrorCode code) noexcept {
  switch (code) {
    case ErrorCode::kInvalidArgument: return "invalid_argument";
    case ErrorCode::kNotFound: return "not_found";
    case ErrorCode::kCorruptData: return "corrupt_data";
    case ErrorCode::kIo: return "io";
    case ErrorCode::kUnavailable: return "unavailable";
    case ErrorCode::kInternal: return "internal";
  }
  return "internal";
}

Error errno_error(ErrorCode code, const std::string& what, int err) {
  char buf[256];
  // GNU strerror_r returns a pointer that may or may not be buf.
  const char* text = strerror_r(err, buf, sizeof buf);
  return Error{code, what + ": " + text};
}

namespace detail {
void check_failed(const char* expr, const char* file, int line) noexcept {
  std::fprintf(stderr, "tonewarden: invariant failed: %s at %s:%d\n", expr, file, line);
  std::abort();
}
}  // namespace detail

}  // namespace tonewarden::base
