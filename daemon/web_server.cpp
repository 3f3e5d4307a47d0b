// WebServer: the providers behind the HTTP API, over LiveState, the alarm engines and the store.
#include "web_server.h"

#include "daemon.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <deque>
#include <sys/stat.h>

#include <fstream>
#include <map>
#include <mutex>
#include <thread>

#include "tonewarden/base/log.h"
#include "tonewarden/dsp/scaling.h"
#include "tonewarden/http/decimate.h"
#include "tonewarden/http/limits.h"
#include "tonewarden/http/providers.h"
#include "tonewarden/http/server.h"
#include "tonewarden/pipeline/evidence_recorder.h"
#include "tonewarden/store/store_reader.h"
#include "tonewarden_web/assets.h"

namespace tonewarden::daemon {
namespace {

using base::ErrorCode;
using base::make_error;

constexpr size_t kAlarmQueueCapacity = 1024;  // pending stream events; drop-oldest beyond
constexpr auto kPublisherTick = std::chrono::milliseconds(250);
constexpr size_t kReaderPoolMax = 4;          // read-only database connections kept open

std::string trim_line(std::string s) {
  while (!s.empty() && (s.back() == '\n' || s.back() == '\r' || s.back() == ' ')) s.pop_back();
  return s;
}

// The API link of a clip named in the alarm log ("evidence/RIG/NAME.flac" becomes
// "/api/v1/evidence/RIG/NAME.flac"), or "" when there is none or the path is not plain.
std::string evidence_url(const std::string& data_dir, std::string_view relative_path) {
  if (relative_path.empty() || !pipeline::resolve_evidence_path(data_dir, relative_path)) return "";
  return "/api/v1/" + std::string(relative_path);
}

// "motor-de.bpfo.amplitude" -> channel "motor-de", target "bpfo", metric "amplitude".
void split_reading(const std::string& name, std::string* channel, std::string* target,
                   std::string* metric) {
  const auto first = name.find('.');
  const auto last = name.rfind('.');
  if (first == std::string::npos) {
    *channel = "";
    *target = "";
    *metric = name;
    return;
  }
  *channel = name.substr(0, first);
  *metric = name.substr(last + 1);
  *target = last > first ? name.substr(first + 1, last - first - 1) : "";
}

// A fresh random token (128 bits, hex) written to `path` with mode 0600.
base::Result<std::string> generate_token_file(const std::string& path) {
  std::ifstream rnd("/dev/urandom", std::ios::binary);
  unsigned char bytes[16];
  if (!rnd.read(reinterpret_cast<char*>(bytes), sizeof bytes)) {
    return make_error(ErrorCode::kIo, "cannot read /dev/urandom for the API token");
  }
  static const char* kHex = "0123456789abcdef";
  std::string token;
  for (unsigned char b : bytes) {
    token.push_back(kHex[b >> 4]);
    token.push_back(kHex[b & 15]);
  }
  const mode_t old = umask(077);
  std::ofstream out(path, std::ios::trunc);
  umask(old);
  out << token << "\n";
  if (!out) return make_error(ErrorCode::kIo, "cannot write the API token to '" + path + "'");
  return token;
}

std::string http_state_name(const std::string& s) {
  return s == "returned-unacknowledged" ? "returned_unacknowledged" : s;
}

}  // namespace

struct WebServer::Impl : public http::StatusProvider,
                         public http::LiveProvider,
                         public http::TrendProvider,
                         public http::AlarmProvider,
                         public http::SnapshotProvider,
                         public http::AnnotationProvider,
                         public pipeline::RigEventSink {
  config::Config cfg;
  store::StoreWriter* store = nullptr;
  std::vector<Rig>* rigs = nullptr;
  std::shared_mutex rigs_mu;
  std::unique_ptr<http::Server> server;
  std::atomic<bool> reload_requested{false};
  std::string token_note;
  std::chrono::steady_clock::time_point started = std::chrono::steady_clock::now();

  // Read-only database connections, one per concurrent request.
  std::mutex readers_mu;
  std::vector<std::unique_ptr<store::StoreReader>> readers;

  // Alarm events waiting for the publisher thread (drop-oldest, counted).
  std::mutex q_mu;
  std::condition_variable q_cv;
  std::deque<http::AlarmEvent> alarm_queue;
  uint64_t alarm_queue_dropped = 0;
  bool stopping = false;
  std::thread publisher;
  std::vector<uint64_t> last_publication;

  // Spectrogram history per vibration channel (names are unique across rigs), written by the
  // publisher thread from LiveState snapshots, read by HTTP workers; the analysis threads never
  // see it. Bound: http::kMaxSpectrogramRows (600) rows of http::kMaxSpectrogramPoints (1024)
  // floats, i.e. 600 x 1024 x 4 B = 2.4 MiB of dB values per channel plus 8 B of time a row.
  // The publisher samples every 250 ms, so spectra that come faster are thinned to that rate.
  struct ChannelHistory {
    const pipeline::RigPipeline* run = nullptr;  // the rig run the rows come from
    uint64_t periods = 0;                        // the chain's period count at the newest row
    std::string unit;
    double bin_hz = 0;
    size_t num_bins = 0;
    std::vector<double> frequency_hz;            // lowest frequency of each kept bucket
    std::deque<http::SpectrogramRow> rows;       // oldest first, times strictly increasing
  };
  std::mutex history_mu;
  std::map<std::string, ChannelHistory> history;

  // ---- helpers ----
  struct ReaderLease {
    Impl* owner;
    std::unique_ptr<store::StoreReader> reader;
    ReaderLease(Impl* o, std::unique_ptr<store::StoreReader> r) : owner(o), reader(std::move(r)) {}
    ReaderLease(ReaderLease&&) noexcept = default;
    ~ReaderLease() {
      if (!reader) return;
      std::lock_guard lock(owner->readers_mu);
      if (owner->readers.size() < kReaderPoolMax) owner->readers.push_back(std::move(reader));
    }
  };
  base::Result<ReaderLease> lease_reader() {
    {
      std::lock_guard lock(readers_mu);
      if (!readers.empty()) {
        ReaderLease l{this, std::move(readers.back())};
        readers.pop_back();
        return l;
      }
    }
    auto r = store::StoreReader::open(db_file());
    if (!r) return make_error(ErrorCode::kUnavailable, "history: " + r.error().message);
    return ReaderLease{this, std::move(r).value()};
  }
  std::string db_file() const { return db_path(cfg); }

  // ---- StatusProvider ----
  http::StatusInfo status() override {
    http::StatusInfo s;
    s.version = TONEWARDEN_VERSION;
    s.uptime_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    std::shared_lock lock(rigs_mu);
    if (rigs) {
      for (const Rig& r : *rigs) {
        http::SourceStatus src;
        src.name = r.name;
        src.sample_rate_hz = r.pipeline->capabilities().sample_rate_hz;
        if (auto live = r.pipeline->live()) {
          src.state = live->source.state;
          src.detail = live->source.last_error;
          src.frames = live->frames;
          src.overflows = live->source.ring_overflows + live->source.source_overflows;
          src.drops = live->source.underruns;
          for (const auto& ch : live->channels) {
            if (ch.t.unix_ms > src.last_frame.unix_ms) src.last_frame = ch.t;
          }
        } else {
          src.state = "starting";
        }
        if (r.evidence) {
          src.evidence_clips = r.evidence->num_clips_written();
          src.evidence_skipped = r.evidence->num_clips_skipped();
          src.evidence_failures = r.evidence->num_write_failures();
        }
        if (src.state == "lost") {
          s.healthy = false;
          s.unhealthy_reason = "rig '" + r.name + "': source lost: " + src.detail;
        }
        s.sources.push_back(std::move(src));
      }
    }
    if (store) {
      const store::StoreHealth h = store->health();
      s.storage.state = h.ok ? "ok" : "degraded";
      s.storage.detail = h.last_error;
      s.storage.rows_written = static_cast<uint64_t>(store->num_written_readings());
      s.storage.write_errors = static_cast<uint64_t>(h.num_faults);
      if (!h.ok && s.healthy) {
        s.healthy = false;
        s.unhealthy_reason = "storage: " + h.last_error;
      }
    } else {
      s.storage.state = "disabled";
    }
    return s;
  }

  http::ConfigView config() override {
    http::ConfigView v;
    for (const auto& r : cfg.rigs) {
      v.rigs.push_back({r.name, r.description,
                        r.speed.source == config::SpeedSource::kFixed ? r.speed.rpm : http::kNoValue});
      for (const auto& c : r.channels) {
        if (c.role == config::ChannelRole::kTach) continue;
        double fs = r.source.sample_rate_hz;
        v.channels.push_back({c.name, r.name, c.unit, c.sensitivity_v_per_unit * 1000.0, fs});
      }
      for (const auto& t : r.targets) {
        static const char* kKinds[] = {"fixed", "order", "bearing", "mesh", "hum"};
        v.targets.push_back({t.name, r.name, t.channel, kKinds[static_cast<int>(t.kind)],
                             t.spectrum == config::TargetSpectrum::kEnvelope ? "envelope spectrum"
                                                                             : "plain spectrum"});
      }
      for (const auto& ru : r.rules) {
        http::RuleInfo ri;
        ri.id = ru.name;
        ri.rig = r.name;
        ri.series = r.name + "." + ru.reading;
        ri.warning = ru.warning.value_or(http::kNoValue);
        ri.critical = ru.critical.value_or(http::kNoValue);
        ri.hysteresis = ru.hysteresis_pct;
        ri.on_delay_s = ru.on_delay_s;
        ri.off_delay_s = ru.off_delay_s;
        v.rules.push_back(std::move(ri));
      }
    }
    return v;
  }

  base::Status request_reload() override {
    reload_requested.store(true);
    return base::Status::success();
  }

  // ---- LiveProvider ----
  base::Result<http::LiveSpectrum> spectrum(const std::string& channel) override {
    std::shared_lock lock(rigs_mu);
    if (!rigs) return make_error(ErrorCode::kNotFound, "no rigs");
    for (const Rig& r : *rigs) {
      auto live = r.pipeline->live();
      if (!live) continue;
      for (const pipeline::ChannelLive& ch : live->channels) {
        if (ch.name != channel || ch.power.empty()) continue;
        return make_live_spectrum(*live, ch);
      }
    }
    return make_error(ErrorCode::kNotFound, "no live spectrum for channel '" + channel + "' yet");
  }

  base::Result<http::Spectrogram> spectrogram(const std::string& channel, size_t max_rows) override {
    http::Spectrogram g;
    std::lock_guard lock(history_mu);
    auto it = history.find(channel);
    if (it == history.end() || it->second.rows.empty()) {
      return make_error(ErrorCode::kNotFound, "no spectrum for channel '" + channel + "' yet");
    }
    const ChannelHistory& h = it->second;
    g.channel = channel;
    g.unit = h.unit;
    g.bin_hz = h.bin_hz;
    g.num_bins = h.num_bins;
    g.frequency_hz = h.frequency_hz;
    g.capacity = http::kMaxSpectrogramRows;
    const size_t n = std::min(max_rows, h.rows.size());
    g.rows.assign(h.rows.end() - static_cast<std::ptrdiff_t>(n), h.rows.end());
    return g;
  }

  // Publisher thread: adds each vibration channel's spectrum to its history when it is new.
  // A rig run that changed (another pipeline, a chain counting periods from 0 again), a time
  // that went backwards or a changed bin layout or unit starts the history over.
  void record_spectra(const Rig& rig, const pipeline::RigLive& live) {
    for (const pipeline::ChannelLive& ch : live.channels) {
      if (ch.power.empty() || ch.periods == 0) continue;  // a tach channel, or no spectrum yet
      std::lock_guard lock(history_mu);
      ChannelHistory& h = history[ch.name];
      const bool same_run = h.run == rig.pipeline.get() && ch.periods >= h.periods;
      const bool same_layout = ch.power.size() == h.num_bins && ch.bin_hz == h.bin_hz && ch.unit == h.unit;
      if (!h.rows.empty() && (!same_run || !same_layout || ch.t < h.rows.back().t)) h.rows.clear();
      h.run = rig.pipeline.get();
      h.periods = ch.periods;
      if (!h.rows.empty() && ch.t <= h.rows.back().t) continue;
      if (h.rows.empty()) {
        h.unit = ch.unit;
        h.bin_hz = ch.bin_hz;
        h.num_bins = ch.power.size();
        const size_t m = std::min(http::kMaxSpectrogramPoints, h.num_bins);
        h.frequency_hz.resize(m);
        for (size_t i = 0; i < m; ++i) h.frequency_hz[i] = static_cast<double>(i * h.num_bins / m) * h.bin_hz;
      }
      // Max-pool the power (unit^2), then dB re 1 unit RMS: 10*log10 of the bucket maximum.
      http::SpectrogramRow row{ch.t, http::decimate_max(ch.power, ch.bin_hz, h.frequency_hz.size()).magnitude};
      for (float& v : row.db) v = static_cast<float>(dsp::to_db(v, 1.0, dsp::SpectrumScale::kPower));
      if (h.rows.size() >= http::kMaxSpectrogramRows) h.rows.pop_front();
      h.rows.push_back(std::move(row));
    }
  }

  http::LiveSpectrum make_live_spectrum(const pipeline::RigLive& live, const pipeline::ChannelLive& ch) {
    http::LiveSpectrum s;
    s.channel = ch.name;
    s.t = ch.t;
    s.unit = ch.unit;
    s.scaling = "amplitude_rms";
    s.bin_hz = ch.bin_hz;
    s.resolution_hz = ch.resolution_hz;
    s.magnitudes.resize(ch.power.size());
    for (size_t i = 0; i < ch.power.size(); ++i) s.magnitudes[i] = std::sqrt(std::max(0.0f, ch.power[i]));
    for (const dsp::Peak& p : ch.peaks) s.peaks.push_back({p.frequency_hz, std::sqrt(p.power)});
    // Target markers: every "<channel>.<target>.frequency_hz" reading of this channel.
    std::map<std::string, http::TargetMarker> markers;
    for (const pipeline::ReadingLive& r : live.readings) {
      std::string c, t, m;
      split_reading(r.name, &c, &t, &m);
      if (c != ch.name || t.empty()) continue;
      auto& mk = markers[t];
      mk.target = t;
      if (m == "frequency_hz" && r.valid) mk.frequency_hz = r.value;
      if (m == "amplitude") mk.amplitude = r.valid ? r.value : http::kNoValue;
    }
    for (auto& [name, mk] : markers) {
      if (mk.frequency_hz > 0) s.markers.push_back(mk);
    }
    // Threshold lines: rules on a target amplitude of this channel, drawn around the target,
    // only when the reading is in the spectrum's own unit (an envelope target's is not).
    for (const pipeline::AlarmLive& a : live.alarms) {
      std::string c, t, m;
      split_reading(a.reading, &c, &t, &m);
      if (c != ch.name || t.empty() || m != "amplitude") continue;
      bool same_unit = false;
      for (const pipeline::ReadingLive& r : live.readings) {
        if (r.name == a.reading) same_unit = r.unit == ch.unit;
      }
      if (!same_unit) continue;
      double f = 0;
      for (const auto& mk : s.markers) {
        if (mk.target == t) f = mk.frequency_hz;
      }
      if (f <= 0) continue;
      const double half = std::max(5.0 * ch.bin_hz, 0.02 * f);
      if (std::isfinite(a.warning_threshold)) s.thresholds.push_back({a.rule, "warning", a.warning_threshold, f - half, f + half});
      if (std::isfinite(a.critical_threshold)) s.thresholds.push_back({a.rule, "critical", a.critical_threshold, f - half, f + half});
    }
    return s;
  }

  std::vector<http::Reading> readings() override {
    std::vector<http::Reading> out;
    std::shared_lock lock(rigs_mu);
    if (!rigs) return out;
    for (const Rig& r : *rigs) {
      auto live = r.pipeline->live();
      if (!live) continue;
      append_readings(*live, &out);
    }
    return out;
  }

  static void append_readings(const pipeline::RigLive& live, std::vector<http::Reading>* out) {
    for (const pipeline::ReadingLive& rl : live.readings) {
      http::Reading h;
      h.series = live.rig + "." + rl.name;
      h.rig = live.rig;
      split_reading(rl.name, &h.channel, &h.target, &h.metric);
      h.unit = rl.unit;
      h.value = rl.valid ? rl.value : http::kNoValue;
      h.t = rl.t;
      out->push_back(std::move(h));
    }
  }

  // ---- TrendProvider ----
  static std::string series_name(const store::SeriesKey& k) {
    return k.channel == "rig" ? k.rig + "." + k.metric : k.rig + "." + k.channel + "." + k.metric;
  }
  std::vector<std::string> series_names() override {
    std::vector<std::string> names;
    auto lease = lease_reader();
    if (!lease) return names;
    auto list = lease->reader->list_series();
    if (!list) return names;
    for (const auto& s : *list) names.push_back(series_name(s.key));
    return names;
  }
  base::Result<std::vector<http::TrendSeries>> trends(const http::TrendQuery& q) override {
    auto lease = lease_reader();
    if (!lease) return std::move(lease).error();
    auto list = lease->reader->list_series();
    if (!list) return make_error(ErrorCode::kUnavailable, list.error().message);
    store::TrendQuery sq;
    std::vector<const store::SeriesInfo*> infos;
    for (const std::string& name : q.series) {
      const store::SeriesInfo* found = nullptr;
      for (const auto& s : *list) {
        if (series_name(s.key) == name) found = &s;
      }
      if (!found) return make_error(ErrorCode::kNotFound, "unknown series '" + name + "'");
      sq.series.push_back(found->id);
      infos.push_back(found);
    }
    sq.from = q.from;
    sq.to = base::WallTimeMs{q.to.unix_ms + 1};  // the API's range is inclusive
    sq.max_points = static_cast<int>(std::clamp<size_t>(q.max_points, 1, 100000));
    auto trends = lease->reader->trend(sq);
    if (!trends) return make_error(ErrorCode::kUnavailable, trends.error().message);
    std::vector<http::TrendSeries> out;
    for (const store::Trend& t : *trends) {
      http::TrendSeries ts;
      ts.series = series_name(t.series.key);
      ts.unit = t.series.key.unit;
      ts.resolution = store::to_string(t.finest_source);
      for (const auto& p : t.points) {
        ts.points.push_back({base::WallTimeMs{p.t_unix_ms}, p.mean, p.min, p.max, static_cast<uint64_t>(p.count)});
      }
      out.push_back(std::move(ts));
    }
    return out;
  }

  // ---- AlarmProvider ----
  std::vector<http::AlarmState> states() override {
    std::vector<http::AlarmState> out;
    std::shared_lock lock(rigs_mu);
    if (!rigs) return out;
    for (const Rig& r : *rigs) {
      auto live = r.pipeline->live();
      if (!live) continue;
      for (const pipeline::AlarmLive& a : live->alarms) {
        http::AlarmState s;
        s.id = r.name + "." + a.rule;
        s.rule = a.rule;
        s.rig = r.name;
        s.series = r.name + "." + a.reading;
        s.severity = a.severity;
        s.state = http_state_name(a.state);
        s.value = a.value;
        s.since = a.since;
        if (a.state == "shelved") s.shelved_until = a.shelved_until;
        s.acknowledged_by = a.ack_user;
        s.message = a.suppressed ? "held: a signal-quality alarm is active on this channel"
                                 : (a.learning ? "learning its baseline" : "");
        out.push_back(std::move(s));
      }
    }
    return out;
  }

  base::Result<std::vector<http::AlarmEvent>> events(const http::AlarmEventQuery& q) override {
    auto lease = lease_reader();
    if (!lease) return std::move(lease).error();
    store::EventQuery eq;
    eq.from = q.from;
    eq.to = base::WallTimeMs{q.to.unix_ms + 1};
    if (!q.state.empty()) {
      store::AlarmState st;
      std::string s = q.state == "returned_unacknowledged" ? "returned-unacknowledged" : q.state;
      if (!store::parse_alarm_state(s, &st)) return make_error(ErrorCode::kInvalidArgument, "unknown state '" + q.state + "'");
      eq.state = st;
    }
    if (!q.rule.empty()) eq.rule = q.rule;
    eq.limit = static_cast<int>(std::clamp<size_t>(q.limit ? q.limit : 1000, 1, 100000));
    auto ev = lease->reader->events(eq);
    if (!ev) return make_error(ErrorCode::kUnavailable, ev.error().message);
    std::vector<http::AlarmEvent> out;
    for (const store::AlarmEvent& e : *ev) {
      http::AlarmEvent h;
      h.id = e.id;
      h.t = e.t;
      h.alarm = e.rig + "." + e.rule;
      h.rule = e.rule;
      h.severity = store::to_string(e.severity);
      h.state = http_state_name(store::to_string(e.state));
      h.value = e.value;
      h.user = e.user;
      h.comment = e.comment;
      h.message = e.message;
      h.evidence = evidence_url(cfg.daemon.data_dir, e.evidence_path);
      out.push_back(std::move(h));
    }
    return out;
  }

  // alarm id "rig.rule" -> the rig's engine.
  base::Status with_engine(const std::string& alarm_id,
                           const std::function<base::Status(alarm::AlarmEngine&, const std::string&)>& f) {
    std::shared_lock lock(rigs_mu);
    if (rigs) {
      for (Rig& r : *rigs) {
        const std::string prefix = r.name + ".";
        if (alarm_id.rfind(prefix, 0) != 0) continue;
        const std::string rule = alarm_id.substr(prefix.size());
        if (!r.monitor->alarms().rule_index(rule)) continue;
        return f(r.monitor->alarms(), rule);
      }
    }
    return make_error(ErrorCode::kNotFound, "unknown alarm '" + alarm_id + "'");
  }
  base::Status acknowledge(const std::string& alarm, const std::string& user,
                           const std::string& comment) override {
    return with_engine(alarm, [&](alarm::AlarmEngine& e, const std::string& rule) {
      return e.acknowledge(rule, user, comment, base::wall_now());
    });
  }
  base::Status shelve(const std::string& alarm, const std::string& user, int64_t duration_s,
                      const std::string& comment) override {
    return with_engine(alarm, [&](alarm::AlarmEngine& e, const std::string& rule) {
      return e.shelve(rule, duration_s * 1000, user, comment, base::wall_now());
    });
  }

  // ---- SnapshotProvider ----
  static http::SnapshotInfo snapshot_info(const store::Snapshot& s) {
    http::SnapshotInfo i;
    i.id = s.id;
    i.t = s.t;
    i.rig = s.rig;
    i.channel = s.channel;
    i.reason = s.reason;
    i.unit = s.unit;
    i.window = s.window;
    i.bin_hz = s.bin_hz;
    i.fft_length = static_cast<uint64_t>(s.fft_length);
    return i;
  }
  base::Result<std::vector<http::SnapshotInfo>> list(const http::SnapshotQuery& q) override {
    auto lease = lease_reader();
    if (!lease) return std::move(lease).error();
    const int limit = static_cast<int>(std::clamp<size_t>(q.limit ? q.limit : 100, 1, 10000));
    auto snaps = lease->reader->list_snapshots(q.from, base::WallTimeMs{q.to.unix_ms + 1}, limit, "", q.channel);
    if (!snaps) return make_error(ErrorCode::kUnavailable, snaps.error().message);
    std::vector<http::SnapshotInfo> out;
    for (const auto& s : *snaps) out.push_back(snapshot_info(s));
    return out;
  }
  base::Result<http::Snapshot> get(int64_t id) override {
    auto lease = lease_reader();
    if (!lease) return std::move(lease).error();
    auto s = lease->reader->snapshot(id);
    if (!s) return std::move(s).error();
    http::Snapshot out;
    out.info = snapshot_info(*s);
    out.magnitudes = std::move(s->magnitude);
    return out;
  }

  // ---- AnnotationProvider ----
  base::Result<std::vector<http::Annotation>> list(base::WallTimeMs from, base::WallTimeMs to,
                                                   size_t limit) override {
    auto lease = lease_reader();
    if (!lease) return std::move(lease).error();
    auto notes = lease->reader->annotations(from, base::WallTimeMs{to.unix_ms + 1});
    if (!notes) return make_error(ErrorCode::kUnavailable, notes.error().message);
    std::vector<http::Annotation> out;
    for (const auto& n : *notes) {
      if (limit && out.size() >= limit) break;
      out.push_back({n.id, n.t, n.rig, n.author, n.text});
    }
    return out;
  }
  base::Result<int64_t> add(const http::Annotation& note) override {
    if (!store) return make_error(ErrorCode::kUnavailable, "history is disabled");
    store::Annotation a;
    a.t = note.t.unix_ms ? note.t : base::wall_now();
    a.rig = note.rig;
    a.text = note.text;
    a.author = note.user;
    if (!store->append(a)) return make_error(ErrorCode::kUnavailable, "the history queue is full");
    if (auto st = store->flush(std::chrono::seconds(5)); !st) {
      return make_error(ErrorCode::kUnavailable, "note not stored yet: " + st.error().message);
    }
    // The database assigns the id: read it back (newest matching note at that instant).
    auto lease = lease_reader();
    if (!lease) return std::move(lease).error();
    auto notes = lease->reader->annotations(a.t, base::WallTimeMs{a.t.unix_ms + 1}, a.rig);
    if (!notes) return make_error(ErrorCode::kUnavailable, notes.error().message);
    int64_t id = 0;
    for (const auto& n : *notes) {
      if (n.text == a.text && n.author == a.author) id = std::max(id, n.id);
    }
    if (id == 0) return make_error(ErrorCode::kInternal, "note stored but not found again");
    return id;
  }

  // ---- RigEventSink (analysis threads) ----
  void on_alarm_event(const std::string& rig, const alarm::AlarmEvent& e,
                      std::string_view evidence) override {
    http::AlarmEvent h;
    h.evidence = evidence_url(cfg.daemon.data_dir, evidence);
    h.t = e.t;
    h.alarm = rig + "." + std::string(e.rule);
    h.rule = std::string(e.rule);
    h.severity = alarm::severity_name(e.severity);
    h.state = http_state_name(alarm::alarm_state_name(e.state));
    h.value = e.value;
    h.user = std::string(e.user.view());
    h.comment = std::string(e.comment.view());
    h.message = std::string(e.reading) + " " + alarm::event_cause_name(e.cause);
    std::lock_guard lock(q_mu);
    if (alarm_queue.size() >= kAlarmQueueCapacity) {
      alarm_queue.pop_front();
      ++alarm_queue_dropped;
    }
    alarm_queue.push_back(std::move(h));
    q_cv.notify_one();
  }
  void on_readings(const std::string&, const track::ReadingSet&) override {
    // Readings reach the stream through the publisher thread, which reads LiveState.
  }

  void publisher_loop() {
    while (true) {
      std::deque<http::AlarmEvent> pending;
      {
        std::unique_lock lock(q_mu);
        q_cv.wait_for(lock, kPublisherTick, [&] { return stopping || !alarm_queue.empty(); });
        if (stopping) return;
        pending.swap(alarm_queue);
      }
      if (!server) continue;
      for (const auto& e : pending) server->events().publish_alarm(e);
      std::shared_lock lock(rigs_mu);
      if (!rigs) continue;
      last_publication.resize(rigs->size(), 0);
      for (size_t i = 0; i < rigs->size(); ++i) {
        auto live = (*rigs)[i].pipeline->live();
        if (live) record_spectra((*rigs)[i], *live);
        if (!live || live->readings.empty() || live->publications == last_publication[i]) continue;
        last_publication[i] = live->publications;
        std::vector<http::Reading> rs;
        append_readings(*live, &rs);
        server->events().publish_readings(rs);
      }
    }
  }
};

WebServer::WebServer(const config::Config& cfg, store::StoreWriter* store)
    : impl_(std::make_unique<Impl>()) {
  impl_->cfg = cfg;
  impl_->store = store;
}

WebServer::~WebServer() { stop(); }

pipeline::RigEventSink* WebServer::event_sink() { return impl_.get(); }

void WebServer::attach_rigs(std::vector<Rig>* rigs) {
  std::unique_lock lock(impl_->rigs_mu);
  impl_->rigs = rigs;
}

std::unique_lock<std::shared_mutex> WebServer::lock_rigs_for_change() {
  return std::unique_lock(impl_->rigs_mu);
}

base::Status WebServer::start() {
  const config::HttpConfig& h = impl_->cfg.http;
  if (!h.enabled) return base::Status::success();
  http::ServerConfig sc;
  sc.bind_address = h.listen_host.empty() ? "127.0.0.1" : h.listen_host;
  sc.port = h.listen_port;
  sc.token = h.token;
  if (!h.token_file.empty()) {
    std::ifstream in(h.token_file);
    if (!in) return make_error(ErrorCode::kInvalidArgument, "http.token_file '" + h.token_file + "' cannot be read");
    std::string token((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    sc.token = trim_line(token);
  }
  if (sc.token.empty()) {
    // Changes always need a token: with none configured, make one for this data directory.
    const std::string path = impl_->cfg.daemon.data_dir + "/api-token";
    auto token = generate_token_file(path);
    if (!token) return std::move(token).error();
    sc.token = *token;
    impl_->token_note = "changes need the API token in " + path;
  }
  if (h.max_event_streams > 0) sc.max_event_streams = static_cast<size_t>(h.max_event_streams);
  sc.version = TONEWARDEN_VERSION;
  sc.evidence_dir = impl_->cfg.daemon.data_dir + "/" + std::string(pipeline::kEvidenceFolder);

  http::Providers p;
  p.status = impl_.get();
  p.live = impl_.get();
  p.trends = impl_.get();
  p.alarms = impl_.get();
  p.snapshots = impl_.get();
  p.annotations = impl_.get();
  p.on_internal_error = [](std::string_view line) { base::log_error("http: " + std::string(line)); };
  http::AssetMap assets;
  for (const web::Asset& a : web::dashboard_assets()) {
    assets[a.url_path] = http::StaticAsset{a.content_type, std::string(a.data, a.size)};
  }
  auto server = http::Server::create(sc, p, std::move(assets));
  if (!server) return std::move(server).error();
  if (auto st = (*server)->start(); !st) return st;
  impl_->server = std::move(server).value();
  impl_->publisher = std::thread([this] { impl_->publisher_loop(); });
  return base::Status::success();
}

void WebServer::stop() {
  {
    std::lock_guard lock(impl_->q_mu);
    impl_->stopping = true;
  }
  impl_->q_cv.notify_all();
  if (impl_->publisher.joinable()) impl_->publisher.join();
  if (impl_->server) impl_->server->stop();
}

bool WebServer::take_reload_request() { return impl_->reload_requested.exchange(false); }

std::string WebServer::describe() const {
  if (!impl_->server) return "HTTP off";
  const config::HttpConfig& h = impl_->cfg.http;
  const std::string host = h.listen_host.empty() ? "127.0.0.1" : h.listen_host;
  const std::string url = "http://" + (host.find(':') != std::string::npos ? "[" + host + "]" : host) +
                          ":" + std::to_string(impl_->server->port()) + "/";
  return "dashboard and API at " + url + " (" + impl_->server->describe() + ")" + (impl_->token_note.empty() ? "" : "; " + impl_->token_note);
}

}  // namespace tonewarden::daemon
