// Routes for alarms (states, events, acknowledge, shelve), snapshots, annotations, reload.
#include <charconv>

#include "route.h"
#include "tonewarden/http/decimate.h"
#include "tonewarden/http/limits.h"

namespace tonewarden::http::detail {
namespace {

const std::vector<std::string> kAlarmStates = {"normal", "unacknowledged", "acknowledged",
                                               "returned_unacknowledged", "shelved"};

struct Range {
  WallTimeMs from, to;
};

// from/to with defaults (the last kDefaultHistorySpanMs) and the from <= to check.
Range time_range(const Ctx& c) {
  Range r;
  r.to = c.time("to", base::wall_now());
  r.from = c.time("from", WallTimeMs{r.to.unix_ms - kDefaultHistorySpanMs});
  if (r.from > r.to)
    throw ApiError(400, "bad_range",
                   "from (" + base::format_rfc3339(r.from) + ") is after to (" +
                       base::format_rfc3339(r.to) + ")",
                   "from");
  return r;
}

std::vector<ParamSpec> range_params() {
  return {time_param("from", "start, inclusive; default to minus 24 hours"),
          time_param("to", "end, inclusive; default now"),
          int_param("limit", 1, kMaxListLimit, kDefaultListLimit, "most items returned")};
}

AlarmState find_alarm(AlarmProvider& alarms, const std::string& id) {
  for (auto& a : alarms.states())
    if (a.id == id) return a;
  throw ApiError(404, "unknown_alarm", "no alarm '" + id + "'", "alarm");
}

void get_events(Ctx& c) {
  AlarmProvider& alarms = need(c.state.providers.alarms, "alarms");
  const Range range = time_range(c);
  AlarmEventQuery q{range.from, range.to};
  q.state = c.choice("state", "");
  q.rule = c.text("rule").value_or("");
  q.limit = static_cast<size_t>(c.integer("limit", kDefaultListLimit));
  if (!q.rule.empty()) {
    bool known = false;
    for (const auto& r : need(c.state.providers.status, "status").config().rules)
      known |= r.id == q.rule;
    if (!known) throw ApiError(400, "unknown_rule", "no rule '" + q.rule + "'", "rule");
  }
  auto events = alarms.events(q);
  if (!events) throw_provider_error(events.error(), "alarm events");
  Json list = Json::array();
  for (const auto& e : *events) list.push_back(to_json(e));
  c.json({{"events", std::move(list)}});
}

void post_acknowledge(Ctx& c) {
  AlarmProvider& alarms = need(c.state.providers.alarms, "alarms");
  const Json body = c.body();
  const std::string& id = c.path("alarm");
  find_alarm(alarms, id);
  auto st = alarms.acknowledge(id, body.at("user").get<std::string>(),
                               body.value("comment", std::string()));
  if (!st) throw_provider_error(st.error(), "acknowledge " + id, "alarm");
  c.json({{"alarm", to_json(find_alarm(alarms, id))}});
}

void post_shelve(Ctx& c) {
  AlarmProvider& alarms = need(c.state.providers.alarms, "alarms");
  const Json body = c.body();
  const std::string& id = c.path("alarm");
  find_alarm(alarms, id);
  auto st = alarms.shelve(id, body.at("user").get<std::string>(),
                          body.at("duration_s").get<int64_t>(),
                          body.value("comment", std::string()));
  if (!st) throw_provider_error(st.error(), "shelve " + id, "alarm");
  c.json({{"alarm", to_json(find_alarm(alarms, id))}});
}

void get_snapshots(Ctx& c) {
  SnapshotProvider& snaps = need(c.state.providers.snapshots, "snapshots");
  const Range range = time_range(c);
  SnapshotQuery q{range.from, range.to};
  q.channel = c.text("channel").value_or("");
  q.limit = static_cast<size_t>(c.integer("limit", kDefaultListLimit));
  if (!q.channel.empty()) {
    bool known = false;
    for (const auto& ch : need(c.state.providers.status, "status").config().channels)
      known |= ch.id == q.channel;
    if (!known)
      throw ApiError(400, "unknown_channel", "no channel '" + q.channel + "' is configured",
                     "channel");
  }
  auto list = snaps.list(q);
  if (!list) throw_provider_error(list.error(), "snapshot list");
  Json out = Json::array();
  for (const auto& s : *list) out.push_back(to_json(s));
  c.json({{"snapshots", std::move(out)}});
}

void get_snapshot(Ctx& c) {
  SnapshotProvider& snaps = need(c.state.providers.snapshots, "snapshots");
  const std::string& text = c.path("id");
  int64_t id = 0;
  auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), id);
  if (ec != std::errc() || ptr != text.data() + text.size() || id < 1)
    throw ApiError(400, "bad_parameter", "snapshot id must be a positive integer, got '" + text +
                                             "'",
                   "id");
  const auto points = static_cast<size_t>(c.integer("points", kDefaultSpectrumPoints));
  auto snap = snaps.get(id);
  if (!snap && snap.error().code == base::ErrorCode::kNotFound)
    throw ApiError(404, "unknown_snapshot", "no snapshot " + text + ": " + snap.error().message,
                   "id");
  if (!snap) throw_provider_error(snap.error(), "snapshot " + text, "id");
  const DecimatedSpectrum d = decimate_max(snap->magnitudes, snap->info.bin_hz, points);
  Json mags = Json::array();
  for (float m : d.magnitude) mags.push_back(number_json(m));
  Json j = to_json(snap->info);
  j["num_bins"] = snap->magnitudes.size();
  j["decimation"] = "max";
  j["frequency_hz"] = d.frequency_hz;
  j["magnitude"] = std::move(mags);
  c.json({{"snapshot", std::move(j)}});
}

void get_annotations(Ctx& c) {
  AnnotationProvider& notes = need(c.state.providers.annotations, "annotations");
  const Range range = time_range(c);
  const auto limit = static_cast<size_t>(c.integer("limit", kDefaultListLimit));
  auto list = notes.list(range.from, range.to, limit);
  if (!list) throw_provider_error(list.error(), "annotation list");
  Json out = Json::array();
  for (const auto& a : *list) out.push_back(to_json(a));
  c.json({{"annotations", std::move(out)}});
}

void post_annotation(Ctx& c) {
  AnnotationProvider& notes = need(c.state.providers.annotations, "annotations");
  const Json body = c.body();
  Annotation a;
  a.text = body.at("text").get<std::string>();
  a.user = body.at("user").get<std::string>();
  a.rig = body.value("rig", std::string());
  a.t = body.contains("t") && !body["t"].is_null() ? WallTimeMs{body["t"].get<int64_t>()}
                                                    : base::wall_now();
  if (!a.rig.empty()) {
    bool known = false;
    for (const auto& r : need(c.state.providers.status, "status").config().rigs)
      known |= r.id == a.rig;
    if (!known) throw ApiError(400, "unknown_rig", "no rig '" + a.rig + "' is configured", "rig");
  }
  auto id = notes.add(a);
  if (!id) throw_provider_error(id.error(), "add annotation");
  a.id = *id;
  c.res.set_header("Location", "/api/v1/annotations?from=" + std::to_string(a.t.unix_ms) +
                                   "&to=" + std::to_string(a.t.unix_ms));
  c.json({{"annotation", to_json(a)}}, 201);
}

BodyField text_field(const std::string& name, bool required, size_t max_chars,
                     const std::string& what) {
  BodyField f{name};
  f.required = required;
  f.max_chars = max_chars;
  f.description = what;
  return f;
}

}  // namespace

void add_history_routes(std::vector<Route>& routes) {
  {
    Route r{"GET", "/api/v1/alarms", "alarms", "Current state of every alarm"};
    r.success_schema = "AlarmStates";
    r.errors = {503};
    r.handler = [](Ctx& c) {
      Json list = Json::array();
      for (const auto& a : need(c.state.providers.alarms, "alarms").states())
        list.push_back(to_json(a));
      c.json({{"alarms", std::move(list)}});
    };
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/alarms/events", "alarms", "Alarm log: state changes over a range"};
    ParamSpec state{"state"};
    state.type = ParamType::kEnum;
    state.values = kAlarmStates;
    state.description = "only changes into this state";
    r.params = range_params();
    r.params.push_back(state);
    r.params.push_back(string_param("rule", "only alarms of this configured rule"));
    r.success_schema = "AlarmEvents";
    r.errors = {503};
    r.handler = get_events;
    routes.push_back(std::move(r));
  }
  ParamSpec alarm_id{"alarm"};
  alarm_id.in_path = true;
  alarm_id.required = true;
  alarm_id.description = "alarm id, as listed by /api/v1/alarms";
  const BodyField user =
      text_field("user", true, kMaxUserChars, "who acts (free text, 1.." +
                                                  std::to_string(kMaxUserChars) + " characters)");
  const BodyField comment = text_field("comment", false, kMaxCommentChars, "why");
  {
    Route r{"POST", "/api/v1/alarms/{alarm}/acknowledge", "alarms", "Acknowledge an alarm"};
    r.params = {alarm_id};
    r.body = {user, comment};
    r.mutating = true;
    r.success_schema = "AlarmStateReply";
    r.errors = {404, 409, 503};
    r.handler = post_acknowledge;
    routes.push_back(std::move(r));
  }
  {
    Route r{"POST", "/api/v1/alarms/{alarm}/shelve", "alarms",
            "Shelve an alarm for a while (it stays evaluated but does not annunciate)"};
    BodyField duration{"duration_s", FieldType::kInteger, true, "shelve duration in seconds"};
    duration.min = kMinShelveS;
    duration.max = kMaxShelveS;
    r.params = {alarm_id};
    r.body = {user, duration, comment};
    r.mutating = true;
    r.success_schema = "AlarmStateReply";
    r.errors = {404, 409, 503};
    r.handler = post_shelve;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/snapshots", "snapshots", "Stored spectrum snapshots over a range"};
    r.params = range_params();
    r.params.push_back(string_param("channel", "only snapshots of this configured channel"));
    r.success_schema = "Snapshots";
    r.errors = {503};
    r.handler = get_snapshots;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/snapshots/{id}", "snapshots",
            "One stored spectrum, decimated keeping the maximum of each bucket"};
    ParamSpec id{"id"};
    id.in_path = true;
    id.required = true;
    id.type = ParamType::kInteger;
    id.min = 1;
    id.max = INT64_MAX;
    id.description = "snapshot id";
    r.params = {id, int_param("points", kMinSpectrumPoints, kMaxSpectrumPoints,
                              kDefaultSpectrumPoints, "points returned (buckets of bins)")};
    r.success_schema = "SnapshotReply";
    r.errors = {404, 503};
    r.handler = get_snapshot;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/annotations", "annotations", "Annotations over a range"};
    r.params = range_params();
    r.success_schema = "Annotations";
    r.errors = {503};
    r.handler = get_annotations;
    routes.push_back(std::move(r));
  }
  {
    Route r{"POST", "/api/v1/annotations", "annotations", "Add an annotation"};
    BodyField t{"t", FieldType::kTime, false, "when (RFC 3339 or unix ms); default now"};
    r.body = {text_field("text", true, kMaxAnnotationChars, "the note"), user,
              text_field("rig", false, 200, "configured rig id it concerns; empty: all"), t};
    r.mutating = true;
    r.success_status = 201;
    r.success_schema = "AnnotationReply";
    r.errors = {503};
    r.handler = post_annotation;
    routes.push_back(std::move(r));
  }
  {
    Route r{"POST", "/api/v1/reload", "control",
            "Ask the daemon to reload its configuration (answered once queued)"};
    r.mutating = true;
    r.success_status = 202;
    r.success_schema = "Accepted";
    r.errors = {409, 503};
    r.handler = [](Ctx& c) {
      auto st = need(c.state.providers.status, "status").request_reload();
      if (!st) throw_provider_error(st.error(), "reload");
      c.json({{"status", "reload requested"}}, 202);
    };
    routes.push_back(std::move(r));
  }
}

}  // namespace tonewarden::http::detail
