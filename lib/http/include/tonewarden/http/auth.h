// Bearer-token authentication helpers: constant-time comparison, loopback detection,
// token validation and loading a token from a file. Pure functions; thread-safe.
#pragma once

#include <string>
#include <string_view>

#include "tonewarden/base/result.h"

namespace tonewarden::http {

// True iff a == b. Running time depends only on expected.size(), never on where (or whether)
// the strings first differ, so a caller cannot learn the token byte by byte.
bool constant_time_equals(std::string_view provided, std::string_view expected) noexcept;

// True for addresses that only this machine can reach: 127.0.0.0/8, ::1, "localhost".
// Anything else (including 0.0.0.0 and ::) counts as exposed to the network.
bool is_loopback_address(std::string_view address) noexcept;

// A usable token is kMinTokenChars..kMaxTokenChars printable ASCII characters without spaces.
base::Status validate_token(std::string_view token);

// Reads a token from a file: the first line, surrounding whitespace trimmed, then validated.
// Refuses files that other users may read or write (mode & 0077), since they hold a secret.
base::Result<std::string> load_token_file(const std::string& path);

// Token of an "Authorization: Bearer <token>" header value; empty if the scheme is not
// Bearer (case-insensitive) or no token follows.
std::string_view bearer_token(std::string_view authorization_header) noexcept;

}  // namespace tonewarden::http
