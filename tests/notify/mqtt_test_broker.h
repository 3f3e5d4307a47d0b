// Test helpers for the MQTT sink: a private mosquitto broker (its own 127.0.0.1 port and config
// in a test's temp folder) and a libmosquitto subscriber that records every message it gets.
#pragma once

#include <arpa/inet.h>
#include <fcntl.h>
#include <mosquitto.h>
#include <netinet/in.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <condition_variable>
#include <filesystem>
#include <fstream>
#include <functional>
#include <mutex>
#include <sstream>
#include <string>
#include <thread>
#include <vector>

extern char** environ;

namespace tonewarden::testing {

inline constexpr const char* kMosquittoBinary = "/usr/sbin/mosquitto";        // Debian: mosquitto
inline constexpr const char* kMosquittoPasswd = "/usr/bin/mosquitto_passwd";  // Debian: mosquitto
// Every wait in these tests polls up to this long: generous for a loaded 2-core machine, and
// only spent in full when something is broken.
inline constexpr auto kMqttWait = std::chrono::seconds(20);

// Polls `done` every 10 ms until it holds or `timeout` passes; returns its last value.
inline bool eventually(const std::function<bool()>& done,
                       std::chrono::milliseconds timeout = kMqttWait) {
  const auto deadline = std::chrono::steady_clock::now() + timeout;
  while (!done()) {
    if (std::chrono::steady_clock::now() >= deadline) return done();
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
  }
  return true;
}

// A port nothing listens on right now (bound to port 0, then released).
inline int free_tcp_port() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in a{};
  a.sin_family = AF_INET;
  a.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  socklen_t len = sizeof a;
  int port = 0;
  if (::bind(fd, reinterpret_cast<sockaddr*>(&a), sizeof a) == 0 &&
      ::getsockname(fd, reinterpret_cast<sockaddr*>(&a), &len) == 0) {
    port = ntohs(a.sin_port);
  }
  ::close(fd);
  return port;
}

inline bool tcp_port_accepts(int port) {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in a{};
  a.sin_family = AF_INET;
  a.sin_port = htons(static_cast<uint16_t>(port));
  a.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  const bool ok = ::connect(fd, reinterpret_cast<sockaddr*>(&a), sizeof a) == 0;
  ::close(fd);
  return ok;
}

struct MqttBrokerOptions {
  bool persistence = false;   // keep sessions across stop()/start() (mosquitto.db in dir)
  std::string password_file;  // set: anonymous clients are refused
};

// mosquitto run as a child process. Config, password file, persistence and log all live in `dir`.
class MqttBroker {
 public:
  MqttBroker(std::filesystem::path dir, int port, MqttBrokerOptions options)
      : dir_(std::move(dir)), port_(port), options_(std::move(options)) {}
  ~MqttBroker() { stop(); }
  MqttBroker(const MqttBroker&) = delete;
  MqttBroker& operator=(const MqttBroker&) = delete;

  int port() const { return port_; }

  // Starts the broker and waits until its port accepts connections. False (with the reason in
  // log()) if the binary is missing or the broker exits or never listens.
  bool start() {
    if (::access(kMosquittoBinary, X_OK) != 0) {
      note_ = std::string(kMosquittoBinary) +
              " is missing: install Debian's mosquitto (deploy/setup.sh)";
      return false;
    }
    const std::string conf = (dir_ / "broker.conf").string();
    {
      std::ofstream out(conf);
      out << "listener " << port_ << " 127.0.0.1\n";
      if (options_.password_file.empty()) {
        out << "allow_anonymous true\n";
      } else {
        out << "allow_anonymous false\npassword_file " << options_.password_file << "\n";
      }
      out << "persistence " << (options_.persistence ? "true" : "false") << "\n";
      if (options_.persistence) out << "persistence_location " << dir_.string() << "/\n";
      out << "log_dest stderr\nlog_type error\nlog_type warning\nlog_type notice\n";
      // Run as root, mosquitto would switch to its own user, who cannot read this 0700 folder.
      if (::geteuid() == 0) out << "user root\n";
    }
    const std::string log = (dir_ / "broker.log").string();
    posix_spawn_file_actions_t actions;
    posix_spawn_file_actions_init(&actions);
    posix_spawn_file_actions_addopen(&actions, 0, "/dev/null", O_RDONLY, 0);
    posix_spawn_file_actions_addopen(&actions, 1, log.c_str(), O_WRONLY | O_CREAT | O_APPEND, 0600);
    posix_spawn_file_actions_adddup2(&actions, 1, 2);
    std::vector<std::string> args = {kMosquittoBinary, "-c", conf};
    std::vector<char*> argv;
    for (auto& a : args) argv.push_back(a.data());
    argv.push_back(nullptr);
    const int rc = posix_spawn(&pid_, kMosquittoBinary, &actions, nullptr, argv.data(), environ);
    posix_spawn_file_actions_destroy(&actions);
    if (rc != 0) {
      pid_ = -1;
      note_ = "posix_spawn failed: " + std::to_string(rc);
      return false;
    }
    const bool up = eventually([&] {
      int status = 0;
      if (::waitpid(pid_, &status, WNOHANG) == pid_) {
        pid_ = -1;
        note_ = "mosquitto exited at start";
        return true;
      }
      return tcp_port_accepts(port_);
    });
    return up && pid_ > 0;
  }

  // SIGTERM and wait (a persistent broker writes its database on the way out); SIGKILL if it
  // lingers. Idempotent.
  void stop() {
    if (pid_ <= 0) return;
    ::kill(pid_, SIGTERM);
    int status = 0;
    if (!eventually([&] { return ::waitpid(pid_, &status, WNOHANG) == pid_; })) {
      ::kill(pid_, SIGKILL);
      ::waitpid(pid_, &status, 0);
    }
    pid_ = -1;
  }

  // The broker's own output, for failure messages.
  std::string log() const {
    std::ifstream in(dir_ / "broker.log");
    std::stringstream ss;
    ss << note_ << "\n" << in.rdbuf();
    return ss.str();
  }

 private:
  std::filesystem::path dir_;
  int port_;
  MqttBrokerOptions options_;
  pid_t pid_ = -1;
  std::string note_;
};

struct MqttMessage {
  std::string topic;
  std::string payload;
  bool retained = false;  // delivered from the broker's retained store, not live
};

struct MqttSubscriberOptions {
  std::string client_id;  // empty: the library makes one up (needs clean_session)
  bool clean_session = true;
  std::string username, password;
};

// Connects, subscribes to `filter` at QoS 1 and records messages on libmosquitto's own thread.
class MqttSubscriber {
 public:
  MqttSubscriber(int port, const std::string& filter, const MqttSubscriberOptions& o = {}) {
    mosquitto_lib_init();
    mosq_ =
        mosquitto_new(o.client_id.empty() ? nullptr : o.client_id.c_str(), o.clean_session, this);
    if (!mosq_) {
      error_ = "mosquitto_new failed";
      return;
    }
    if (!o.username.empty())
      mosquitto_username_pw_set(mosq_, o.username.c_str(), o.password.c_str());
    mosquitto_message_callback_set(mosq_, &MqttSubscriber::on_message);
    mosquitto_subscribe_callback_set(mosq_, &MqttSubscriber::on_subscribe);
    int rc = mosquitto_connect(mosq_, "127.0.0.1", port, 30);
    if (rc == MOSQ_ERR_SUCCESS) rc = mosquitto_loop_start(mosq_);
    if (rc == MOSQ_ERR_SUCCESS) rc = mosquitto_subscribe(mosq_, nullptr, filter.c_str(), 1);
    if (rc != MOSQ_ERR_SUCCESS) {
      error_ = std::string("subscriber: ") + mosquitto_strerror(rc);
      return;
    }
    std::unique_lock lock(mu_);
    if (!cv_.wait_for(lock, kMqttWait, [&] { return subscribed_; }))
      error_ = "subscriber: no SUBACK";
  }
  ~MqttSubscriber() {
    if (!mosq_) return;
    mosquitto_disconnect(mosq_);
    mosquitto_loop_stop(mosq_, false);
    mosquitto_destroy(mosq_);
  }
  MqttSubscriber(const MqttSubscriber&) = delete;
  MqttSubscriber& operator=(const MqttSubscriber&) = delete;

  bool ok() const { return error_.empty(); }
  const std::string& error() const { return error_; }

  std::vector<MqttMessage> messages() {
    std::lock_guard lock(mu_);
    return messages_;
  }
  std::vector<MqttMessage> on_topic(const std::string& topic) {
    std::vector<MqttMessage> out;
    for (auto& m : messages()) {
      if (m.topic == topic) out.push_back(m);
    }
    return out;
  }
  // Waits until `done` holds for the messages so far on `topic`.
  bool wait_on(const std::string& topic,
               const std::function<bool(const std::vector<MqttMessage>&)>& done) {
    return eventually([&] { return done(on_topic(topic)); });
  }

 private:
  static void on_message(mosquitto*, void* self, const mosquitto_message* m) {
    auto* s = static_cast<MqttSubscriber*>(self);
    std::lock_guard lock(s->mu_);
    s->messages_.push_back(
        {m->topic, std::string(static_cast<const char*>(m->payload), m->payloadlen), m->retain});
  }
  static void on_subscribe(mosquitto*, void* self, int, int, const int*) {
    auto* s = static_cast<MqttSubscriber*>(self);
    {
      std::lock_guard lock(s->mu_);
      s->subscribed_ = true;
    }
    s->cv_.notify_all();
  }

  mosquitto* mosq_ = nullptr;
  std::string error_;
  std::mutex mu_;
  std::condition_variable cv_;
  bool subscribed_ = false;
  std::vector<MqttMessage> messages_;
};

}  // namespace tonewarden::testing
