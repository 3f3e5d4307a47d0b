// The daemon's main thread: start-up, the signal loop, reload and orderly shutdown.
#include "daemon.h"

#include <sys/stat.h>
#include <unistd.h>

#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <vector>

#include "commands.h"
#include "rig_factory.h"
#include "service_notify.h"
#include "signals.h"
#include "tonewarden/base/log.h"
#include "tonewarden/config/dump.h"
#include "tonewarden/config/loader.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/notify/mqtt_sink.h"
#include "tonewarden/notify/notifier.h"
#include "tonewarden/pipeline/evidence_recorder.h"
#include "reload.h"
#include "web_server.h"

namespace tonewarden::daemon {
namespace {

constexpr auto kStopDeadline = std::chrono::seconds(5);     // SIGTERM to exit, at most
constexpr auto kStoreFlushTimeout = std::chrono::milliseconds(2500);
constexpr int kLoopTickMs = 500;

void print_issues(const config::LoadedConfig& loaded) {
  for (const auto& issue : loaded.issues) {
    std::fprintf(stderr, "%s\n", config::format_issue(issue).c_str());
  }
}

// Applies the command-line overrides to the config tree's plain structs.
bool apply_overrides(const DaemonOptions& o, config::Config& c, std::string* error) {
  if (!o.listen_override.empty()) {
    const auto colon = o.listen_override.rfind(':');
    if (colon == std::string::npos) {
      *error = "--listen: expected ADDR:PORT, got '" + o.listen_override + "'";
      return false;
    }
    std::string host = o.listen_override.substr(0, colon);
    if (host.size() >= 2 && host.front() == '[' && host.back() == ']') host = host.substr(1, host.size() - 2);
    char* end = nullptr;
    const long port = std::strtol(o.listen_override.c_str() + colon + 1, &end, 10);
    if (host.empty() || *end != '\0' || port < 0 || port > 65535) {
      *error = "--listen: expected ADDR:PORT with PORT in 0..65535, got '" + o.listen_override + "'";
      return false;
    }
    c.http.listen_host = host;
    c.http.listen_port = static_cast<uint16_t>(port);
  }
  if (!o.data_dir_override.empty()) c.daemon.data_dir = o.data_dir_override;
  return true;
}

base::Status prepare_data_dir(const std::string& dir) {
  std::error_code ec;
  std::filesystem::create_directories(dir, ec);
  if (ec) {
    return base::make_error(base::ErrorCode::kIo, "data directory '" + dir + "': " + ec.message());
  }
  // Probe by writing: root ignores permission bits, a read-only mount does not.
  const std::string probe = dir + "/.write-probe";
  FILE* f = std::fopen(probe.c_str(), "w");
  if (!f) return base::errno_error(base::ErrorCode::kIo, "data directory '" + dir + "' is not writable", errno);
  std::fclose(f);
  std::remove(probe.c_str());
  return base::Status::success();
}

std::string wisdom_path(const config::Config& c) {
  return c.daemon.fft_wisdom_path.empty() ? c.daemon.data_dir + "/fftw-wisdom"
                                          : c.daemon.fft_wisdom_path;
}


store::StoreConfig to_store_config(const config::Config& c) {
  store::StoreConfig s;
  s.path = db_path(c);
  if (c.store.commit_interval_ms > 0) s.commit_interval = std::chrono::milliseconds(c.store.commit_interval_ms);
  if (c.store.queue_capacity > 0) s.queue_capacity = static_cast<size_t>(c.store.queue_capacity);
  if (c.store.busy_timeout_ms > 0) s.busy_timeout = std::chrono::milliseconds(c.store.busy_timeout_ms);
  if (c.store.raw_retention_days > 0) s.retention.raw_days = static_cast<int>(std::ceil(c.store.raw_retention_days));
  if (c.store.rollup_retention_days > 0) {
    s.retention.hour_rollup_days = static_cast<int>(std::ceil(c.store.rollup_retention_days));
    s.retention.minute_rollup_days = std::min(s.retention.minute_rollup_days, s.retention.hour_rollup_days);
    s.retention.minute_rollup_days = std::max(s.retention.minute_rollup_days, s.retention.raw_days);
  }
  if (c.store.snapshot_keep > 0) s.retention.snapshots_per_channel = c.store.snapshot_keep;
  s.retention.max_db_bytes = c.store.max_db_bytes;
  return s;
}

// Hands each alarm event to the web stream and to the notifiers, and readings to MQTT.
class EventFanout : public pipeline::RigEventSink {
 public:
  EventFanout(pipeline::RigEventSink* web, notify::Notifier* notifier, notify::MqttSink* mqtt,
              std::string data_dir)
      : web_(web), notifier_(notifier), mqtt_(mqtt), data_dir_(std::move(data_dir)) {}
  void on_alarm_event(const std::string& rig, const alarm::AlarmEvent& e,
                      std::string_view evidence) override {
    web_->on_alarm_event(rig, e, evidence);
    if (notifier_->num_sinks() == 0) return;
    notify::NotifyEvent n = notify::make_notify_event(rig, e);
    if (!evidence.empty()) {
      if (auto path = pipeline::resolve_evidence_path(data_dir_, evidence)) n.evidence = *path;
    }
    notifier_->post(std::move(n));
  }
  void on_readings(const std::string& rig, const track::ReadingSet& r) override {
    web_->on_readings(rig, r);
    if (mqtt_) mqtt_->offer_readings(rig, r);  // try_lock and copy: never waits on the broker
  }

 private:
  pipeline::RigEventSink* web_;
  notify::Notifier* notifier_;
  notify::MqttSink* mqtt_;  // null when MQTT is off; owned by the Notifier
  std::string data_dir_;    // evidence paths are relative to it
};

// `*mqtt` is left pointing at the MQTT sink (one broker connection per rig), or null.
base::Result<std::vector<std::unique_ptr<notify::Sink>>> make_sinks(const config::NotifyConfig& n,
                                                                     const std::vector<config::RigConfig>& rigs,
                                                                     notify::MqttSink** mqtt) {
  std::vector<std::unique_ptr<notify::Sink>> sinks;
  auto sev = [](config::Severity s) { return s == config::Severity::kCritical ? "critical" : "warning"; };
  if (!n.webhook.url.empty()) {
    notify::WebhookConfig w;
    w.url = n.webhook.url;
    if (n.webhook.timeout_ms > 0) w.timeout = std::chrono::milliseconds(n.webhook.timeout_ms);
    w.retries = static_cast<int>(n.webhook.retries);
    w.min_severity = sev(n.webhook.min_severity);
    auto s = notify::make_webhook_sink(w);
    if (!s) return std::move(s).error();
    sinks.push_back(std::move(s).value());
  }
  if (!n.exec.command.empty()) {
    notify::ExecConfig e;
    e.argv = n.exec.command;
    if (n.exec.timeout_s > 0) e.timeout = std::chrono::milliseconds(static_cast<int64_t>(n.exec.timeout_s * 1000));
    e.min_severity = sev(n.exec.min_severity);
    auto s = notify::make_exec_sink(e);
    if (!s) return std::move(s).error();
    sinks.push_back(std::move(s).value());
  }
  if (n.mqtt.enabled) {
    notify::MqttConfig m;
    m.host = n.mqtt.host;
    m.port = static_cast<int>(n.mqtt.port);
    m.topic_prefix = n.mqtt.topic_prefix;
    m.client_id = n.mqtt.client_id;
    m.qos = static_cast<int>(n.mqtt.qos);
    m.keepalive_s = static_cast<int>(n.mqtt.keepalive_s);
    m.username = n.mqtt.username;
    m.password_file = n.mqtt.password_file;
    m.publish_readings = n.mqtt.publish_readings;
    for (const config::RigConfig& r : rigs) m.rigs.push_back(r.name);
    auto s = notify::make_mqtt_sink(m);
    if (!s) return std::move(s).error();
    base::log_info("notify: " + (*s)->describe());
    *mqtt = s->get();
    sinks.push_back(std::move(s).value());
  }
  return sinks;
}

}  // namespace

std::string db_path(const config::Config& c) {
  const std::string& f = c.store.db_file.empty() ? std::string("tonewarden.db") : c.store.db_file;
  return (!f.empty() && f[0] == '/') ? f : c.daemon.data_dir + "/" + f;
}

base::LogLevel to_log_level(config::LogLevel l) {
  switch (l) {
    case config::LogLevel::kTrace: return base::LogLevel::kTrace;
    case config::LogLevel::kDebug: return base::LogLevel::kDebug;
    case config::LogLevel::kInfo: return base::LogLevel::kInfo;
    case config::LogLevel::kWarn: return base::LogLevel::kWarn;
    case config::LogLevel::kError:
    case config::LogLevel::kCritical: return base::LogLevel::kError;
    case config::LogLevel::kOff: return base::LogLevel::kOff;
  }
  return base::LogLevel::kInfo;
}

int run_daemon(const DaemonOptions& options) {
  const auto t_start = std::chrono::steady_clock::now();
  config::LoadedConfig loaded = config::load_config_file(options.config_path);
  if (!loaded.ok()) {
    print_issues(loaded);
    return kExitUsage;
  }
  config::Config cfg = loaded.config;
  std::string override_error;
  if (!apply_overrides(options, cfg, &override_error)) {
    std::fprintf(stderr, "tonewarden run: %s\n", override_error.c_str());
    return kExitUsage;
  }

  base::LogOptions log_opts;
  log_opts.level = to_log_level(cfg.daemon.log_level);
  if (const char* env = std::getenv("TONEWARDEN_LOG_LEVEL")) base::parse_log_level(env, &log_opts.level);
  log_opts.file_path = cfg.daemon.log_file;
  if (cfg.daemon.log_max_bytes > 0) log_opts.max_file_bytes = static_cast<size_t>(cfg.daemon.log_max_bytes);
  if (cfg.daemon.log_max_files > 0) log_opts.max_files = static_cast<size_t>(cfg.daemon.log_max_files);
  base::init_logging(log_opts);
  install_signal_handlers();
  ServiceNotifier notifier;

  if (auto st = prepare_data_dir(cfg.daemon.data_dir); !st) {
    base::log_error(st.error().message);
    std::fprintf(stderr, "tonewarden run: %s\n", st.error().message.c_str());
    return kExitRuntimeFailure;
  }

  // FFT plans: wisdom makes MEASURE plans quick; without it, ESTIMATE keeps start-up fast.
  const std::string wisdom = wisdom_path(cfg);
  bool wisdom_loaded = false;
  if (auto st = dsp::FftWisdom::load(wisdom, &wisdom_loaded); !st) {
    base::log_warn("FFT wisdom not loaded: " + st.error().message);
  }
  dsp::FftPlanning planning = dsp::FftPlanning::kAuto;
  if (cfg.daemon.fft_planner == config::FftPlanner::kEstimate) planning = dsp::FftPlanning::kEstimate;
  base::log_info(std::string("FFT wisdom ") + (wisdom_loaded ? "loaded from " : "not found at ") + wisdom);

  auto store = store::StoreWriter::create(to_store_config(cfg));
  if (!store) {
    base::log_error("store: " + store.error().message);
    std::fprintf(stderr, "tonewarden run: store: %s\n", store.error().message.c_str());
    return kExitRuntimeFailure;
  }
  base::log_info((*store)->describe());
  const int64_t run_id = (*store)->begin_run(
      {0, base::wall_now(), {}, config::config_hash(loaded.tree), TONEWARDEN_VERSION});

  WebServer web(cfg, store->get());
  notify::MqttSink* mqtt = nullptr;
  auto sinks = make_sinks(cfg.notify, cfg.rigs, &mqtt);
  if (!sinks) {
    std::fprintf(stderr, "tonewarden run: notify: %s\n", sinks.error().message.c_str());
    return kExitUsage;
  }
  notify::Notifier notifier_out(std::move(sinks).value());
  EventFanout fanout(web.event_sink(), &notifier_out, mqtt, cfg.daemon.data_dir);
  RigBuildOptions build_options;
  build_options.data_dir = cfg.daemon.data_dir;
  build_options.planning = planning;
  build_options.store = store->get();
  build_options.sink = &fanout;
  if (cfg.store.snapshot_interval_s > 0) build_options.snapshot_interval_s = cfg.store.snapshot_interval_s;
  build_options.evidence = cfg.evidence;
  std::vector<Rig> rigs;
  for (const config::RigConfig& rc : cfg.rigs) {
    auto rig = build_rig(rc, build_options);
    if (!rig) {
      base::log_error(rig.error().message);
      std::fprintf(stderr, "tonewarden run: %s\n", rig.error().message.c_str());
      (*store)->end_run(run_id, base::wall_now());
      (void)(*store)->stop(kStoreFlushTimeout);
      return rig.error().code == base::ErrorCode::kInvalidArgument ? kExitUsage : kExitRuntimeFailure;
    }
    base::log_info(rig->pipeline->describe());
    rigs.push_back(std::move(rig).value());
  }
  // Plans exist now; keep them for the next start.
  if (auto st = dsp::FftWisdom::save(wisdom); !st) base::log_warn("FFT wisdom not saved: " + st.error().message);

  for (Rig& r : rigs) {
    if (auto st = r.pipeline->start(); !st) {
      base::log_error(st.error().message);
      std::fprintf(stderr, "tonewarden run: %s\n", st.error().message.c_str());
      for (Rig& s : rigs) s.pipeline->stop();
      (*store)->end_run(run_id, base::wall_now());
      (void)(*store)->stop(kStoreFlushTimeout);
      return kExitRuntimeFailure;
    }
  }
  web.attach_rigs(&rigs);
  if (auto st = web.start(); !st) {
    base::log_error("http: " + st.error().message);
    std::fprintf(stderr, "tonewarden run: http: %s\n", st.error().message.c_str());
    for (Rig& r : rigs) r.pipeline->stop();
    (*store)->end_run(run_id, base::wall_now());
    (void)(*store)->stop(kStoreFlushTimeout);
    return st.error().code == base::ErrorCode::kInvalidArgument ? kExitUsage : kExitRuntimeFailure;
  }

  const double startup_ms =
      std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t_start).count();
  base::log_info("ready in " + std::to_string(static_cast<int>(startup_ms)) + " ms; " + web.describe());
  notifier.ready("monitoring " + std::to_string(rigs.size()) + " rig(s); " + web.describe());

  bool first_frame_logged = false;
  auto last_status = std::chrono::steady_clock::now();
  const double status_every_s = cfg.daemon.status_interval_s > 0 ? cfg.daemon.status_interval_s : 60.0;
  while (true) {
    wait_for_signal(kLoopTickMs);
    notifier.watchdog_tick();
    const SignalFlags flags = take_signal_flags();
    if (flags.stop) break;
    if (flags.reload || web.take_reload_request()) {
      notifier.reloading();
      reload_config(options, loaded, cfg, rigs, web, build_options);
      notifier.status("monitoring " + std::to_string(rigs.size()) + " rig(s)");
    }
    if (!first_frame_logged) {
      for (Rig& r : rigs) {
        if (r.pipeline->first_frame_latency_ms() >= 0) {
          base::log_info("rig '" + r.name + "': first frame analysed " +
                         std::to_string(static_cast<int>(r.pipeline->first_frame_latency_ms())) +
                         " ms after start (" + (wisdom_loaded ? "with" : "without") + " FFT wisdom)");
          first_frame_logged = true;
        }
      }
    }
    const auto now = std::chrono::steady_clock::now();
    if (std::chrono::duration<double>(now - last_status).count() >= status_every_s) {
      last_status = now;
      for (Rig& r : rigs) {
        base::log_info("rig '" + r.name + "': " + std::to_string(r.pipeline->num_frames()) +
                       " frames, " + std::to_string(r.pipeline->num_ring_overflows()) + " ring overflows");
      }
    }
    bool all_finished = !rigs.empty();
    for (Rig& r : rigs) all_finished &= r.pipeline->finished();
    if (all_finished) {
      base::log_info("every source has finished; stopping");
      break;
    }
  }

  // Orderly stop: capture, drain, flush, then stop serving.
  const auto t_stop = std::chrono::steady_clock::now();
  notifier.stopping();
  base::log_info("stopping");
  for (Rig& r : rigs) r.pipeline->stop();
  for (Rig& r : rigs) {
    if (r.evidence) r.evidence->finish();  // a clip in progress ends with the samples it has
  }
  (*store)->end_run(run_id, base::wall_now());
  const auto left = kStopDeadline - (std::chrono::steady_clock::now() - t_stop);
  if (auto st = (*store)->stop(std::max(std::chrono::duration_cast<std::chrono::milliseconds>(left) -
                                            std::chrono::milliseconds(500),
                                        std::chrono::milliseconds(100)));
      !st) {
    base::log_error("store: not everything was flushed: " + st.error().message);
  }
  web.stop();
  notifier_out.stop();
  if (mqtt) mqtt->stop();  // retained "offline", then a clean disconnect
  rigs.clear();
  base::log_info("stopped in " +
                 std::to_string(static_cast<int>(std::chrono::duration<double, std::milli>(
                                                     std::chrono::steady_clock::now() - t_stop)
                                                     .count())) +
                 " ms");
  return kExitOk;
}

}  // namespace tonewarden::daemon
