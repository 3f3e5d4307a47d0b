// DeviceSource: capture from an audio interface through PortAudio.
//
// DESIGN: PortAudio calls our callback on its own real-time thread; the callback only copies
// the interleaved float block into a lock-free SPSC ring (no allocation, lock or logging) and
// counts what does not fit (overflow policy: reject-newest, counted as overflows). read(), on
// the capture thread, drains the ring. A device that stops delivering (unplugged, stream
// error, no callback for kStallTimeoutMs) is reported as kLost and reopened with exponential
// backoff until it returns; the first block after a reconnect is marked as a discontinuity
// and its frame index jumps by the time that was lost, so timestamps stay true.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"
#include "tonewarden/source/source.h"

namespace tonewarden::source {

struct DeviceInfo {
  int index = -1;
  std::string name;
  std::string host_api;
  int max_input_channels = 0;
  double default_sample_rate_hz = 0;
};

// Lists the input devices (max_input_channels > 0). ALSA's start-up chatter is silenced.
// An empty list is not an error; a PortAudio failure is.
base::Result<std::vector<DeviceInfo>> list_input_devices();

struct DeviceSourceConfig {
  std::string device;               // name substring (case-insensitive); or
  int device_index = -1;            // an index from list_input_devices() (>= 0 wins)
  double sample_rate_hz = 48000.0;  // (0, 384000]
  size_t channels = 2;              // [1, 64]
  size_t frames_per_buffer = 1024;  // PortAudio buffer, [16, 65536]
  double ring_seconds = 2.0;        // callback-to-capture buffer, [0.1, 60]
  int retry_initial_ms = 500;       // first reconnect delay; doubles up to retry_max_ms
  int retry_max_ms = 30000;
  base::WallTimeMs start_time{};    // unix_ms 0: the wall clock at start()
};

class DeviceSource final : public Source {
 public:
  static base::Result<std::unique_ptr<DeviceSource>> create(const DeviceSourceConfig& config);
  ~DeviceSource() override;

  SourceCapabilities capabilities() const override;
  // Opens the device. kNotFound (with the list of inputs) when no device matches.
  base::Status start() override;
  base::Result<size_t> read(std::span<float> out_interleaved, BlockInfo* info) override;
  void stop() noexcept override;
  SourceHealth health() const override;
  std::string describe() const override;

  uint64_t num_reconnects() const noexcept;

  struct Impl;

 private:
  explicit DeviceSource(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::source
