// TW_CHECK: an invariant assertion that stays on in release builds.
#pragma once

namespace tonewarden::base::detail {
[[noreturn]] void check_failed(const char* expr, const char* file, int line) noexcept;
}  // namespace tonewarden::base::detail

#define TW_CHECK(expr)                                                          \
  do {                                                                          \
    if (!(expr)) ::tonewarden::base::detail::check_failed(#expr, __FILE__, __LINE__); \
  } while (0)
