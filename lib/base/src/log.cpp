// The spdlog-backed logger behind base/log.h.
#include "tonewarden/base/log.h"

#include <spdlog/sinks/rotating_file_sink.h>
#include <spdlog/sinks/stdout_color_sinks.h>
#include <spdlog/spdlog.h>

#include <memory>
#include <mutex>
#include <vector>

namespace tonewarden::base {
namespace {

spdlog::level::level_enum to_spd(LogLevel level) {
  switch (level) {
    case LogLevel::kTrace: return spdlog::level::trace;
    case LogLevel::kDebug: return spdlog::level::debug;
    case LogLevel::kInfo: return spdlog::level::info;
    case LogLevel::kWarn: return spdlog::level::warn;
    case LogLevel::kError: return spdlog::level::err;
    case LogLevel::kOff: return spdlog::level::off;
  }
  return spdlog::level::info;
}

std::mutex g_mu;
std::shared_ptr<spdlog::logger> g_logger;

std::shared_ptr<spdlog::logger> logger() {
  std::lock_guard lock(g_mu);
  if (!g_logger) {
    g_logger = std::make_shared<spdlog::logger>(
        "tonewarden", std::make_shared<spdlog::sinks::stderr_color_sink_mt>());
    g_logger->set_pattern("%Y-%m-%dT%H:%M:%S.%eZ %^%-5l%$ %v", spdlog::pattern_time_type::utc);
  }
  return g_logger;
}

}  // namespace

bool parse_log_level(std::string_view name, LogLevel* out) {
  static constexpr std::pair<std::string_view, LogLevel> kNames[] = {
      {"trace", LogLevel::kTrace}, {"debug", LogLevel::kDebug}, {"info", LogLevel::kInfo},
      {"warn", LogLevel::kWarn},   {"error", LogLevel::kError}, {"off", LogLevel::kOff}};
  for (const auto& [n, l] : kNames) {
    if (n == name) { *out = l; return true; }
  }
  return false;
}

void init_logging(const LogOptions& options) {
  try {
    std::vector<spdlog::sink_ptr> sinks;
    sinks.push_back(std::make_shared<spdlog::sinks::stderr_color_sink_mt>());
    if (!options.file_path.empty()) {
      sinks.push_back(std::make_shared<spdlog::sinks::rotating_file_sink_mt>(
          options.file_path, options.max_file_bytes, options.max_files));
    }
    auto l = std::make_shared<spdlog::logger>("tonewarden", sinks.begin(), sinks.end());
    l->set_pattern("%Y-%m-%dT%H:%M:%S.%eZ %^%-5l%$ %v", spdlog::pattern_time_type::utc);
    l->set_level(to_spd(options.level));
    l->flush_on(spdlog::level::warn);
    std::lock_guard lock(g_mu);
    g_logger = l;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "tonewarden: logging set-up failed: %s\n", e.what());
  }
}

void set_log_level(LogLevel level) { logger()->set_level(to_spd(level)); }

void log(LogLevel level, std::string_view message) noexcept {
  try {
    logger()->log(to_spd(level), "{}", message);
  } catch (...) {
    // Logging never throws into the caller.
  }
}

}  // namespace tonewarden::base
