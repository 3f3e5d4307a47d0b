// MqttSink: validates the MQTT settings, reads the password file, builds one MqttLink per rig
// and routes alarm events and readings to the rig's link.
#include "tonewarden/notify/mqtt_sink.h"

#include <mosquitto.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <fstream>
#include <sstream>

#include "mqtt_link.h"

namespace tonewarden::notify {
namespace {

using base::ErrorCode;
using base::make_error;

constexpr int kMaxKeepaliveS = 65535;     // MQTT keep alive is a 16-bit number of seconds
constexpr size_t kMaxTopicBytes = 65535;  // MQTT strings carry a 16-bit length

base::Error invalid(const std::string& message) {
  return make_error(ErrorCode::kInvalidArgument, "mqtt: " + message);
}

base::Result<std::string> read_password(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    return make_error(ErrorCode::kNotFound,
                      "mqtt: password_file '" + path + "': cannot read: " + std::strerror(errno));
  }
  std::ostringstream ss;
  ss << in.rdbuf();
  std::string pw = ss.str();
  while (!pw.empty() && (pw.back() == '\n' || pw.back() == '\r')) pw.pop_back();  // editors add one
  if (pw.empty()) return invalid("password_file '" + path + "' is empty");
  if (pw.find('\0') != std::string::npos || pw.find('\n') != std::string::npos) {
    return invalid("password_file '" + path + "' must hold the password on one line");
  }
  return pw;
}

std::string host_name() {
  char buf[256] = {};
  if (gethostname(buf, sizeof buf - 1) != 0 || buf[0] == '\0') return "localhost";
  return buf;
}

base::Status validate(const MqttConfig& c) {
  if (c.host.empty()) return invalid("host is empty");
  if (c.port < 1 || c.port > 65535)
    return invalid("port " + std::to_string(c.port) + " is outside [1, 65535]");
  if (c.qos < 0 || c.qos > 2) return invalid("qos " + std::to_string(c.qos) + " is outside [0, 2]");
  if (c.keepalive_s < 5 || c.keepalive_s > kMaxKeepaliveS) {
    return invalid("keepalive_s " + std::to_string(c.keepalive_s) + " is outside [5, 65535] s");
  }
  if (c.topic_prefix.find_first_of(std::string("+#\0", 3)) != std::string::npos) {
    return invalid("topic_prefix '" + c.topic_prefix + "' must not contain '+', '#' or NUL");
  }
  if (!c.topic_prefix.empty() && c.topic_prefix[0] == '$') {
    return invalid("topic_prefix '" + c.topic_prefix +
                   "' must not start with '$' (reserved for the broker)");
  }
  if (!c.password_file.empty() && c.username.empty())
    return invalid("password_file needs a username");
  if (c.rigs.empty()) return invalid("no rigs to publish for");
  if (c.min_severity != "warning" && c.min_severity != "critical") {
    return invalid("min_severity '" + c.min_severity + "' is not warning or critical");
  }
  if (c.reconnect_min.count() < 1 || c.reconnect_max < c.reconnect_min) {
    return invalid("reconnect backoff needs 1 ms <= min <= max");
  }
  if (c.readings_interval.count() < 1) return invalid("readings_interval must be >= 1 ms");
  if (c.max_queued_alarms < 1) return invalid("max_queued_alarms must be >= 1");
  return base::Status::success();
}

// The broker drops a client that publishes to a malformed topic; say so at start instead.
base::Status check_topic(const std::string& topic) {
  if (topic.size() > kMaxTopicBytes) {
    return invalid("topic '" + topic.substr(0, 40) + "...' is longer than " +
                   std::to_string(kMaxTopicBytes) + " bytes");
  }
  if (mosquitto_validate_utf8(topic.data(), static_cast<int>(topic.size())) != MOSQ_ERR_SUCCESS) {
    return invalid("topic '" + topic + "' is not valid UTF-8 (or holds control characters)");
  }
  return base::Status::success();
}

}  // namespace

std::string mqtt_topic_segment(std::string_view name) {
  if (name.empty()) return "_";
  std::string out(name);
  for (char& ch : out) {
    if (ch == '/' || ch == '+' || ch == '#' || ch == '\0') ch = '_';
  }
  if (out[0] == '$') out[0] = '_';
  return out;
}

struct MqttSink::Impl {
  std::vector<std::unique_ptr<detail::MqttLink>> links;

  detail::MqttLink* find(const std::string& rig) const noexcept {
    for (const auto& l : links) {
      if (l->rig() == rig) return l.get();
    }
    return nullptr;
  }
};

MqttSink::MqttSink(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

MqttSink::~MqttSink() { stop(); }

base::Status MqttSink::deliver(const NotifyEvent& e) {
  detail::MqttLink* link = impl_->find(e.rig);
  if (!link)
    return make_error(ErrorCode::kNotFound, "mqtt: no broker connection for rig '" + e.rig + "'");
  link->queue_alarm(to_json(e));
  return base::Status::success();
}

std::string MqttSink::describe() const {
  std::string d;
  for (const auto& l : impl_->links) d += (d.empty() ? "" : "; ") + l->describe();
  return d;
}

void MqttSink::offer_readings(const std::string& rig, const track::ReadingSet& readings) noexcept {
  if (detail::MqttLink* link = impl_->find(rig)) link->offer_readings(readings);
}

bool MqttSink::connected() const noexcept {
  for (const auto& l : impl_->links) {
    if (!l->connected()) return false;
  }
  return true;
}

MqttCounters MqttSink::counters() const noexcept {
  MqttCounters c;
  for (const auto& l : impl_->links) l->add_counters(c);
  return c;
}

void MqttSink::stop() {
  // Tell every link first so that they shut down side by side, then join them.
  for (const auto& l : impl_->links) l->request_stop();
  for (const auto& l : impl_->links) l->stop();
}

base::Result<std::unique_ptr<MqttSink>> make_mqtt_sink(const MqttConfig& c) {
  if (auto st = validate(c); !st) return st.error();
  std::string password;
  if (!c.password_file.empty()) {
    auto pw = read_password(c.password_file);
    if (!pw) return pw.error();
    password = std::move(pw).value();
  }
  std::string prefix = c.topic_prefix;
  while (!prefix.empty() && prefix.back() == '/') prefix.pop_back();
  const std::string base_id = c.client_id.empty() ? "tonewarden-" + host_name() : c.client_id;

  auto impl = std::make_unique<MqttSink::Impl>();
  std::vector<std::string> segments;
  for (const std::string& rig : c.rigs) {
    const std::string seg = mqtt_topic_segment(rig);
    for (size_t i = 0; i < segments.size(); ++i) {
      if (segments[i] == seg) {
        return invalid("rigs '" + c.rigs[i] + "' and '" + rig + "' would share the topic level '" +
                       seg + "'");
      }
    }
    segments.push_back(seg);
    detail::LinkSettings s;
    s.rig = rig;
    s.host = c.host;
    s.port = c.port;
    s.keepalive_s = c.keepalive_s;
    s.qos = c.qos;
    s.client_id = base_id + "-" + seg;
    s.username = c.username;
    s.password = password;
    const std::string root = prefix.empty() ? seg : prefix + "/" + seg;
    if (auto st = check_topic(root + "/status"); !st) return st.error();
    s.alarm_topic = root + "/alarm";
    s.readings_topic = root + "/reading";
    s.status_topic = root + "/status";
    s.publish_readings = c.publish_readings;
    s.reconnect_min = c.reconnect_min;
    s.reconnect_max = c.reconnect_max;
    s.readings_interval = c.readings_interval;
    s.max_queued_alarms = c.max_queued_alarms;
    auto link = detail::MqttLink::create(std::move(s));
    if (!link) return link.error();
    impl->links.push_back(std::move(link).value());
  }
  std::fill(password.begin(), password.end(), '\0');
  for (const auto& l : impl->links) l->start();
  auto sink = std::make_unique<MqttSink>(std::move(impl));
  sink->min_severity = c.min_severity;
  return sink;
}

}  // namespace tonewarden::notify
