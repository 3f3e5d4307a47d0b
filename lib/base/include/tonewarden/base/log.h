// Logging facade over spdlog, so that spdlog stays private to base.
// Never throws into the caller. Not for hot paths: count there, log state changes.
#pragma once

#include <string>
#include <string_view>

namespace tonewarden::base {

enum class LogLevel { kTrace, kDebug, kInfo, kWarn, kError, kOff };

// "trace", "debug", "info", "warn", "error", "off". False on anything else.
bool parse_log_level(std::string_view name, LogLevel* out);

struct LogOptions {
  LogLevel level = LogLevel::kInfo;
  std::string file_path;            // empty: console only
  size_t max_file_bytes = 10 << 20;  // rotate past this size
  size_t max_files = 5;              // rotated files kept
};

// Sets up the process logger (console on stderr, optional rotating file). Thread-safe.
void init_logging(const LogOptions& options);
void set_log_level(LogLevel level);

void log(LogLevel level, std::string_view message) noexcept;
inline void log_info(std::string_view m) noexcept { log(LogLevel::kInfo, m); }
inline void log_warn(std::string_view m) noexcept { log(LogLevel::kWarn, m); }
inline void log_error(std::string_view m) noexcept { log(LogLevel::kError, m); }
inline void log_debug(std::string_view m) noexcept { log(LogLevel::kDebug, m); }

}  // namespace tonewarden::base
