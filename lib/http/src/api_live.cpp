// Routes for status, configuration, live spectra and readings, and trends (JSON or CSV).
#include <algorithm>
#include <charconv>
#include <cmath>
#include <limits>
#include <set>

#include "route.h"
#include "tonewarden/http/decimate.h"
#include "tonewarden/http/limits.h"

namespace tonewarden::http::detail {
namespace {

ConfigView config_of(Ctx& c) { return need(c.state.providers.status, "status").config(); }

// A channel named in a query parameter: an unknown one is a bad parameter (400), on every route.
void check_channel(const ConfigView& cfg, const std::string& channel) {
  for (const auto& ch : cfg.channels)
    if (ch.id == channel) return;
  throw ApiError(400, "unknown_channel", "no channel '" + channel + "' is configured",
                 "channel");
}

// The 503 of a live route before the channel's first spectrum: clients retry in a second.
[[noreturn]] void throw_no_data(Ctx& c, const base::Error& e, const std::string& what,
                                const std::string& channel) {
  if (e.code == base::ErrorCode::kNotFound) {
    c.res.set_header("Retry-After", "1");
    throw ApiError(503, "no_data", "no " + what + " yet for channel '" + channel + "'");
  }
  throw_provider_error(e, what + " of " + channel);
}

void check_rig(const ConfigView& cfg, const std::string& rig) {
  for (const auto& r : cfg.rigs)
    if (r.id == rig) return;
  throw ApiError(400, "unknown_rig", "no rig '" + rig + "' is configured", "rig");
}

// Quotes a CSV field when it holds a separator, quote or line break (RFC 4180).
std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\r\n") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) {
    if (c == '"') out.push_back('"');
    out.push_back(c);
  }
  out.push_back('"');
  return out;
}

std::string csv_number(double v) {
  if (!std::isfinite(v)) return "";
  char buf[32];
  auto r = std::to_chars(buf, buf + sizeof buf, v);
  return std::string(buf, r.ptr);
}

void get_spectrum(Ctx& c) {
  const std::string channel = *c.text("channel");
  const auto points = static_cast<size_t>(c.integer("points", kDefaultSpectrumPoints));
  check_channel(config_of(c), channel);
  auto spec = need(c.state.providers.live, "live").spectrum(channel);
  if (!spec) throw_no_data(c, spec.error(), "spectrum", channel);
  const LiveSpectrum& s = *spec;
  const DecimatedSpectrum d = decimate_max(s.magnitudes, s.bin_hz, points);
  Json peaks = Json::array(), markers = Json::array(), thresholds = Json::array(),
       mags = Json::array();
  for (const auto& p : s.peaks) peaks.push_back(to_json(p));
  for (const auto& m : s.markers) markers.push_back(to_json(m));
  for (const auto& t : s.thresholds) thresholds.push_back(to_json(t));
  for (float m : d.magnitude) mags.push_back(number_json(m));
  c.json({{"channel", s.channel},
          {"t", time_json(s.t)},
          {"unit", s.unit},
          {"scaling", s.scaling},
          {"bin_hz", number_json(s.bin_hz)},
          {"resolution_hz", number_json(s.resolution_hz)},
          {"num_bins", s.magnitudes.size()},
          {"decimation", "max"},
          {"frequency_hz", d.frequency_hz},
          {"magnitude", std::move(mags)},
          {"peaks", std::move(peaks)},
          {"markers", std::move(markers)},
          {"thresholds", std::move(thresholds)}});
}

// dB to 0.1 dB, a step well below what a colour map shows, so rows stay short in JSON.
Json db_json(float db) { return number_json(std::round(static_cast<double>(db) * 10.0) / 10.0); }

void get_spectrogram(Ctx& c) {
  const std::string channel = *c.text("channel");
  const auto rows = static_cast<size_t>(c.integer("rows", kDefaultSpectrogramRows));
  const auto points = static_cast<size_t>(c.integer("points", kDefaultSpectrogramPoints));
  const WallTimeMs since = c.time("since", WallTimeMs{std::numeric_limits<int64_t>::min()});
  check_channel(config_of(c), channel);
  auto got = need(c.state.providers.live, "live").spectrogram(channel, rows);
  if (!got) throw_no_data(c, got.error(), "spectrogram", channel);
  const Spectrogram& g = *got;
  if (g.rows.empty()) throw_no_data(c, base::Error{base::ErrorCode::kNotFound, ""}, "spectrogram", channel);
  // Fewer points than kept: max-pool again, in buckets of kept points laid out as decimate_max
  // lays out bins, so bucket j starts at kept point floor(j*m/p).
  const size_t m = g.frequency_hz.size();
  const size_t p = std::min(points, m);
  Json freqs = Json::array(), list = Json::array();
  for (size_t j = 0; j < p; ++j) freqs.push_back(g.frequency_hz[j * m / p]);
  // Times strictly increase, so the newest `rows` after `since` are among the newest `rows`;
  // none newer is an empty list, not a 503: a client following the history just waits.
  for (const SpectrogramRow& row : g.rows) {
    if (row.t <= since) continue;
    Json dbs = Json::array();
    if (p < m) {
      for (float v : decimate_max(row.db, 1.0, p).magnitude) dbs.push_back(db_json(v));
    } else {
      for (float v : row.db) dbs.push_back(db_json(v));
    }
    list.push_back({{"t", time_json(row.t)}, {"db", std::move(dbs)}});
  }
  c.json({{"channel", g.channel},
          {"unit", g.unit},
          {"level", "dB re 1 " + g.unit + " RMS"},
          {"bin_hz", number_json(g.bin_hz)},
          {"num_bins", g.num_bins},
          {"decimation", "max"},
          {"frequency_hz", std::move(freqs)},
          {"max_frequency_hz", number_json(g.num_bins ? (g.num_bins - 1) * g.bin_hz : 0.0)},
          {"capacity", g.capacity},
          {"order", "oldest_first"},
          {"rows", std::move(list)}});
}

void get_readings(Ctx& c) {
  const auto rig = c.text("rig");
  const auto channel = c.text("channel");
  if (rig || channel) {
    const ConfigView cfg = config_of(c);
    if (rig) check_rig(cfg, *rig);
    if (channel) check_channel(cfg, *channel);
  }
  Json list = Json::array();
  for (const auto& r : need(c.state.providers.live, "live").readings()) {
    if (rig && r.rig != *rig) continue;
    if (channel && r.channel != *channel) continue;
    list.push_back(to_json(r));
  }
  c.json({{"readings", std::move(list)}});
}

void get_trends(Ctx& c) {
  TrendProvider& trends = need(c.state.providers.trends, "trends");
  TrendQuery q;
  q.series = c.list("series");
  const WallTimeMs now = base::wall_now();
  q.to = c.time("to", now);
  q.from = c.time("from", WallTimeMs{q.to.unix_ms - kDefaultTrendSpanMs});
  q.max_points = static_cast<size_t>(c.integer("points", kDefaultTrendPoints));
  const std::string format = c.choice("format", "json");
  if (q.from > q.to)
    throw ApiError(400, "bad_range",
                   "from (" + base::format_rfc3339(q.from) + ") is after to (" +
                       base::format_rfc3339(q.to) + ")",
                   "from");
  if (q.series.size() > kMaxTrendSeries)
    throw ApiError(400, "out_of_range",
                   "at most " + std::to_string(kMaxTrendSeries) + " series per request, got " +
                       std::to_string(q.series.size()),
                   "series");
  const auto names = trends.series_names();
  const std::set<std::string> known(names.begin(), names.end());
  std::set<std::string> asked;
  for (const auto& s : q.series) {
    if (!known.count(s))
      throw ApiError(400, "unknown_series", "no series named '" + s + "'", "series");
    if (!asked.insert(s).second)
      throw ApiError(400, "bad_parameter", "series '" + s + "' asked twice", "series");
  }
  auto result = trends.trends(q);
  if (!result) throw_provider_error(result.error(), "trend query", "series");
  if (format == "csv") {
    std::string out = "series,t,mean,min,max,count\n";
    for (const auto& s : *result)
      for (const auto& p : s.points)
        out += csv_field(s.series) + "," + base::format_rfc3339(p.t) + "," + csv_number(p.mean) +
               "," + csv_number(p.min) + "," + csv_number(p.max) + "," +
               std::to_string(p.count) + "\n";
    c.res.status = 200;
    c.res.set_content(out, "text/csv; charset=utf-8");
    return;
  }
  Json list = Json::array();
  for (const auto& s : *result) list.push_back(to_json(s));
  c.json({{"from", time_json(q.from)},
          {"to", time_json(q.to)},
          {"max_points", q.max_points},
          {"series", std::move(list)}});
}

}  // namespace

void add_api_routes(std::vector<Route>& routes) {
  {
    Route r{"GET", "/api/v1/status", "status", "Daemon status: version, uptime, sources, storage"};
    r.success_schema = "Status";
    r.errors = {503};
    r.handler = [](Ctx& c) { c.json(to_json(need(c.state.providers.status, "status").status())); };
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/config", "status", "Configured rigs, channels, targets and rules"};
    r.success_schema = "Config";
    r.errors = {503};
    r.handler = [](Ctx& c) { c.json(to_json(config_of(c))); };
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/spectrum", "live",
            "Latest spectrum of a channel, decimated keeping the maximum of each bucket"};
    r.params = {string_param("channel", "configured channel id", true),
                int_param("points", kMinSpectrumPoints, kMaxSpectrumPoints,
                          kDefaultSpectrumPoints, "points returned (buckets of bins)")};
    r.success_schema = "Spectrum";
    r.errors = {503};
    r.handler = get_spectrum;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/spectrogram", "live",
            "Recent spectra of a channel in dB, oldest first, each decimated keeping the maximum "
            "of each bucket"};
    r.params = {string_param("channel", "configured channel id", true),
                int_param("rows", 1, kMaxSpectrogramRows, kDefaultSpectrogramRows,
                          "newest rows returned (fewer while the history is shorter)"),
                int_param("points", kMinSpectrogramPoints, kMaxSpectrogramPoints,
                          kDefaultSpectrogramPoints, "points per row (buckets of bins)"),
                time_param("since", "only rows newer than this, exclusive (to follow the "
                                    "history); default all")};
    r.success_schema = "Spectrogram";
    r.errors = {503};
    r.handler = get_spectrogram;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/readings", "live", "Latest readings, optionally of one rig or channel"};
    r.params = {string_param("rig", "configured rig id"),
                string_param("channel", "configured channel id")};
    r.success_schema = "Readings";
    r.errors = {503};
    r.handler = get_readings;
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/series", "trends", "Names of the series that trends can return"};
    r.success_schema = "SeriesList";
    r.errors = {503};
    r.handler = [](Ctx& c) {
      c.json({{"series", need(c.state.providers.trends, "trends").series_names()}});
    };
    routes.push_back(std::move(r));
  }
  {
    Route r{"GET", "/api/v1/trends", "trends",
            "Trend of one or more series over a time range, as JSON or CSV"};
    ParamSpec series = string_param(
        "series", "series name; repeat the parameter or separate names by commas (at most " +
                      std::to_string(kMaxTrendSeries) + ")",
        true);
    series.repeated = true;
    ParamSpec format{"format"};
    format.type = ParamType::kEnum;
    format.values = {"json", "csv"};
    format.default_text = "json";
    format.description = "json, or csv with columns series,t,mean,min,max,count";
    r.params = {series, time_param("from", "start, inclusive; default to minus one hour"),
                time_param("to", "end, inclusive; default now"),
                int_param("points", kMinTrendPoints, kMaxTrendPoints, kDefaultTrendPoints,
                          "maximum points per series"),
                format};
    r.success_schema = "Trends";
    r.success_description = "JSON (Trends) or text/csv";
    r.errors = {503};
    r.handler = get_trends;
    routes.push_back(std::move(r));
  }
}

}  // namespace tonewarden::http::detail
