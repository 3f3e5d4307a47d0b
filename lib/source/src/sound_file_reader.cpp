// SoundFileReader over libsndfile, plus our own look at a WAV's chunk list: libsndfile
// quietly shortens a data chunk that claims more than the file holds, and we want to say so.
#include "tonewarden/source/sound_file_reader.h"

#include <sndfile.h>
#include <sys/stat.h>

#include <algorithm>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <fstream>

namespace tonewarden::source {

using base::ErrorCode;
using base::make_error;

void pick_channel(std::span<const float> interleaved, size_t channels, size_t channel,
                  std::span<float> out) noexcept {
  const size_t frames = std::min(out.size(), interleaved.size() / channels);
  for (size_t i = 0; i < frames; ++i) out[i] = interleaved[i * channels + channel];
}

namespace {

uint32_t le32(const unsigned char* p) {
  return uint32_t{p[0]} | uint32_t{p[1]} << 8 | uint32_t{p[2]} << 16 | uint32_t{p[3]} << 24;
}

// What a RIFF/WAVE header declares about its data chunk, read without libsndfile.
struct WavDataClaim {
  bool found = false;
  uint64_t declared_bytes = 0;   // the data chunk's size field
  uint64_t available_bytes = 0;  // bytes that actually follow the chunk header
  uint32_t block_align = 0;      // bytes per frame, from the fmt chunk
};

// Walks the chunk list (each chunk: 4-byte id, 4-byte little-endian size, payload padded to an
// even length) until the data chunk. Returns found=false for non-RIFF files or odd layouts;
// libsndfile then has the last word.
WavDataClaim inspect_wav(const std::string& path, uint64_t file_bytes) {
  WavDataClaim claim;
  std::ifstream in(path, std::ios::binary);
  unsigned char head[12];
  if (!in.read(reinterpret_cast<char*>(head), sizeof head)) return claim;
  if (std::memcmp(head, "RIFF", 4) != 0 || std::memcmp(head + 8, "WAVE", 4) != 0) return claim;
  uint64_t pos = 12;
  // Bounded: a chunk list longer than this is not a recording we should be guessing about.
  for (int guard = 0; guard < 4096 && pos + 8 <= file_bytes; ++guard) {
    unsigned char chunk[8];
    in.seekg(static_cast<std::streamoff>(pos));
    if (!in.read(reinterpret_cast<char*>(chunk), sizeof chunk)) return claim;
    const uint32_t size = le32(chunk + 4);
    if (std::memcmp(chunk, "fmt ", 4) == 0 && size >= 14) {
      unsigned char fmt[14];
      if (!in.read(reinterpret_cast<char*>(fmt), sizeof fmt)) return claim;
      claim.block_align = uint32_t{fmt[12]} | uint32_t{fmt[13]} << 8;
    } else if (std::memcmp(chunk, "data", 4) == 0) {
      claim.found = true;
      claim.declared_bytes = size;
      claim.available_bytes = file_bytes - (pos + 8);
      return claim;
    }
    pos += 8 + uint64_t{size} + (size & 1u);
  }
  return claim;
}

std::string one_line(const char* text) {
  std::string s = text ? text : "unknown error";
  std::replace(s.begin(), s.end(), '\n', ' ');
  while (!s.empty() && (s.back() == ' ' || s.back() == '.')) s.pop_back();
  return s;
}

std::string subtype_name(int format) {
  switch (format & SF_FORMAT_SUBMASK) {
    case SF_FORMAT_PCM_S8: return "8-bit PCM";
    case SF_FORMAT_PCM_U8: return "8-bit unsigned PCM";
    case SF_FORMAT_PCM_16: return "16-bit PCM";
    case SF_FORMAT_PCM_24: return "24-bit PCM";
    case SF_FORMAT_PCM_32: return "32-bit PCM";
    case SF_FORMAT_FLOAT: return "32-bit float";
    case SF_FORMAT_DOUBLE: return "64-bit float";
    default: break;
  }
  SF_FORMAT_INFO info{};
  info.format = format & SF_FORMAT_SUBMASK;
  if (sf_command(nullptr, SFC_GET_FORMAT_INFO, &info, sizeof info) == 0 && info.name)
    return info.name;
  return "other encoding";
}

std::string major_name(int format) {
  switch (format & SF_FORMAT_TYPEMASK) {
    case SF_FORMAT_WAV: return "WAV";
    case SF_FORMAT_WAVEX: return "WAV (extensible)";
    case SF_FORMAT_FLAC: return "FLAC";
    case SF_FORMAT_W64: return "W64";
    case SF_FORMAT_RF64: return "RF64";
    case SF_FORMAT_AIFF: return "AIFF";
    default: break;
  }
  SF_FORMAT_INFO info{};
  info.format = format & SF_FORMAT_TYPEMASK;
  if (sf_command(nullptr, SFC_GET_FORMAT_INFO, &info, sizeof info) == 0 && info.name)
    return info.name;
  return "audio";
}

}  // namespace

struct SoundFileReader::Impl {
  std::string path;
  SNDFILE* file = nullptr;
  SF_INFO info{};
  uint64_t frames_read = 0;
  std::vector<float> scratch;  // interleaved frames for read_channel()

  ~Impl() {
    if (file) sf_close(file);
  }
  base::Error fail(ErrorCode code, const std::string& what) const {
    return make_error(code, path + ": " + what);
  }
};

SoundFileReader::SoundFileReader(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
SoundFileReader::SoundFileReader(SoundFileReader&&) noexcept = default;
SoundFileReader& SoundFileReader::operator=(SoundFileReader&&) noexcept = default;
SoundFileReader::~SoundFileReader() = default;

base::Result<SoundFileReader> SoundFileReader::create(const std::string& path) {
  auto impl = std::make_unique<Impl>();
  impl->path = path;
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0) {
    const int err = errno;
    if (err == ENOENT || err == ENOTDIR) return impl->fail(ErrorCode::kNotFound, "no such file");
    return base::errno_error(ErrorCode::kIo, path + ": cannot open", err);
  }
  if (S_ISDIR(st.st_mode)) return impl->fail(ErrorCode::kInvalidArgument, "is a directory, not a sound file");
  const auto file_bytes = static_cast<uint64_t>(st.st_size);
  if (S_ISREG(st.st_mode) && file_bytes == 0)
    return impl->fail(ErrorCode::kCorruptData, "empty file (0 bytes), not a sound file");

  impl->file = sf_open(path.c_str(), SFM_READ, &impl->info);
  if (!impl->file) {
    const std::string why = one_line(sf_strerror(nullptr));
    if (FILE* probe = std::fopen(path.c_str(), "rb")) {
      std::fclose(probe);
    } else {
      return base::errno_error(ErrorCode::kIo, path + ": cannot open", errno);
    }
    return impl->fail(ErrorCode::kCorruptData,
                      "not a readable WAV or FLAC sound file (" + why + ")");
  }
  if (impl->info.channels < 1 || impl->info.samplerate < 1)
    return impl->fail(ErrorCode::kCorruptData, "header gives no channels or no sample rate");

  const int major = impl->info.format & SF_FORMAT_TYPEMASK;
  if (S_ISREG(st.st_mode) && (major == SF_FORMAT_WAV || major == SF_FORMAT_WAVEX)) {
    const WavDataClaim claim = inspect_wav(path, file_bytes);
    // 0 and 0xFFFFFFFF are the placeholders a recorder leaves when it never finished the header;
    // libsndfile then reads to the end of the file, which is what the user wants.
    const bool placeholder = claim.declared_bytes == 0 || claim.declared_bytes == 0xFFFFFFFFu;
    if (claim.found && !placeholder && claim.block_align > 0 &&
        claim.declared_bytes > claim.available_bytes) {
      return impl->fail(ErrorCode::kCorruptData,
                        "truncated: header says " +
                            std::to_string(claim.declared_bytes / claim.block_align) +
                            " frames, file holds " +
                            std::to_string(claim.available_bytes / claim.block_align));
    }
  }
  // libsndfile reports an unknown length as SF_COUNT_MAX; a real zero is an empty recording.
  if (impl->info.frames == 0)
    return impl->fail(ErrorCode::kCorruptData, "holds no audio frames (empty data)");
  return SoundFileReader(std::move(impl));
}

const std::string& SoundFileReader::path() const noexcept { return impl_->path; }
double SoundFileReader::sample_rate_hz() const noexcept { return impl_->info.samplerate; }
size_t SoundFileReader::channels() const noexcept {
  return static_cast<size_t>(impl_->info.channels);
}
uint64_t SoundFileReader::frames() const noexcept {
  const sf_count_t f = impl_->info.frames;
  return (f <= 0 || f == SF_COUNT_MAX) ? 0 : static_cast<uint64_t>(f);
}
uint64_t SoundFileReader::frames_read() const noexcept { return impl_->frames_read; }

std::string SoundFileReader::format_description() const {
  return major_name(impl_->info.format) + ", " + subtype_name(impl_->info.format) + ", " +
         std::to_string(impl_->info.channels) + " ch, " + std::to_string(impl_->info.samplerate) +
         " Hz";
}

base::Result<size_t> SoundFileReader::read(std::span<float> interleaved_out) {
  const size_t ch = channels();
  const auto want = static_cast<sf_count_t>(interleaved_out.size() / ch);
  if (want == 0) return size_t{0};
  const sf_count_t got = sf_readf_float(impl_->file, interleaved_out.data(), want);
  if (got < 0) return impl_->fail(ErrorCode::kIo, "read failed (" + one_line(sf_strerror(impl_->file)) + ")");
  impl_->frames_read += static_cast<uint64_t>(got);
  if (got == 0) {
    const int err = sf_error(impl_->file);
    const uint64_t claimed = frames();
    if (claimed > 0 && impl_->frames_read < claimed) {
      return impl_->fail(ErrorCode::kCorruptData,
                         "truncated: header says " + std::to_string(claimed) +
                             " frames, file holds " + std::to_string(impl_->frames_read));
    }
    if (err != SF_ERR_NO_ERROR)
      return impl_->fail(ErrorCode::kCorruptData, "decode error (" + one_line(sf_strerror(impl_->file)) + ")");
  }
  return static_cast<size_t>(got);
}

base::Status SoundFileReader::check_channel(size_t channel) const {
  if (channel < channels()) return base::Status::success();
  return impl_->fail(ErrorCode::kInvalidArgument,
                     "channel " + std::to_string(channel) + " does not exist (the file has " +
                         std::to_string(channels()) + " channel" + (channels() == 1 ? "" : "s") +
                         ", numbered from 0)");
}

base::Result<size_t> SoundFileReader::read_channel(size_t channel, std::span<float> out) {
  if (auto st = check_channel(channel); !st) return std::move(st).error();
  const size_t ch = channels();
  if (ch == 1) return read(out);
  if (impl_->scratch.size() < out.size() * ch) impl_->scratch.resize(out.size() * ch);
  auto got = read(std::span<float>(impl_->scratch.data(), out.size() * ch));
  if (!got) return got;
  pick_channel(std::span<const float>(impl_->scratch.data(), *got * ch), ch, channel, out);
  return got;
}

}  // namespace tonewarden::source
