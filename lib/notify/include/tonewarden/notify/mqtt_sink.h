// MQTT sink: publishes alarm events, rate-limited readings and each rig's online/offline status
// to a broker, so that a fleet of rigs can be watched from one place.
//
// DESIGN: one broker connection per rig, because MQTT gives a connection exactly one Last Will
// and each rig has its own status topic. Each connection owns one thread, the only one that
// touches its libmosquitto handle: it connects, reconnects with exponential backoff, and
// publishes. No other thread ever waits on the network.
//   - Alarm events: deliver() (the Notifier's worker) appends the event's JSON (to_json) to a
//     bounded queue per rig; the connection's thread publishes it to `<prefix>/<rig>/alarm` with
//     the configured QoS, not retained. While the broker is away events wait in that queue.
//     Overflow policy: drop-oldest, counted in alarms_dropped. Only a connected link hands events
//     to libmosquitto, so an outage never grows the library's own (unbounded) queue.
//   - Readings: offer_readings() (the analysis thread) copies the set into one slot per rig,
//     latest wins, under try_lock only: if the slot is busy the set is skipped (counted), never
//     waited for. The connection's thread publishes the slot to `<prefix>/<rig>/reading` at
//     QoS 0, at most once per readings_interval.
//   - `<prefix>/<rig>/status` is a retained "online" once connected. The Last Will is a retained
//     "offline", so a dead daemon shows as offline; stop() publishes "offline" itself.
// Rig names become topic levels through mqtt_topic_segment(). The password is read once from
// password_file, handed to libmosquitto and never logged or described.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/notify/notifier.h"
#include "tonewarden/track/reading_set.h"

namespace tonewarden::notify {

struct MqttConfig {
  std::string host = "127.0.0.1";           // name or address; resolved by each connect attempt
  int port = 1883;                          // [1, 65535]
  std::string topic_prefix = "tonewarden";  // may hold '/' levels; no '+', '#', NUL, leading '$'
  std::string client_id;      // empty: tonewarden-<host name>; rig connections add -<rig>
  int qos = 1;                // alarm events, [0, 2]; readings are always QoS 0
  int keepalive_s = 30;       // [5, 65535] s
  std::string username;       // empty: anonymous
  std::string password_file;  // needs a username; read once by make_mqtt_sink
  bool publish_readings = false;
  std::vector<std::string> rigs;  // one connection and one status topic each; >= 1
  std::string min_severity = "warning";
  std::chrono::milliseconds reconnect_min{500};       // first retry delay; doubles per failure
  std::chrono::milliseconds reconnect_max{30000};     // backoff ceiling, >= reconnect_min
  std::chrono::milliseconds readings_interval{1000};  // per rig, >= 1 ms
  size_t max_queued_alarms = 1000;                    // per rig, >= 1
};

// Totals over every rig's connection. Counters only grow.
struct MqttCounters {
  uint64_t alarms_sent = 0;     // confirmed: QoS 0 written, QoS 1 acknowledged, QoS 2 completed
  uint64_t alarms_dropped = 0;  // oldest queued events pushed out, left unconfirmed at stop(),
                                // or delivered after stop()
  uint64_t alarms_failed = 0;   // refused by the client library (too large, ...)
  uint64_t readings_sent = 0;
  uint64_t readings_skipped = 0;  // offer_readings found the slot busy
  uint64_t readings_failed = 0;
  uint64_t connects = 0;          // connections accepted by the broker
  uint64_t connect_failures = 0;  // attempts that failed, refusals and lost connections
};

class MqttSink final : public Sink {
 public:
  struct Impl;
  explicit MqttSink(std::unique_ptr<Impl> impl);
  ~MqttSink() override;  // stop()

  // Queues the event for its rig and returns at once; an Error only for a rig it does not know.
  base::Status deliver(const NotifyEvent& e) override;
  int max_attempts() const override { return 1; }  // queued, never worth retrying here
  std::string describe() const override;

  // Analysis thread. Never blocks; allocates only when the set's layout changes. A rig it
  // does not know, or publish_readings off: ignored.
  void offer_readings(const std::string& rig, const track::ReadingSet& readings) noexcept;

  bool connected() const noexcept;  // every rig's connection is up (the broker accepted it)
  MqttCounters counters() const noexcept;
  // Publishes "offline", disconnects and joins the threads: about a second at most (half for
  // confirmations, half for the goodbye), longer only while a host name is being resolved.
  // Idempotent. Events delivered afterwards are counted as dropped.
  void stop();

 private:
  std::unique_ptr<Impl> impl_;
};

// Validates, reads the password file, and starts one connection thread per rig. Does not wait
// for the broker: a broker that is down now is retried in the background.
base::Result<std::unique_ptr<MqttSink>> make_mqtt_sink(const MqttConfig& config);

// A name as one topic level: '/', '+', '#', NUL and a leading '$' become '_'; "" becomes "_".
std::string mqtt_topic_segment(std::string_view name);

}  // namespace tonewarden::notify
