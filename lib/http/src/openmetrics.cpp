// OpenMetrics text exposition (see openmetrics.h).
#include "tonewarden/http/openmetrics.h"

#include <charconv>
#include <cmath>
#include <set>
#include <tuple>

namespace tonewarden::http {
namespace {

// Writes "# TYPE", "# UNIT" (when given) and "# HELP" for one family.
void family(std::string& out, std::string_view name, std::string_view type,
            std::string_view help, std::string_view unit = {}) {
  out.append("# TYPE ").append(name).append(" ").append(type).append("\n");
  if (!unit.empty()) out.append("# UNIT ").append(name).append(" ").append(unit).append("\n");
  out.append("# HELP ").append(name).append(" ").append(help).append("\n");
}

using Labels = std::vector<std::pair<std::string_view, std::string_view>>;

void sample(std::string& out, std::string_view name, const Labels& labels,
            std::string_view value) {
  out.append(name);
  if (!labels.empty()) {
    out.push_back('{');
    bool first = true;
    for (const auto& [k, v] : labels) {
      if (!first) out.push_back(',');
      first = false;
      out.append(k).append("=\"").append(escape_label_value(v)).append("\"");
    }
    out.push_back('}');
  }
  out.append(" ").append(value).append("\n");
}

std::string u64(uint64_t v) { return std::to_string(v); }

}  // namespace

std::string escape_label_value(std::string_view value) {
  std::string out;
  out.reserve(value.size());
  for (char c : value) {
    if (c == '\\') out.append("\\\\");
    else if (c == '"') out.append("\\\"");
    else if (c == '\n') out.append("\\n");
    else out.push_back(c);
  }
  return out;
}

std::string format_metric_value(double value) {
  if (std::isnan(value)) return "NaN";
  if (std::isinf(value)) return value > 0 ? "+Inf" : "-Inf";
  char buf[32];
  auto res = std::to_chars(buf, buf + sizeof buf, value);
  return std::string(buf, res.ptr);
}

std::string render_openmetrics(const MetricsInput& in) {
  std::string out;
  out.reserve(4096);
  if (in.status) {
    const StatusInfo& s = *in.status;
    family(out, "tonewarden_build_info", "gauge", "Version of the running daemon (always 1).");
    sample(out, "tonewarden_build_info", {{"version", s.version}}, "1");
    family(out, "tonewarden_uptime_seconds", "gauge", "Seconds since the daemon started.",
           "seconds");
    sample(out, "tonewarden_uptime_seconds", {}, format_metric_value(s.uptime_s));
    family(out, "tonewarden_healthy", "gauge", "1 when every source and the store are healthy.");
    sample(out, "tonewarden_healthy", {}, s.healthy ? "1" : "0");
    if (!s.sources.empty()) {
      family(out, "tonewarden_source_up", "gauge", "1 while the source is running.");
      for (const auto& src : s.sources)
        sample(out, "tonewarden_source_up", {{"source", src.name}},
               src.state == "running" ? "1" : "0");
      family(out, "tonewarden_source_frames", "counter", "Frames analysed.");
      for (const auto& src : s.sources)
        sample(out, "tonewarden_source_frames_total", {{"source", src.name}}, u64(src.frames));
      family(out, "tonewarden_source_overflows", "counter", "Capture ring overflows.");
      for (const auto& src : s.sources)
        sample(out, "tonewarden_source_overflows_total", {{"source", src.name}},
               u64(src.overflows));
      family(out, "tonewarden_source_drops", "counter", "Samples lost in capture gaps.");
      for (const auto& src : s.sources)
        sample(out, "tonewarden_source_drops_total", {{"source", src.name}}, u64(src.drops));
      family(out, "tonewarden_evidence_clips", "counter",
             "Activations by what became of their raw clip: written, skipped or failed.");
      for (const auto& src : s.sources) {
        sample(out, "tonewarden_evidence_clips_total", {{"source", src.name}, {"result", "written"}},
               u64(src.evidence_clips));
        sample(out, "tonewarden_evidence_clips_total", {{"source", src.name}, {"result", "skipped"}},
               u64(src.evidence_skipped));
        sample(out, "tonewarden_evidence_clips_total", {{"source", src.name}, {"result", "failed"}},
               u64(src.evidence_failures));
      }
    }
    family(out, "tonewarden_store_rows_written", "counter", "Rows committed to the database.");
    sample(out, "tonewarden_store_rows_written_total", {}, u64(s.storage.rows_written));
    family(out, "tonewarden_store_write_errors", "counter", "Failed database writes.");
    sample(out, "tonewarden_store_write_errors_total", {}, u64(s.storage.write_errors));
  }
  if (in.readings && !in.readings->empty()) {
    family(out, "tonewarden_reading", "gauge",
           "Latest value of each reading, in the unit named by the unit label.");
    std::set<std::tuple<std::string_view, std::string_view, std::string_view, std::string_view,
                        std::string_view>>
        seen;
    for (const auto& r : *in.readings) {
      if (std::isnan(r.value)) continue;
      if (!seen.emplace(r.rig, r.channel, r.target, r.metric, r.unit).second) continue;
      sample(out, "tonewarden_reading",
             {{"rig", r.rig},
              {"channel", r.channel},
              {"target", r.target},
              {"metric", r.metric},
              {"unit", r.unit}},
             format_metric_value(r.value));
    }
  }
  if (in.alarms && !in.alarms->empty()) {
    family(out, "tonewarden_alarm_severity", "gauge",
           "Active severity of each alarm: 0 none, 1 warning, 2 critical.");
    for (const auto& a : *in.alarms) {
      const char* level = a.severity == "critical" ? "2" : a.severity == "warning" ? "1" : "0";
      sample(out, "tonewarden_alarm_severity", {{"alarm", a.id}, {"rule", a.rule}}, level);
    }
    family(out, "tonewarden_alarm_unacknowledged", "gauge",
           "1 while the alarm waits for acknowledgement.");
    for (const auto& a : *in.alarms) {
      const bool unack = a.state == "unacknowledged" || a.state == "returned_unacknowledged";
      sample(out, "tonewarden_alarm_unacknowledged", {{"alarm", a.id}, {"rule", a.rule}},
             unack ? "1" : "0");
    }
  }
  family(out, "tonewarden_http_requests", "counter", "HTTP responses sent, by status class.");
  static constexpr const char* kClasses[] = {"1xx", "2xx", "3xx", "4xx", "5xx"};
  for (size_t i = 0; i < 5; ++i)
    sample(out, "tonewarden_http_requests_total", {{"class", kClasses[i]}},
           u64(in.http.responses_by_class[i]));
  family(out, "tonewarden_http_event_streams", "gauge", "Open event streams.");
  sample(out, "tonewarden_http_event_streams", {}, u64(in.http.event_streams_open));
  family(out, "tonewarden_http_events_dropped", "counter",
         "Stream events lost to slow clients (drop-oldest).");
  sample(out, "tonewarden_http_events_dropped_total", {}, u64(in.http.events_dropped));
  family(out, "tonewarden_http_streams_refused", "counter",
         "Event streams refused beyond the cap.");
  sample(out, "tonewarden_http_streams_refused_total", {}, u64(in.http.streams_refused));
  out.append("# EOF\n");
  return out;
}

}  // namespace tonewarden::http
