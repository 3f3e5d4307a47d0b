// MqttLink: one rig's broker connection on its own thread: connect, reconnect with backoff,
// publish queued alarm events, rate-limited readings and the retained online/offline status.
#include "mqtt_link.h"

#include <mosquitto.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <mutex>
#include <nlohmann/json.hpp>

#include "tonewarden/base/log.h"

namespace tonewarden::notify::detail {
namespace {

using base::ErrorCode;
using base::make_error;
using Clock = std::chrono::steady_clock;

constexpr int kLoopTickMs =
    100;  // longest wait in the socket loop: bounds alarm latency and stop()
// stop(): at most this long for queued events to be confirmed, and as long again for "offline"
// and the DISCONNECT, so that the daemon's own stop deadline holds while the broker answers.
constexpr auto kStopStep = std::chrono::milliseconds(500);
constexpr int kStatusQos = 1;
constexpr char kOnline[] = "online";
constexpr char kOffline[] = "offline";

// Library messages end in a full stop; ours go on after them.
std::string without_full_stop(std::string text) {
  if (!text.empty() && text.back() == '.') text.pop_back();
  return text;
}

// errno must be read right after the failing call, before anything else can change it.
std::string error_text(int rc, int saved_errno) {
  if (rc == MOSQ_ERR_ERRNO) return std::strerror(saved_errno);
  return without_full_stop(mosquitto_strerror(rc));
}

std::string seconds_text(std::chrono::milliseconds ms) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%g s", static_cast<double>(ms.count()) / 1000.0);
  return buf;
}

}  // namespace

MqttLink::MqttLink(LinkSettings settings) : s_(std::move(settings)) {}

base::Result<std::unique_ptr<MqttLink>> MqttLink::create(LinkSettings settings) {
  static std::once_flag once;
  std::call_once(once, [] { mosquitto_lib_init(); });  // process lifetime; never cleaned up
  std::unique_ptr<MqttLink> link(new MqttLink(std::move(settings)));
  const LinkSettings& s = link->s_;
  const std::string what = "mqtt rig '" + s.rig + "'";
  link->mosq_ = mosquitto_new(s.client_id.c_str(), true, link.get());
  if (!link->mosq_) {
    return make_error(ErrorCode::kInternal,
                      what + ": cannot create a client: " + std::strerror(errno));
  }
  // Only the connection thread uses the handle; the library must not write from publish calls,
  // so that callbacks never run inside mosquitto_publish().
  mosquitto_threaded_set(link->mosq_, true);
  mosquitto_connect_callback_set(link->mosq_, &MqttLink::on_connect);
  mosquitto_disconnect_callback_set(link->mosq_, &MqttLink::on_disconnect);
  mosquitto_publish_callback_set(link->mosq_, &MqttLink::on_publish);
  if (!s.username.empty()) {
    const int rc = mosquitto_username_pw_set(link->mosq_, s.username.c_str(),
                                             s.password.empty() ? nullptr : s.password.c_str());
    std::fill(link->s_.password.begin(), link->s_.password.end(), '\0');
    link->s_.password.clear();
    if (rc != MOSQ_ERR_SUCCESS) {
      return make_error(ErrorCode::kInvalidArgument,
                        what + ": credentials: " + mosquitto_strerror(rc));
    }
  }
  const int rc = mosquitto_will_set(link->mosq_, s.status_topic.c_str(), sizeof kOffline - 1,
                                    kOffline, kStatusQos, true);
  if (rc != MOSQ_ERR_SUCCESS) {
    return make_error(ErrorCode::kInvalidArgument,
                      what + ": last will on '" + s.status_topic + "': " + mosquitto_strerror(rc));
  }
  link->backoff_ = s.reconnect_min;
  return link;
}

MqttLink::~MqttLink() {
  stop();
  if (mosq_) mosquitto_destroy(mosq_);
}

void MqttLink::start() {
  thread_ = std::thread([this] { run(); });
}

void MqttLink::request_stop() noexcept {
  {
    std::lock_guard lock(stop_mu_);
    stopping_.store(true);
  }
  stop_cv_.notify_all();
}

void MqttLink::stop() {
  request_stop();
  if (thread_.joinable()) thread_.join();
}

std::string MqttLink::describe() const {
  std::string d = "mqtt " + s_.host + ":" + std::to_string(s_.port) + " as '" + s_.client_id +
                  "': '" + s_.alarm_topic + "' QoS " + std::to_string(s_.qos);
  if (s_.publish_readings)
    d += ", '" + s_.readings_topic + "' every " + seconds_text(s_.readings_interval);
  return d + ", '" + s_.status_topic + "'";
}

void MqttLink::queue_alarm(std::string payload) {
  std::lock_guard lock(alarms_mu_);
  if (closed_) {
    alarms_dropped_.fetch_add(1, std::memory_order_relaxed);
    return;
  }
  if (alarms_.size() >= s_.max_queued_alarms) {
    alarms_.pop_front();
    alarms_dropped_.fetch_add(1, std::memory_order_relaxed);
  }
  alarms_.push_back(std::move(payload));
}

void MqttLink::offer_readings(const track::ReadingSet& readings) noexcept {
  if (!s_.publish_readings) return;
  std::unique_lock lock(slot_mu_, std::try_to_lock);
  if (!lock.owns_lock()) {  // the connection thread is swapping the slot: skip, never wait
    readings_skipped_.fetch_add(1, std::memory_order_relaxed);
    return;
  }
  try {
    slot_ = readings;  // same layout as last time: reuses every string's capacity
    slot_fresh_ = true;
  } catch (...) {
    readings_failed_.fetch_add(1, std::memory_order_relaxed);
  }
}

void MqttLink::add_counters(MqttCounters& t) const noexcept {
  t.alarms_sent += alarms_sent_.load();
  t.alarms_dropped += alarms_dropped_.load();
  t.alarms_failed += alarms_failed_.load();
  t.readings_sent += readings_sent_.load();
  t.readings_skipped += readings_skipped_.load();
  t.readings_failed += readings_failed_.load();
  t.connects += connects_.load();
  t.connect_failures += connect_failures_.load();
}

// ---- connection thread ----

void MqttLink::run() {
  bool have_socket = false;  // a TCP connection exists (the broker may not have accepted it yet)
  bool addressed = false;    // connect_async succeeded once, so reconnect_async knows the host
  while (!stopping_.load()) {
    if (!have_socket) {
      errno = 0;
      const int rc = addressed
                         ? mosquitto_reconnect_async(mosq_)
                         : mosquitto_connect_async(mosq_, s_.host.c_str(), s_.port, s_.keepalive_s);
      const int saved_errno = errno;
      if (rc != MOSQ_ERR_SUCCESS) {
        note_down(error_text(rc, saved_errno));
        if (!wait_backoff()) break;
        continue;
      }
      addressed = have_socket = true;
    }
    errno = 0;
    const int rc = mosquitto_loop(mosq_, kLoopTickMs, 1);
    const int saved_errno = errno;
    if (rc != MOSQ_ERR_SUCCESS) {
      have_socket = false;
      connected_.store(false, std::memory_order_release);
      note_down(refusal_.empty() ? error_text(rc, saved_errno) : refusal_);
      refusal_.clear();
      if (!wait_backoff()) break;
      continue;
    }
    if (connected()) {
      flush_alarms();
      publish_readings_if_due();
    }
  }
  shut_down_session();
}

bool MqttLink::wait_backoff() {
  std::unique_lock lock(stop_mu_);
  if (stop_cv_.wait_for(lock, backoff_, [&] { return stopping_.load(); })) return false;
  backoff_ = std::min(backoff_ * 2, s_.reconnect_max);
  return true;
}

void MqttLink::note_down(const std::string& why) {
  connect_failures_.fetch_add(1, std::memory_order_relaxed);
  if (down_logged_) return;  // once per state change; the counter keeps the rest
  down_logged_ = true;
  base::log_warn("mqtt: rig '" + s_.rig + "': broker " + s_.host + ":" + std::to_string(s_.port) +
                 ": " + why + "; retrying with backoff up to " + seconds_text(s_.reconnect_max));
}

void MqttLink::flush_alarms() {
  std::deque<std::string> batch;
  {
    std::lock_guard lock(alarms_mu_);
    batch.swap(alarms_);
  }
  while (!batch.empty()) {
    const std::string& payload = batch.front();
    int mid = 0;
    const int rc =
        mosquitto_publish(mosq_, &mid, s_.alarm_topic.c_str(), static_cast<int>(payload.size()),
                          payload.data(), s_.qos, false);
    if (rc == MOSQ_ERR_SUCCESS || (rc == MOSQ_ERR_NO_CONN && s_.qos > 0)) {
      // QoS 1/2 without a connection stays in the library's queue and goes out after the
      // reconnect; publishing it again would send it twice.
      alarm_mids_.insert(mid);
    } else if (rc == MOSQ_ERR_NO_CONN) {
      break;  // QoS 0 is not kept by the library: keep it in ours
    } else {
      alarms_failed_.fetch_add(1, std::memory_order_relaxed);
      base::log_warn("mqtt: rig '" + s_.rig +
                     "': alarm event not published: " + mosquitto_strerror(rc));
    }
    batch.pop_front();
  }
  if (!batch.empty()) {
    std::lock_guard lock(alarms_mu_);
    while (!batch.empty()) {  // back to the front, oldest first, within the same bound
      if (alarms_.size() >= s_.max_queued_alarms) {
        alarms_dropped_.fetch_add(1, std::memory_order_relaxed);
      } else {
        alarms_.push_front(std::move(batch.back()));
      }
      batch.pop_back();
    }
  }
}

void MqttLink::publish_readings_if_due() {
  if (!s_.publish_readings) return;
  const auto now = Clock::now();
  if (now < next_readings_) return;
  {
    std::lock_guard lock(slot_mu_);
    if (!slot_fresh_) return;
    std::swap(slot_, publishing_);  // moves only; the analysis thread gets a set to copy into
    slot_fresh_ = false;
  }
  next_readings_ = now + s_.readings_interval;
  const std::string payload = readings_json(s_.rig, publishing_);
  const int rc = mosquitto_publish(mosq_, nullptr, s_.readings_topic.c_str(),
                                   static_cast<int>(payload.size()), payload.data(), 0, false);
  (rc == MOSQ_ERR_SUCCESS ? readings_sent_ : readings_failed_)
      .fetch_add(1, std::memory_order_relaxed);
}

void MqttLink::shut_down_session() {
  if (connected()) {
    flush_alarms();
    // Give queued QoS 1/2 events a moment to be confirmed, then say goodbye.
    const auto confirm_by = Clock::now() + kStopStep;
    while (!alarm_mids_.empty() && connected() && Clock::now() < confirm_by) {
      if (mosquitto_loop(mosq_, kLoopTickMs / 2, 1) != MOSQ_ERR_SUCCESS) break;
    }
    if (connected()) {
      // Written before the DISCONNECT on the same socket; a clean DISCONNECT makes the broker
      // discard the Last Will, so "offline" has to be published here.
      mosquitto_publish(mosq_, nullptr, s_.status_topic.c_str(), sizeof kOffline - 1, kOffline,
                        kStatusQos, true);
      mosquitto_disconnect(mosq_);
      const auto goodbye_by = Clock::now() + kStopStep;
      while (connected() && Clock::now() < goodbye_by) {
        if (mosquitto_loop(mosq_, kLoopTickMs / 2, 1) != MOSQ_ERR_SUCCESS) break;
      }
    }
  }
  connected_.store(false, std::memory_order_release);
  // Handed to the library but never confirmed: they may or may not have reached the broker.
  alarms_dropped_.fetch_add(alarm_mids_.size(), std::memory_order_relaxed);
  alarm_mids_.clear();
  std::lock_guard lock(alarms_mu_);
  closed_ = true;
  alarms_dropped_.fetch_add(alarms_.size(), std::memory_order_relaxed);
  alarms_.clear();
}

void MqttLink::on_connect(mosquitto* m, void* self, int rc) {
  auto* link = static_cast<MqttLink*>(self);
  if (rc != 0) {
    // The broker refused (bad credentials, ...); mosquitto_loop() then fails and run() retries.
    link->refusal_ = "refused: " + without_full_stop(mosquitto_connack_string(rc));
    return;
  }
  link->connected_.store(true, std::memory_order_release);
  link->connects_.fetch_add(1, std::memory_order_relaxed);
  link->backoff_ = link->s_.reconnect_min;
  link->down_logged_ = false;
  base::log_info("mqtt: rig '" + link->s_.rig + "': connected to " + link->s_.host + ":" +
                 std::to_string(link->s_.port) + " as '" + link->s_.client_id + "'");
  mosquitto_publish(m, nullptr, link->s_.status_topic.c_str(), sizeof kOnline - 1, kOnline,
                    kStatusQos, true);
}

void MqttLink::on_disconnect(mosquitto*, void* self, int) {
  static_cast<MqttLink*>(self)->connected_.store(false, std::memory_order_release);
}

void MqttLink::on_publish(mosquitto*, void* self, int mid) {
  auto* link = static_cast<MqttLink*>(self);
  if (link->alarm_mids_.erase(mid) > 0) link->alarms_sent_.fetch_add(1, std::memory_order_relaxed);
}

std::string readings_json(const std::string& rig, const track::ReadingSet& readings) {
  nlohmann::json values = nlohmann::json::object();
  nlohmann::json units = nlohmann::json::object();
  for (const track::Reading& r : readings.readings()) {
    values[r.name] =
        (r.valid && std::isfinite(r.value)) ? nlohmann::json(r.value) : nlohmann::json(nullptr);
    units[r.name] = r.unit;
  }
  nlohmann::json j = {{"t", base::format_rfc3339(readings.time())},
                      {"rig", rig},
                      {"values", std::move(values)},
                      {"units", std::move(units)}};
  return j.dump();
}

}  // namespace tonewarden::notify::detail
