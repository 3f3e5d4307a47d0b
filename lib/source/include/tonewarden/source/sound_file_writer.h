// SoundFileWriter: writes float samples to WAV (float or PCM) or FLAC, e.g. evidence clips
// around an alarm and fixtures for tests. Streams: nothing is held beyond libsndfile's buffer.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>
#include <string>

#include "tonewarden/base/result.h"

namespace tonewarden::source {

enum class SoundFileEncoding {
  kWavFloat32,  // values stored unchanged (engineering units survive)
  kWavPcm16,    // full scale = 1.0; values outside [-1, 1) clip
  kWavPcm24,
  kFlac16,      // lossless for 16-bit data; full scale = 1.0
  kFlac24,
};

struct SoundFileWriterConfig {
  double sample_rate_hz = 48000.0;  // integer Hz, 1 .. 655350 (FLAC's limit)
  size_t channels = 1;              // 1 .. 8
  SoundFileEncoding encoding = SoundFileEncoding::kWavFloat32;
};

// One writer per thread. The file is complete (header sizes patched) after close() or
// destruction; close() reports a failure that the destructor would swallow.
class SoundFileWriter {
 public:
  static base::Result<SoundFileWriter> create(const std::string& path,
                                              const SoundFileWriterConfig& config);
  SoundFileWriter(SoundFileWriter&&) noexcept;
  SoundFileWriter& operator=(SoundFileWriter&&) noexcept;
  ~SoundFileWriter();

  // Writes whole interleaved frames (size a multiple of channels).
  base::Status write(std::span<const float> interleaved);
  base::Status close();
  uint64_t frames_written() const noexcept;

 private:
  struct Impl;
  explicit SoundFileWriter(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::source
