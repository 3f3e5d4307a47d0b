// Focus: DeviceSource through the real PortAudio/ALSA path, fed by an ALSA file-plugin device
// that plays a known signal; and the clear errors when no device matches.
#include "tonewarden/source/device_source.h"

#include <gtest/gtest.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <vector>

namespace tonewarden::source {
namespace {

constexpr double kRate = 48000.0;
constexpr size_t kChannels = 2;
constexpr size_t kFileFrames = 48000;  // one second of known samples

// Writes the known signal and an ALSA configuration that defines the "twtestsrc" capture
// device over it, and points ALSA at that configuration (before PortAudio starts).
class AlsaFileDevice {
 public:
  AlsaFileDevice() {
    dir_ = std::filesystem::temp_directory_path() / ("tw_alsa_" + std::to_string(::getpid()));
    std::filesystem::create_directories(dir_);
    samples_.resize(kFileFrames * kChannels);
    for (size_t i = 0; i < kFileFrames; ++i) {
      samples_[2 * i] = static_cast<float>(i) / kFileFrames;          // ramp on channel 0
      samples_[2 * i + 1] = -static_cast<float>(i % 997) / 997.0f;    // saw on channel 1
    }
    const auto raw = dir_ / "signal_f32le_48k_2ch.raw";
    std::ofstream(raw, std::ios::binary)
        .write(reinterpret_cast<const char*>(samples_.data()), samples_.size() * sizeof(float));
    const auto conf = dir_ / "asound.conf";
    std::ofstream(conf) << "</usr/share/alsa/alsa.conf>\n"
                        << "pcm.twtestsrc { type file; slave.pcm \"null\"; file \"/dev/null\"; infile \""
                        << raw.string() << "\"; format \"raw\" }\n";
    setenv("ALSA_CONFIG_PATH", conf.c_str(), 1);
  }
  ~AlsaFileDevice() { std::filesystem::remove_all(dir_); }
  const std::vector<float>& samples() const { return samples_; }

 private:
  std::filesystem::path dir_;
  std::vector<float> samples_;
};

TEST(DeviceSourceTest, ListsTheFilePluginDevice) {
  AlsaFileDevice device;
  auto list = list_input_devices();
  ASSERT_TRUE(list.ok()) << list.error().message;
  bool found = false;
  for (const auto& d : *list) found |= d.name.find("twtestsrc") != std::string::npos;
  EXPECT_TRUE(found);
}

TEST(DeviceSourceTest, DeliversTheKnownSignalByteForByte) {
  AlsaFileDevice device;
  DeviceSourceConfig c;
  c.device = "twtestsrc";
  c.channels = kChannels;
  c.sample_rate_hz = kRate;
  c.frames_per_buffer = 256;
  c.ring_seconds = 30;  // the file plugin is not paced: give the callback room
  auto src = DeviceSource::create(c);
  ASSERT_TRUE(src.ok()) << src.error().message;
  ASSERT_TRUE((*src)->start().ok());
  const size_t want = kFileFrames / 2;
  std::vector<float> got;
  std::vector<float> buf(1024 * kChannels);
  int64_t expected_first = 0;
  for (int tries = 0; got.size() < want * kChannels && tries < 2000; ++tries) {
    BlockInfo info;
    auto n = (*src)->read(buf, &info);
    ASSERT_TRUE(n.ok()) << n.error().message;
    if (*n == 0) continue;
    EXPECT_EQ(info.first_frame, expected_first);
    expected_first += static_cast<int64_t>(*n);
    got.insert(got.end(), buf.begin(), buf.begin() + static_cast<long>(*n * kChannels));
  }
  (*src)->stop();
  ASSERT_GE(got.size(), want * kChannels);
  // Expected: exactly the file's samples (the plugin delivers them unchanged).
  for (size_t i = 0; i < want * kChannels; ++i) {
    ASSERT_EQ(got[i], device.samples()[i]) << "sample " << i;
  }
  EXPECT_EQ((*src)->health().overflows, 0u);
}

TEST(DeviceSourceTest, NoMatchingDeviceGivesAClearError) {
  AlsaFileDevice device;
  DeviceSourceConfig c;
  c.device = "no-such-interface";
  auto src = DeviceSource::create(c);
  ASSERT_TRUE(src.ok());
  const auto st = (*src)->start();
  ASSERT_FALSE(st.ok());
  EXPECT_EQ(st.error().code, base::ErrorCode::kNotFound);
  EXPECT_NE(st.error().message.find("no input device matches 'no-such-interface'"), std::string::npos)
      << st.error().message;
  EXPECT_EQ((*src)->health().state, SourceState::kLost);
}

TEST(DeviceSourceTest, LostDeviceIsRetriedWithBackoffAndReported) {
  AlsaFileDevice device;
  DeviceSourceConfig c;
  c.device = "no-such-interface";
  c.retry_initial_ms = 10;
  c.retry_max_ms = 40;
  auto src = DeviceSource::create(c);
  ASSERT_TRUE(src.ok());
  ASSERT_FALSE((*src)->start().ok());
  std::vector<float> buf(512);
  for (int i = 0; i < 20; ++i) {
    BlockInfo info;
    auto n = (*src)->read(buf, &info);
    ASSERT_TRUE(n.ok());  // a lost device is a state, not a failed call
    EXPECT_EQ(*n, 0u);
  }
  const SourceHealth h = (*src)->health();
  EXPECT_EQ(h.state, SourceState::kLost);
  EXPECT_GE(h.errors, 2u);  // the first failure and at least one failed retry
  EXPECT_NE(h.last_error.find("no input device matches"), std::string::npos);
}

TEST(DeviceSourceTest, RejectsBadSettings) {
  DeviceSourceConfig c;  // no device named
  c.channels = 0;
  auto src = DeviceSource::create(c);
  ASSERT_FALSE(src.ok());
  EXPECT_NE(src.error().message.find("device name or index required"), std::string::npos);
  EXPECT_NE(src.error().message.find("channels must be in [1, 64]"), std::string::npos);
}

}  // namespace
}  // namespace tonewarden::source
