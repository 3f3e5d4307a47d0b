// SoundFileWriter over libsndfile.
#include "tonewarden/source/sound_file_writer.h"

#include <sndfile.h>

#include <cmath>

namespace tonewarden::source {

using base::ErrorCode;
using base::make_error;

namespace {
int sf_format_of(SoundFileEncoding e) {
  switch (e) {
    case SoundFileEncoding::kWavFloat32: return SF_FORMAT_WAV | SF_FORMAT_FLOAT;
    case SoundFileEncoding::kWavPcm16: return SF_FORMAT_WAV | SF_FORMAT_PCM_16;
    case SoundFileEncoding::kWavPcm24: return SF_FORMAT_WAV | SF_FORMAT_PCM_24;
    case SoundFileEncoding::kFlac16: return SF_FORMAT_FLAC | SF_FORMAT_PCM_16;
    case SoundFileEncoding::kFlac24: return SF_FORMAT_FLAC | SF_FORMAT_PCM_24;
  }
  return 0;
}
}  // namespace

struct SoundFileWriter::Impl {
  std::string path;
  SNDFILE* file = nullptr;
  size_t channels = 1;
  uint64_t frames = 0;
  ~Impl() {
    if (file) sf_close(file);
  }
};

SoundFileWriter::SoundFileWriter(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
SoundFileWriter::SoundFileWriter(SoundFileWriter&&) noexcept = default;
SoundFileWriter& SoundFileWriter::operator=(SoundFileWriter&&) noexcept = default;
SoundFileWriter::~SoundFileWriter() = default;

base::Result<SoundFileWriter> SoundFileWriter::create(const std::string& path,
                                                      const SoundFileWriterConfig& config) {
  const double fs = config.sample_rate_hz;
  if (!(fs >= 1.0 && fs <= 655350.0) || std::floor(fs) != fs)
    return make_error(ErrorCode::kInvalidArgument,
                      path + ": sample rate " + std::to_string(fs) + " Hz must be a whole number in 1..655350");
  if (config.channels < 1 || config.channels > 8)
    return make_error(ErrorCode::kInvalidArgument,
                      path + ": " + std::to_string(config.channels) + " channels; allowed 1..8");
  auto impl = std::make_unique<Impl>();
  impl->path = path;
  impl->channels = config.channels;
  SF_INFO info{};
  info.samplerate = static_cast<int>(fs);
  info.channels = static_cast<int>(config.channels);
  info.format = sf_format_of(config.encoding);
  impl->file = sf_open(path.c_str(), SFM_WRITE, &info);
  if (!impl->file)
    return make_error(ErrorCode::kIo, path + ": cannot create sound file (" +
                                          std::string(sf_strerror(nullptr)) + ")");
  // Clip rather than wrap when float values exceed full scale in a PCM file.
  sf_command(impl->file, SFC_SET_CLIPPING, nullptr, SF_TRUE);
  return SoundFileWriter(std::move(impl));
}

base::Status SoundFileWriter::write(std::span<const float> interleaved) {
  if (!impl_->file) return make_error(ErrorCode::kInternal, impl_->path + ": write after close");
  if (interleaved.size() % impl_->channels != 0)
    return make_error(ErrorCode::kInvalidArgument,
                      impl_->path + ": " + std::to_string(interleaved.size()) +
                          " samples is not a whole number of " + std::to_string(impl_->channels) +
                          "-channel frames");
  const auto frames = static_cast<sf_count_t>(interleaved.size() / impl_->channels);
  const sf_count_t n = sf_writef_float(impl_->file, interleaved.data(), frames);
  if (n != frames)
    return make_error(ErrorCode::kIo, impl_->path + ": write failed (" +
                                          std::string(sf_strerror(impl_->file)) + ")");
  impl_->frames += static_cast<uint64_t>(n);
  return base::Status::success();
}

base::Status SoundFileWriter::close() {
  if (!impl_->file) return base::Status::success();
  const int rc = sf_close(impl_->file);
  impl_->file = nullptr;
  if (rc != 0)
    return make_error(ErrorCode::kIo, impl_->path + ": closing failed (" +
                                          std::string(sf_error_number(rc)) + ")");
  return base::Status::success();
}

uint64_t SoundFileWriter::frames_written() const noexcept { return impl_->frames; }

}  // namespace tonewarden::source
