// Result<T>: a value or an Error with context, returned across module boundaries.
#pragma once

#include <cassert>
#include <string>
#include <utility>
#include <variant>

namespace tonewarden::base {

// Broad error classes; callers map them to exit codes or HTTP statuses.
enum class ErrorCode {
  kInvalidArgument,  // bad parameter or config value (usage error, exit 2, HTTP 400)
  kNotFound,         // missing file, device, series...
  kCorruptData,      // malformed or truncated input
  kIo,               // read/write failure; message carries errno text
  kUnavailable,      // device lost, disk full: may recover later
  kInternal,         // broken invariant or library failure
};

const char* to_string(ErrorCode code) noexcept;

struct Error {
  ErrorCode code = ErrorCode::kInternal;
  std::string message;  // one line: what failed, on what, and why

  // Prepends context: "opening config: " + message.
  Error&& with_context(const std::string& context) && {
    message = context + ": " + message;
    return std::move(*this);
  }
};

inline Error make_error(ErrorCode code, std::string message) {
  return Error{code, std::move(message)};
}

// Message plus the text of errno value `err`.
Error errno_error(ErrorCode code, const std::string& what, int err);

template <typename T>
class [[nodiscard]] Result {
 public:
  Result(T value) : v_(std::move(value)) {}          // NOLINT: implicit by design
  Result(Error error) : v_(std::move(error)) {}      // NOLINT: implicit by design

  bool ok() const noexcept { return v_.index() == 0; }
  explicit operator bool() const noexcept { return ok(); }

  T& value() & { assert(ok()); return std::get<0>(v_); }
  const T& value() const& { assert(ok()); return std::get<0>(v_); }
  T&& value() && { assert(ok()); return std::get<0>(std::move(v_)); }
  T* operator->() { return &value(); }
  const T* operator->() const { return &value(); }
  T& operator*() & { return value(); }
  const T& operator*() const& { return value(); }

  const Error& error() const& { assert(!ok()); return std::get<1>(v_); }
  Error&& error() && { assert(!ok()); return std::get<1>(std::move(v_)); }

 private:
  std::variant<T, Error> v_;
};

// Result<void>: success or an Error.
class [[nodiscard]] Status {
 public:
  Status() = default;
  Status(Error error) : error_(std::move(error)), ok_(false) {}  // NOLINT: implicit by design
  static Status success() { return Status(); }

  bool ok() const noexcept { return ok_; }
  explicit operator bool() const noexcept { return ok_; }
  const Error& error() const& { assert(!ok_); return error_; }
  Error&& error() && { assert(!ok_); return std::move(error_); }

 private:
  Error error_;
  bool ok_ = true;
};

}  // namespace tonewarden::base
