// `tonewarden query`: reads trends, alarm events, snapshots, annotations and the series list
// from the history database as a table, JSON or CSV. Opens the file read-only, so it works
// while the daemon is writing.
#include <cstdio>
#include <iostream>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "commands.h"
#include "tonewarden/base/time.h"
#include "tonewarden/store/store_reader.h"

namespace tonewarden::daemon {
namespace {

using store::StoreReader;
using Json = nlohmann::ordered_json;

struct QueryOptions {
  std::string db_path;
  std::string format = "table";
  std::string from, to, at;
  std::vector<std::string> series;
  int points = 500;
  int limit = 1000;
  int count = 1;
  bool with_bins = false;
  std::string state, rule, rig, channel;
};

constexpr int64_t kDayMs = 86'400'000;

struct UsageError {
  std::string message;
};

// Parses --from/--to (defaults: the last 24 hours); throws UsageError.
void time_range(const QueryOptions& o, base::WallTimeMs* from, base::WallTimeMs* to) {
  *to = base::wall_now();
  if (!o.to.empty() && !base::parse_time(o.to, to)) {
    throw UsageError{"--to '" + o.to + "' is not RFC 3339 or unix milliseconds"};
  }
  *from = base::WallTimeMs{to->unix_ms - kDayMs};
  if (!o.from.empty() && !base::parse_time(o.from, from)) {
    throw UsageError{"--from '" + o.from + "' is not RFC 3339 or unix milliseconds"};
  }
  if (to->unix_ms <= from->unix_ms) {
    throw UsageError{"--to " + base::format_rfc3339(*to) + " is not after --from " +
                     base::format_rfc3339(*from)};
  }
}

std::string csv_field(const std::string& s) {
  if (s.find_first_of(",\"\n\r") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) out += c == '"' ? std::string("\"\"") : std::string(1, c);
  return out + "\"";
}

// Prints rows (first row is the header) as an aligned table or CSV.
void print_rows(const std::vector<std::vector<std::string>>& rows, bool csv) {
  if (csv) {
    for (const auto& r : rows) {
      for (size_t i = 0; i < r.size(); ++i) std::cout << (i ? "," : "") << csv_field(r[i]);
      std::cout << '\n';
    }
    return;
  }
  std::vector<size_t> width;
  for (const auto& r : rows) {
    width.resize(std::max(width.size(), r.size()));
    for (size_t i = 0; i < r.size(); ++i) width[i] = std::max(width[i], r[i].size());
  }
  for (const auto& r : rows) {
    std::string line;
    for (size_t i = 0; i < r.size(); ++i) {
      line += r[i];
      if (i + 1 < r.size()) line += std::string(width[i] - r[i].size() + 2, ' ');
    }
    std::cout << line << '\n';
  }
}

std::string num(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.6g", v);
  return buf;
}

template <typename T>
T need(base::Result<T> r) {
  if (!r.ok()) {
    if (r.error().code == base::ErrorCode::kInvalidArgument ||
        r.error().code == base::ErrorCode::kNotFound) {
      throw UsageError{r.error().message};
    }
    throw std::runtime_error(r.error().message);
  }
  return std::move(r).value();
}

std::string series_name(const store::SeriesInfo& s) {
  return s.key.rig + "/" + s.key.channel + "/" + s.key.metric;
}

int run_series(StoreReader& r, const QueryOptions& o) {
  auto list = need(r.list_series());
  if (o.format == "json") {
    Json out = Json::array();
    for (const auto& s : list) {
      out.push_back({{"id", s.id}, {"rig", s.key.rig}, {"channel", s.key.channel},
                     {"metric", s.key.metric}, {"unit", s.key.unit}});
    }
    std::cout << out.dump(2) << '\n';
    return kExitOk;
  }
  std::vector<std::vector<std::string>> rows = {{"id", "rig", "channel", "metric", "unit"}};
  for (const auto& s : list) {
    rows.push_back({std::to_string(s.id), s.key.rig, s.key.channel, s.key.metric, s.key.unit});
  }
  print_rows(rows, o.format == "csv");
  return kExitOk;
}

int run_trend(StoreReader& r, const QueryOptions& o) {
  store::TrendQuery q;
  time_range(o, &q.from, &q.to);
  q.max_points = o.points;
  for (const auto& name : o.series) {
    const auto a = name.find('/');
    const auto b = a == std::string::npos ? a : name.find('/', a + 1);
    if (b == std::string::npos) {
      throw UsageError{"--series '" + name + "' is not RIG/CHANNEL/METRIC"};
    }
    q.series.push_back(need(r.find_series(name.substr(0, a), name.substr(a + 1, b - a - 1),
                                          name.substr(b + 1)))
                           .id);
  }
  auto trends = need(r.trend(q));
  if (o.format == "json") {
    Json out = Json::array();
    for (const auto& t : trends) {
      Json pts = Json::array();
      for (const auto& p : t.points) {
        pts.push_back({{"t", base::format_rfc3339({p.t_unix_ms})}, {"min", p.min},
                       {"mean", p.mean}, {"max", p.max}, {"count", p.count}});
      }
      out.push_back({{"series", series_name(t.series)}, {"unit", t.series.key.unit},
                     {"bucket_ms", t.bucket_ms}, {"source", store::to_string(t.finest_source)},
                     {"points", std::move(pts)}});
    }
    std::cout << out.dump(2) << '\n';
    return kExitOk;
  }
  std::vector<std::vector<std::string>> rows = {
      {"series", "unit", "time", "min", "mean", "max", "count"}};
  for (const auto& t : trends) {
    for (const auto& p : t.points) {
      rows.push_back({series_name(t.series), t.series.key.unit,
                      base::format_rfc3339({p.t_unix_ms}), num(p.min), num(p.mean), num(p.max),
                      std::to_string(p.count)});
    }
  }
  print_rows(rows, o.format == "csv");
  return kExitOk;
}

int run_events(StoreReader& r, const QueryOptions& o) {
  store::EventQuery q;
  time_range(o, &q.from, &q.to);
  q.limit = o.limit;
  if (!o.state.empty()) {
    store::AlarmState st;
    if (!store::parse_alarm_state(o.state, &st)) {
      throw UsageError{"--state '" + o.state + "' is not one of normal, unacknowledged, "
                       "acknowledged, returned-unacknowledged, shelved"};
    }
    q.state = st;
  }
  if (!o.rule.empty()) q.rule = o.rule;
  if (!o.rig.empty()) q.rig = o.rig;
  auto events = need(r.events(q));
  if (o.format == "json") {
    Json out = Json::array();
    for (const auto& e : events) {
      out.push_back({{"id", e.id}, {"t", base::format_rfc3339(e.t)}, {"rig", e.rig},
                     {"channel", e.channel}, {"rule", e.rule},
                     {"severity", store::to_string(e.severity)},
                     {"state", store::to_string(e.state)}, {"value", e.value},
                     {"threshold", e.threshold}, {"message", e.message},
                     {"evidence_path", e.evidence_path}, {"user", e.user},
                     {"comment", e.comment}});
    }
    std::cout << out.dump(2) << '\n';
    return kExitOk;
  }
  std::vector<std::vector<std::string>> rows = {{"time", "rig", "channel", "rule", "severity",
                                                 "state", "value", "threshold", "message"}};
  for (const auto& e : events) {
    rows.push_back({base::format_rfc3339(e.t), e.rig, e.channel, e.rule,
                    store::to_string(e.severity), store::to_string(e.state), num(e.value),
                    num(e.threshold), e.message});
  }
  print_rows(rows, o.format == "csv");
  return kExitOk;
}

int run_snapshots(StoreReader& r, const QueryOptions& o) {
  base::WallTimeMs at = base::wall_now();
  if (!o.at.empty() && !base::parse_time(o.at, &at)) {
    throw UsageError{"--at '" + o.at + "' is not RFC 3339 or unix milliseconds"};
  }
  auto snaps = need(r.nearest_snapshots(at, o.count, o.rig, o.channel));
  if (o.format == "json") {
    Json out = Json::array();
    for (const auto& s : snaps) {
      Json j = {{"id", s.id}, {"t", base::format_rfc3339(s.t)}, {"rig", s.rig},
                {"channel", s.channel}, {"reason", s.reason},
                {"sample_rate_hz", s.sample_rate_hz}, {"fft_length", s.fft_length},
                {"bin_hz", s.bin_hz}, {"window", s.window}, {"scale", s.scale},
                {"unit", s.unit}, {"bins", s.magnitude.size()}};
      if (o.with_bins) j["magnitude"] = s.magnitude;
      out.push_back(std::move(j));
    }
    std::cout << out.dump(2) << '\n';
    return kExitOk;
  }
  std::vector<std::vector<std::string>> rows;
  if (o.with_bins) {  // one row per bin: easy to plot
    rows.push_back({"snapshot", "time", "rig", "channel", "frequency_hz", "magnitude", "unit"});
    for (const auto& s : snaps) {
      for (size_t k = 0; k < s.magnitude.size(); ++k) {
        rows.push_back({std::to_string(s.id), base::format_rfc3339(s.t), s.rig, s.channel,
                        num(static_cast<double>(k) * s.bin_hz), num(s.magnitude[k]), s.unit});
      }
    }
  } else {
    rows.push_back({"snapshot", "time", "rig", "channel", "reason", "sample_rate_hz",
                    "fft_length", "bin_hz", "window", "scale", "unit", "bins"});
    for (const auto& s : snaps) {
      rows.push_back({std::to_string(s.id), base::format_rfc3339(s.t), s.rig, s.channel,
                      s.reason, num(s.sample_rate_hz), std::to_string(s.fft_length),
                      num(s.bin_hz), s.window, s.scale, s.unit,
                      std::to_string(s.magnitude.size())});
    }
  }
  print_rows(rows, o.format == "csv");
  return kExitOk;
}

int run_annotations(StoreReader& r, const QueryOptions& o) {
  base::WallTimeMs from, to;
  time_range(o, &from, &to);
  auto notes = need(r.annotations(from, to, o.rig));
  if (o.format == "json") {
    Json out = Json::array();
    for (const auto& a : notes) {
      out.push_back({{"id", a.id}, {"t", base::format_rfc3339(a.t)}, {"rig", a.rig},
                     {"text", a.text}, {"author", a.author}});
    }
    std::cout << out.dump(2) << '\n';
    return kExitOk;
  }
  std::vector<std::vector<std::string>> rows = {{"time", "rig", "author", "text"}};
  for (const auto& a : notes) rows.push_back({base::format_rfc3339(a.t), a.rig, a.author, a.text});
  print_rows(rows, o.format == "csv");
  return kExitOk;
}

}  // namespace

CommandRunner register_query_command(CLI::App& app) {
  static QueryOptions o;
  auto* cmd = app.add_subcommand("query", "Read trends, alarm events and snapshots from history");
  cmd->fallthrough();
  cmd->require_subcommand(1);
  cmd->add_option("--db", o.db_path, "History database file")->required();
  cmd->add_option("--format", o.format, "Output format")
      ->check(CLI::IsMember({"table", "json", "csv"}));
  auto range = [](CLI::App* s) {
    s->add_option("--from", o.from, "Start (RFC 3339 or unix ms); default: 24 h before --to");
    s->add_option("--to", o.to, "End, exclusive (RFC 3339 or unix ms); default: now");
  };
  auto* series = cmd->add_subcommand("series", "List the stored series");
  auto* trend = cmd->add_subcommand("trend", "A trend reduced to at most --points buckets");
  trend->add_option("--series", o.series, "RIG/CHANNEL/METRIC (repeat for several)")->required();
  trend->add_option("--points", o.points, "Most buckets per series")
      ->check(CLI::Range(1, 100000));
  range(trend);
  auto* events = cmd->add_subcommand("events", "Alarm events, newest first");
  range(events);
  events->add_option("--state", o.state, "Only this ISA-18.2 state");
  events->add_option("--rule", o.rule, "Only this rule");
  events->add_option("--rig", o.rig, "Only this rig");
  events->add_option("--limit", o.limit, "Most events")->check(CLI::Range(1, 100000));
  auto* snaps = cmd->add_subcommand("snapshots", "The stored spectra nearest a time");
  snaps->add_option("--at", o.at, "Time (RFC 3339 or unix ms); default: now");
  snaps->add_option("--count", o.count, "How many")->check(CLI::Range(1, 1000));
  snaps->add_option("--rig", o.rig, "Only this rig");
  snaps->add_option("--channel", o.channel, "Only this channel");
  snaps->add_flag("--bins", o.with_bins, "Include every bin's magnitude");
  auto* notes = cmd->add_subcommand("annotations", "Operator notes");
  range(notes);
  notes->add_option("--rig", o.rig, "Only this rig");

  return [=] {
    try {
      auto reader = StoreReader::open(o.db_path);
      if (!reader.ok()) {
        std::fprintf(stderr, "tonewarden query: %s\n", reader.error().message.c_str());
        return reader.error().code == base::ErrorCode::kNotFound ? kExitUsage
                                                                 : kExitRuntimeFailure;
      }
      StoreReader& r = **reader;
      if (series->parsed()) return run_series(r, o);
      if (trend->parsed()) return run_trend(r, o);
      if (events->parsed()) return run_events(r, o);
      if (snaps->parsed()) return run_snapshots(r, o);
      if (notes->parsed()) return run_annotations(r, o);
      return kExitUsage;
    } catch (const UsageError& e) {
      std::fprintf(stderr, "tonewarden query: %s\n", e.message.c_str());
      return kExitUsage;
    } catch (const std::exception& e) {
      std::fprintf(stderr, "tonewarden query: %s\n", e.what());
      return kExitRuntimeFailure;
    }
  };
}

}  // namespace tonewarden::daemon
