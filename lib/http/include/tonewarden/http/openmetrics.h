// OpenMetrics 1.0 text exposition of the daemon's state: reading gauges, source and store
// counters, alarm gauges and the HTTP server's own counters, ending in "# EOF".
// Counters follow OpenMetrics naming: "# TYPE x counter" and samples named x_total.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/http/providers.h"

namespace tonewarden::http {

inline constexpr std::string_view kOpenMetricsContentType =
    "application/openmetrics-text; version=1.0.0; charset=utf-8";

// Requests answered, by status class 1xx..5xx (index 0..4), and stream figures.
struct HttpStats {
  std::array<uint64_t, 5> responses_by_class{};
  uint64_t event_streams_open = 0;
  uint64_t events_dropped = 0;
  uint64_t streams_refused = 0;  // 503 beyond the stream cap
};

// What one exposition shows. Any part may be empty (its provider is absent).
struct MetricsInput {
  const StatusInfo* status = nullptr;
  const std::vector<Reading>* readings = nullptr;
  const std::vector<AlarmState>* alarms = nullptr;
  HttpStats http;
};

// Escapes a label value per OpenMetrics: backslash, double quote and line feed.
std::string escape_label_value(std::string_view value);
// A number as OpenMetrics writes it: shortest round-trip form, "NaN", "+Inf", "-Inf".
std::string format_metric_value(double value);

// The whole exposition, "# EOF\n" last. Readings with NaN values are left out (no value is
// not a value); a second reading with the same label set is left out too.
std::string render_openmetrics(const MetricsInput& input);

}  // namespace tonewarden::http
