// MqttLink: one rig's broker connection (internal to notify). Owns a libmosquitto handle and the
// one thread that uses it; other threads only touch the alarm queue, the readings slot and the
// atomic counters. See mqtt_sink.h for the design.
#pragma once

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <deque>
#include <memory>
#include <mutex>
#include <string>
#include <thread>
#include <unordered_set>

#include "tonewarden/base/result.h"
#include "tonewarden/notify/mqtt_sink.h"
#include "tonewarden/track/reading_set.h"

struct mosquitto;

namespace tonewarden::notify::detail {

struct LinkSettings {
  std::string rig;
  std::string host;
  int port = 0;
  int keepalive_s = 0;
  int qos = 0;
  std::string client_id;
  std::string username;
  std::string password;  // copied into libmosquitto at create(), then wiped here
  std::string alarm_topic, readings_topic, status_topic;
  bool publish_readings = false;
  std::chrono::milliseconds reconnect_min{}, reconnect_max{}, readings_interval{};
  size_t max_queued_alarms = 0;
};

class MqttLink {
 public:
  // Sets up the handle, credentials and Last Will; starts no thread and opens no socket.
  static base::Result<std::unique_ptr<MqttLink>> create(LinkSettings settings);
  ~MqttLink();  // stop(), then frees the handle

  void start();                  // the connection thread
  void request_stop() noexcept;  // ends the thread's work without waiting for it
  void stop();  // request_stop(), then join: "offline" and disconnect happen first; idempotent

  // Any thread; never waits on the network. Drop-oldest beyond max_queued_alarms; after stop()
  // the event is only counted as dropped.
  void queue_alarm(std::string payload);
  // Analysis thread: try_lock, copy, return.
  void offer_readings(const track::ReadingSet& readings) noexcept;

  const std::string& rig() const noexcept { return s_.rig; }
  bool connected() const noexcept { return connected_.load(std::memory_order_acquire); }
  void add_counters(MqttCounters& total) const noexcept;
  std::string describe() const;

 private:
  explicit MqttLink(LinkSettings settings);
  void run();
  void flush_alarms();
  void publish_readings_if_due();
  void shut_down_session();
  bool wait_backoff();  // false: stopping
  void note_down(const std::string& why);

  // libmosquitto callbacks; they run inside mosquitto_loop() on the connection thread.
  static void on_connect(mosquitto*, void* self, int rc);
  static void on_disconnect(mosquitto*, void* self, int rc);
  static void on_publish(mosquitto*, void* self, int mid);

  LinkSettings s_;
  mosquitto* mosq_ = nullptr;
  std::thread thread_;
  std::atomic<bool> connected_{false};
  std::atomic<bool> stopping_{false};
  std::mutex stop_mu_;  // with stop_cv_: wakes the backoff wait at stop()
  std::condition_variable stop_cv_;

  // Connection thread only.
  std::chrono::milliseconds backoff_{};
  bool down_logged_ = false;            // the outage was logged; cleared by the next connect
  std::string refusal_;                 // why the broker refused the last attempt
  std::unordered_set<int> alarm_mids_;  // alarm events awaiting confirmation

  std::mutex alarms_mu_;
  std::deque<std::string> alarms_;
  bool closed_ = false;  // the thread has finished: nothing queued now would ever be sent

  std::mutex slot_mu_;
  track::ReadingSet slot_;  // latest offered set
  bool slot_fresh_ = false;
  track::ReadingSet publishing_;  // connection thread's copy, swapped with slot_
  std::chrono::steady_clock::time_point next_readings_{};

  std::atomic<uint64_t> alarms_sent_{0}, alarms_dropped_{0}, alarms_failed_{0};
  std::atomic<uint64_t> readings_sent_{0}, readings_skipped_{0}, readings_failed_{0};
  std::atomic<uint64_t> connects_{0}, connect_failures_{0};
};

// The reading message: {"t": RFC 3339, "rig": ..., "values": {name: number|null}, "units": {name:
// unit}}.
std::string readings_json(const std::string& rig, const track::ReadingSet& readings);

}  // namespace tonewarden::notify::detail
