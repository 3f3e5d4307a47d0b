// JSON encodings of the provider data types (see json_codec.h).
#include "json_codec.h"

#include <cmath>

namespace tonewarden::http::detail {

std::string dump(const Json& j) {
  return j.dump(-1, ' ', false, Json::error_handler_t::replace);
}

Json time_json(WallTimeMs t) {
  if (t.unix_ms == 0) return nullptr;
  return base::format_rfc3339(t);
}

Json number_json(double v) {
  if (!std::isfinite(v)) return nullptr;
  return v;
}

Json to_json(const SourceStatus& s) {
  return Json{{"name", s.name},
              {"state", s.state},
              {"detail", s.detail},
              {"sample_rate_hz", number_json(s.sample_rate_hz)},
              {"frames", s.frames},
              {"overflows", s.overflows},
              {"drops", s.drops},
              {"last_frame", time_json(s.last_frame)},
              {"evidence", {{"clips", s.evidence_clips},
                            {"skipped", s.evidence_skipped},
                            {"failures", s.evidence_failures}}}};
}

Json to_json(const StatusInfo& s) {
  Json sources = Json::array();
  for (const auto& src : s.sources) sources.push_back(to_json(src));
  return Json{{"version", s.version},
              {"uptime_s", number_json(s.uptime_s)},
              {"healthy", s.healthy},
              {"unhealthy_reason", s.unhealthy_reason},
              {"sources", std::move(sources)},
              {"storage",
               {{"state", s.storage.state},
                {"detail", s.storage.detail},
                {"rows_written", s.storage.rows_written},
                {"write_errors", s.storage.write_errors}}}};
}

Json to_json(const ConfigView& c) {
  Json rigs = Json::array(), channels = Json::array(), targets = Json::array(),
       rules = Json::array();
  for (const auto& r : c.rigs)
    rigs.push_back({{"id", r.id},
                    {"description", r.description},
                    {"nominal_speed_rpm", number_json(r.nominal_speed_rpm)}});
  for (const auto& ch : c.channels)
    channels.push_back({{"id", ch.id},
                        {"rig", ch.rig},
                        {"unit", ch.unit},
                        {"sensitivity", number_json(ch.sensitivity)},
                        {"sample_rate_hz", number_json(ch.sample_rate_hz)}});
  for (const auto& t : c.targets)
    targets.push_back({{"id", t.id},
                       {"rig", t.rig},
                       {"channel", t.channel},
                       {"kind", t.kind},
                       {"description", t.description}});
  for (const auto& r : c.rules)
    rules.push_back({{"id", r.id},
                     {"rig", r.rig},
                     {"series", r.series},
                     {"unit", r.unit},
                     {"warning", number_json(r.warning)},
                     {"critical", number_json(r.critical)},
                     {"hysteresis", number_json(r.hysteresis)},
                     {"on_delay_s", number_json(r.on_delay_s)},
                     {"off_delay_s", number_json(r.off_delay_s)}});
  return Json{{"rigs", std::move(rigs)},
              {"channels", std::move(channels)},
              {"targets", std::move(targets)},
              {"rules", std::move(rules)}};
}

Json to_json(const Reading& r) {
  return Json{{"series", r.series}, {"rig", r.rig},       {"channel", r.channel},
              {"target", r.target}, {"metric", r.metric}, {"unit", r.unit},
              {"value", number_json(r.value)}, {"t", time_json(r.t)}};
}

Json to_json(const TrendSeries& s) {
  Json t = Json::array(), mean = Json::array(), mn = Json::array(), mx = Json::array(),
       count = Json::array();
  for (const auto& p : s.points) {
    t.push_back(base::format_rfc3339(p.t));
    mean.push_back(number_json(p.mean));
    mn.push_back(number_json(p.min));
    mx.push_back(number_json(p.max));
    count.push_back(p.count);
  }
  return Json{{"series", s.series}, {"unit", s.unit}, {"resolution", s.resolution},
              {"t", std::move(t)},  {"mean", std::move(mean)}, {"min", std::move(mn)},
              {"max", std::move(mx)}, {"count", std::move(count)}};
}

Json to_json(const AlarmState& a) {
  return Json{{"id", a.id},
              {"rule", a.rule},
              {"rig", a.rig},
              {"series", a.series},
              {"severity", a.severity},
              {"state", a.state},
              {"value", number_json(a.value)},
              {"since", time_json(a.since)},
              {"shelved_until", time_json(a.shelved_until)},
              {"acknowledged_by", a.acknowledged_by},
              {"message", a.message}};
}

Json to_json(const AlarmEvent& e) {
  return Json{{"id", e.id},         {"t", time_json(e.t)},   {"alarm", e.alarm},
              {"rule", e.rule},     {"severity", e.severity}, {"state", e.state},
              {"value", number_json(e.value)}, {"user", e.user}, {"comment", e.comment},
              {"message", e.message},
              {"evidence", e.evidence.empty() ? Json(nullptr) : Json(e.evidence)}};
}

Json to_json(const SnapshotInfo& s) {
  return Json{{"id", s.id},
              {"t", time_json(s.t)},
              {"rig", s.rig},
              {"channel", s.channel},
              {"reason", s.reason},
              {"alarm", s.alarm},
              {"unit", s.unit},
              {"window", s.window},
              {"bin_hz", number_json(s.bin_hz)},
              {"fft_length", s.fft_length},
              {"averages", s.averages}};
}

Json to_json(const Annotation& a) {
  return Json{{"id", a.id}, {"t", time_json(a.t)}, {"rig", a.rig}, {"user", a.user},
              {"text", a.text}};
}

Json to_json(const SpectrumPeak& p) {
  return Json{{"frequency_hz", number_json(p.frequency_hz)},
              {"amplitude", number_json(p.amplitude)}};
}

Json to_json(const TargetMarker& m) {
  return Json{{"target", m.target},
              {"frequency_hz", number_json(m.frequency_hz)},
              {"amplitude", number_json(m.amplitude)}};
}

Json to_json(const ThresholdLine& t) {
  return Json{{"rule", t.rule},
              {"severity", t.severity},
              {"level", number_json(t.level)},
              {"f_lo_hz", number_json(t.f_lo_hz)},
              {"f_hi_hz", number_json(t.f_hi_hz)}};
}

}  // namespace tonewarden::http::detail
