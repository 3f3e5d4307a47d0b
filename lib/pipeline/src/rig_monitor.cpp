// RigMonitor: speed, tracking, signal quality, alarms, and history for one rig.
#include "tonewarden/pipeline/rig_monitor.h"

#include <cmath>
#include <limits>
#include <optional>
#include <string>

#include "tonewarden/base/log.h"

namespace tonewarden::pipeline {
namespace {

constexpr size_t kEventBufferCapacity = 256;

store::AlarmState to_store_state(alarm::AlarmState s) {
  switch (s) {
    case alarm::AlarmState::kNormal: return store::AlarmState::kNormal;
    case alarm::AlarmState::kUnacknowledged: return store::AlarmState::kUnacknowledged;
    case alarm::AlarmState::kAcknowledged: return store::AlarmState::kAcknowledged;
    case alarm::AlarmState::kReturnedUnacknowledged: return store::AlarmState::kReturnedUnacknowledged;
    case alarm::AlarmState::kShelved: return store::AlarmState::kShelved;
  }
  return store::AlarmState::kNormal;
}

// "readings there: a, b, c": the readings that share a bad reading name's channel (or target)
// prefix, so the message shows what the rule could have read.
std::string reading_hint(const track::ReadingSet& readings, const std::string& wanted) {
  const std::string prefix = wanted.substr(0, wanted.rfind('.') + 1);
  std::string list;
  for (const track::Reading& r : readings.readings()) {
    if (!prefix.empty() && r.name.rfind(prefix, 0) != 0) continue;
    list += (list.empty() ? "" : ", ") + r.name;
  }
  if (list.empty()) return "no reading starts with '" + prefix + "'";
  return "readings there: " + list;
}

}  // namespace

struct RigMonitor::Impl {
  RigMonitorConfig config;
  store::StoreWriter* store = nullptr;
  RigEventSink* sink = nullptr;
  EvidenceRecorder* evidence = nullptr;

  track::ReadingSet readings;
  size_t speed_index = 0;
  std::optional<track::SpeedFromTach> tach;
  std::optional<track::SpeedFromSpectrum> spectral;
  track::SpeedEstimate speed;

  // Per ChannelSpec (index aligned): a tracker and quality checks for vibration channels.
  std::vector<std::optional<track::ChannelTracker>> trackers;
  std::vector<std::optional<alarm::SignalQuality>> quality;
  size_t last_vibration_channel = 0;
  size_t first_vibration_channel = SIZE_MAX;

  std::unique_ptr<alarm::AlarmEngine> engine;
  alarm::EventBuffer events{kEventBufferCapacity};

  // Storage: one series per reading, index aligned with `readings`.
  std::vector<store::SeriesId> series;
  std::vector<store::Reading> rows;
  uint64_t store_rejects = 0;
  std::vector<int64_t> last_snapshot_ms;  // per channel
  std::vector<bool> snapshot_due;         // per channel: an alarm asks for one

  void snapshot(size_t c, const ChannelPeriod& p, base::WallTimeMs t, const RigLive& live,
                const char* reason);
  void publish_alarms(RigLive& live);
};

RigMonitor::RigMonitor(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
RigMonitor::~RigMonitor() = default;

base::Result<std::unique_ptr<RigMonitor>> RigMonitor::create(const RigMonitorConfig& config,
                                                             const RigPipeline& pipeline,
                                                             store::StoreWriter* store,
                                                             RigEventSink* sink,
                                                             EvidenceRecorder* evidence) {
  auto impl = std::make_unique<Impl>();
  impl->config = config;
  impl->store = store;
  impl->sink = sink;
  impl->evidence = evidence;
  const size_t n = config.channels.size();
  impl->trackers.resize(n);
  impl->quality.resize(n);
  impl->last_snapshot_ms.assign(n, 0);
  impl->snapshot_due.assign(n, false);

  auto speed_idx = impl->readings.add(track::kSpeedReadingName, "rpm", "");
  if (!speed_idx) return std::move(speed_idx).error();
  impl->speed_index = *speed_idx;

  const double fs = pipeline.capabilities().sample_rate_hz;
  size_t tracker_i = 0;
  for (size_t c = 0; c < n; ++c) {
    const ChannelSpec& spec = config.channels[c];
    if (spec.is_tach) continue;
    if (tracker_i >= config.trackers.size()) {
      return base::make_error(base::ErrorCode::kInvalidArgument,
                              "rig '" + config.rig + "': no tracker for channel '" + spec.name + "'");
    }
    auto tracker = track::ChannelTracker::create(config.trackers[tracker_i++], impl->readings);
    if (!tracker) return std::move(tracker).error().with_context("channel '" + spec.name + "'");
    impl->trackers[c].emplace(std::move(tracker).value());
    alarm::SignalQualityConfig qc;
    qc.channel = spec.name;
    qc.full_scale = spec.full_scale_v;
    qc.flat_rms_floor = config.flat_rms_floor_v;
    auto q = alarm::SignalQuality::create(qc, impl->readings);
    if (!q) return std::move(q).error();
    impl->quality[c].emplace(std::move(q).value());
    impl->last_vibration_channel = c;
    if (impl->first_vibration_channel == SIZE_MAX) impl->first_vibration_channel = c;
  }
  if (impl->first_vibration_channel == SIZE_MAX) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "rig '" + config.rig + "' has no vibration channel");
  }

  switch (config.speed_mode) {
    case SpeedMode::kFixed:
      impl->speed = track::SpeedEstimate::fixed(config.fixed_rpm);
      break;
    case SpeedMode::kTach: {
      track::TachConfig tc = config.tach;
      tc.sample_rate_hz = fs;
      auto t = track::SpeedFromTach::create(tc);
      if (!t) return std::move(t).error().with_context("tach");
      impl->tach.emplace(std::move(t).value());
      break;
    }
    case SpeedMode::kSpectrum: {
      const size_t c = impl->first_vibration_channel;
      auto s = track::SpeedFromSpectrum::create(config.spectral, config.trackers[0].spectrum);
      if (!s) return std::move(s).error().with_context("spectral speed on '" +
                                                      config.channels[c].name + "'");
      impl->spectral.emplace(std::move(s).value());
      break;
    }
  }

  alarm::AlarmEngineConfig ec;
  ec.rules = config.rules;
  for (size_t c = 0; c < n; ++c) {
    if (!impl->quality[c]) continue;
    alarm::SignalQualityRuleConfig qr;
    qr.channel = config.channels[c].name;
    for (auto& r : alarm::signal_quality_rules(qr)) ec.rules.push_back(std::move(r));
  }
  if (config.max_rpm > config.min_rpm && config.min_rpm > 0 &&
      config.speed_mode != SpeedMode::kFixed) {
    for (auto& r : alarm::speed_range_rules(config.min_rpm, config.max_rpm, 5.0)) {
      ec.rules.push_back(std::move(r));
    }
  }
  // A rule on a reading the rig never produces would never fire: refuse it now.
  for (const alarm::RuleConfig& r : config.rules) {
    if (impl->readings.find(r.reading)) continue;
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "rig '" + config.rig + "': rule '" + r.name + "' reads '" + r.reading +
                                "', which this rig does not produce (" + reading_hint(impl->readings, r.reading) + ")");
  }
  auto engine = alarm::AlarmEngine::create(ec);
  if (!engine) return std::move(engine).error().with_context("rig '" + config.rig + "' alarms");
  impl->engine = std::move(engine).value();

  if (store) {
    for (const track::Reading& r : impl->readings.readings()) {
      std::string metric = r.name;
      if (!r.channel.empty() && metric.rfind(r.channel + ".", 0) == 0) {
        metric = metric.substr(r.channel.size() + 1);
      }
      auto id = store->register_series({config.rig, r.channel.empty() ? "rig" : r.channel, metric, r.unit});
      if (!id) return std::move(id).error().with_context("registering series '" + r.name + "'");
      impl->series.push_back(*id);
    }
    impl->rows.reserve(impl->readings.size());
  }
  return std::unique_ptr<RigMonitor>(new RigMonitor(std::move(impl)));
}

void RigMonitor::take_over_from(RigObserver& previous) {
  auto* old = dynamic_cast<RigMonitor*>(&previous);
  if (!old) return;
  Impl& s = *impl_;
  const size_t kept = s.engine->carry_over(*old->impl_->engine);
  // Speed settings need a restart, so the running estimate stays valid: keep it.
  if (s.config.speed_mode == old->impl_->config.speed_mode) {
    s.tach = old->impl_->tach;
    s.spectral = old->impl_->spectral;
    s.speed = old->impl_->speed;
  }
  if (old->impl_->last_snapshot_ms.size() == s.last_snapshot_ms.size()) {
    s.last_snapshot_ms = old->impl_->last_snapshot_ms;
  }
  base::log_info("rig '" + s.config.rig + "': " + std::to_string(kept) + " of " +
                 std::to_string(s.engine->num_rules()) + " alarm(s) keep their state across the reload");
}

void RigMonitor::on_block(std::span<const std::span<const float>> volts, int64_t first_frame,
                          base::WallTimeMs t_first, bool discontinuity) {
  Impl& s = *impl_;
  if (s.evidence) s.evidence->on_block(volts, first_frame, t_first, discontinuity);
  if (s.tach) {
    if (discontinuity) s.tach->reset();
    s.tach->process(volts[s.config.tach_channel]);
  }
  for (size_t c = 0; c < volts.size(); ++c) {
    if (s.quality[c]) s.quality[c]->process(volts[c]);
  }
}

void RigMonitor::on_period(size_t c, const ChannelPeriod& period, base::WallTimeMs t_end,
                           RigLive& live) {
  Impl& s = *impl_;
  if (!s.trackers[c]) return;

  if (s.tach) {
    s.speed = s.tach->current();
  } else if (s.spectral && c == s.first_vibration_channel) {
    s.speed = s.spectral->process(period.power);
  }
  if (s.speed.valid) {
    s.readings.set(s.speed_index, s.speed.rpm);
  } else {
    s.readings.invalidate(s.speed_index);
  }

  track::ChannelInput in{period.power, period.envelope_power, &period.stats};
  s.trackers[c]->process(in, s.speed, s.readings);
  s.quality[c]->publish(s.readings);
  s.readings.set_time(t_end);

  // Alarms and history once per rig period: when the last vibration channel has reported.
  if (c == s.last_vibration_channel) {
    s.events.clear();
    s.engine->evaluate(s.readings, t_end, s.events);
    for (const alarm::AlarmEvent& e : s.events.events()) {
      std::string evidence_path;
      if (e.cause == alarm::EventCause::kCondition && e.state == alarm::AlarmState::kUnacknowledged) {
        for (size_t k = 0; k < s.config.channels.size(); ++k) {
          if (s.config.channels[k].name == e.channel) s.snapshot_due[k] = true;
        }
        if (s.evidence) evidence_path = s.evidence->on_activation(e.t, e.rule);
      }
      if (s.store) {
        store::AlarmEvent rec;
        rec.t = e.t;
        rec.rig = s.config.rig;
        rec.channel = std::string(e.channel);
        rec.rule = std::string(e.rule);
        rec.severity = e.severity == alarm::Severity::kCritical ? store::Severity::kCritical
                                                                : store::Severity::kWarning;
        rec.state = to_store_state(e.state);
        rec.value = std::isfinite(e.value) ? e.value : 0.0;
        rec.threshold = std::isfinite(e.threshold) ? e.threshold : 0.0;
        rec.message = std::string(e.reading) + " " + alarm::severity_name(e.severity) + " (" +
                      alarm::event_cause_name(e.cause) + ")";
        rec.user = std::string(e.user.view());
        rec.comment = std::string(e.comment.view());
        rec.evidence_path = evidence_path;
        if (!s.store->append(rec)) ++s.store_rejects;
      }
      if (s.sink) s.sink->on_alarm_event(s.config.rig, e, evidence_path);
    }
    if (s.store) {
      s.rows.clear();
      const auto rs = s.readings.readings();
      for (size_t i = 0; i < rs.size(); ++i) {
        if (rs[i].valid && std::isfinite(rs[i].value)) {
          s.rows.push_back({s.series[i], t_end.unix_ms, rs[i].value});
        }
      }
      if (!s.rows.empty() && !s.store->append(std::span<const store::Reading>(s.rows))) {
        ++s.store_rejects;
      }
    }
    if (s.sink) s.sink->on_readings(s.config.rig, s.readings);

    // Copy readings and alarm states into the snapshot being prepared.
    const auto rs = s.readings.readings();
    live.readings.resize(rs.size());
    for (size_t i = 0; i < rs.size(); ++i) {
      ReadingLive& rl = live.readings[i];
      rl.name = rs[i].name;
      rl.unit = rs[i].unit;
      rl.value = rs[i].value;
      rl.valid = rs[i].valid;
      rl.t = t_end;
    }
    live.speed_rpm = s.speed.rpm;
    live.speed_valid = s.speed.valid;
    s.publish_alarms(live);
  }

  // Spectrum snapshots: periodic, and the period right after an alarm was raised.
  const bool periodic = s.config.snapshot_interval_s > 0 &&
                        t_end.unix_ms - s.last_snapshot_ms[c] >=
                            static_cast<int64_t>(s.config.snapshot_interval_s * 1000.0);
  if (s.store && (periodic || s.snapshot_due[c])) {
    s.snapshot(c, period, t_end, live, s.snapshot_due[c] ? "alarm" : "periodic");
    s.snapshot_due[c] = false;
    s.last_snapshot_ms[c] = t_end.unix_ms;
  }
}

void RigMonitor::Impl::snapshot(size_t c, const ChannelPeriod& p, base::WallTimeMs t,
                                const RigLive& live, const char* reason) {
  const ChannelLive& cl = live.channels[c];
  store::Snapshot snap;
  snap.t = t;
  snap.rig = config.rig;
  snap.channel = cl.name;
  snap.reason = reason;
  snap.sample_rate_hz = cl.sample_rate_hz;
  snap.fft_length = static_cast<int64_t>(cl.fft_length);
  snap.bin_hz = cl.bin_hz;
  snap.window = cl.window;
  snap.scale = "power";
  snap.unit = cl.unit + "^2";
  snap.magnitude.assign(p.power.begin(), p.power.end());
  if (!store->append(snap)) ++store_rejects;
}

void RigMonitor::Impl::publish_alarms(RigLive& live) {
  const auto st = engine->status();
  live.alarms.resize(st.size());
  for (size_t i = 0; i < st.size(); ++i) {
    const alarm::RuleStatus& r = st[i];
    AlarmLive& a = live.alarms[i];
    a.rule = r.name;
    a.reading = r.reading;
    a.channel = r.channel;
    a.state = alarm::alarm_state_name(r.state);
    a.severity = alarm::severity_name(r.severity);
    a.suppressed = r.suppressed;
    a.learning = r.learning;
    a.value = r.value;
    a.warning_threshold = r.warning_threshold;
    a.critical_threshold = r.critical_threshold;
    a.since = r.state_since;
    a.shelved_until = r.shelved_until;
    a.ack_user = r.ack_user.view();
    a.ack_comment = r.ack_comment.view();
  }
}

alarm::AlarmEngine& RigMonitor::alarms() noexcept { return *impl_->engine; }
const RigMonitorConfig& RigMonitor::config() const noexcept { return impl_->config; }
uint64_t RigMonitor::num_store_rejects() const noexcept { return impl_->store_rejects; }

}  // namespace tonewarden::pipeline
