// SoundFileReader: streams samples out of a WAV or FLAC recording in blocks, as float.
// The file is never loaded whole; memory is the caller's buffer plus a per-channel scratch.
#pragma once

#include <cstddef>
#include <cstdint>
#include <memory>
#include <span>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"

namespace tonewarden::source {

// Copies channel `channel` out of `frames` interleaved frames of `channels` channels into
// `out` (size >= frames). Requires channel < channels. Allocation-free.
void pick_channel(std::span<const float> interleaved, size_t channels, size_t channel,
                  std::span<float> out) noexcept;

// Thread use: one reader per thread. Samples come as float: PCM is scaled to [-1, 1)
// (full scale = 1.0); float files come out unchanged (values as stored).
class SoundFileReader {
 public:
  // Opens and validates `path`. Errors (one line, naming the file):
  //   kNotFound       the file does not exist
  //   kInvalidArgument the path is a directory
  //   kIo             it cannot be opened (permissions...)
  //   kCorruptData    not a recognised audio file, an empty file, no audio frames, or a
  //                   WAV whose data chunk claims more bytes than the file holds (truncated)
  static base::Result<SoundFileReader> create(const std::string& path);
  SoundFileReader(SoundFileReader&&) noexcept;
  SoundFileReader& operator=(SoundFileReader&&) noexcept;
  ~SoundFileReader();

  const std::string& path() const noexcept;
  double sample_rate_hz() const noexcept;
  size_t channels() const noexcept;
  // Frames per channel as the header states them; 0 when the container does not say.
  uint64_t frames() const noexcept;
  // e.g. "WAV, 32-bit float, 1 ch, 12000 Hz".
  std::string format_description() const;

  // Reads up to interleaved_out.size() / channels() whole frames. Returns the frames read;
  // 0 means the end of the file. At the end, a stream that delivered fewer frames than its
  // header claimed gives kCorruptData "truncated: header says N frames, file holds M".
  base::Result<size_t> read(std::span<float> interleaved_out);

  // Reads up to out.size() frames of one channel (0-based). kInvalidArgument when the
  // channel does not exist. Allocates its interleaving scratch on first use only.
  base::Result<size_t> read_channel(size_t channel, std::span<float> out);

  // Frames delivered so far.
  uint64_t frames_read() const noexcept;

  // Checks a channel index up front: kInvalidArgument naming the file and the channel count.
  base::Status check_channel(size_t channel) const;

 private:
  struct Impl;
  explicit SoundFileReader(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::source
