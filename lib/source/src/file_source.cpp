// FileSource: one looping-or-not recording, or a watched folder of recordings, played
// through SoundFileReader with Pacer; skips and reports files it cannot use.
#include "tonewarden/source/file_source.h"

#include <algorithm>
#include <cstdio>

namespace tonewarden::source {
namespace {

constexpr size_t kMaxChannels = 64;

std::string format_of(double rate_hz, size_t channels) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%zu ch at %g Hz", channels, rate_hz);
  return buf;
}

}  // namespace

base::Result<std::unique_ptr<FileSource>> FileSource::create(const FileSourceConfig& config) {
  auto bad = [](const std::string& what) {
    return base::make_error(base::ErrorCode::kInvalidArgument, "file source: " + what);
  };
  if (config.path.empty() == config.watch_dir.empty()) {
    return bad("give exactly one of path (one recording) and watch_dir (a folder)");
  }
  if (config.sample_rate_hz < 0.0 || config.channels > kMaxChannels) {
    return bad("sample_rate_hz must be >= 0 and channels in [0, 64]");
  }
  std::unique_ptr<FileSource> s(new FileSource(config));
  if (!config.watch_dir.empty()) {
    if (config.loop) return bad("loop applies to one file, not to watch_dir " + config.watch_dir);
    if (!(config.sample_rate_hz > 0.0) || config.channels < 1) {
      return bad("watch_dir " + config.watch_dir +
                 " needs sample_rate_hz > 0 and channels in [1, 64] declared");
    }
    if (config.poll_ms < 10 || config.poll_ms > 600000) {
      return bad("poll_ms " + std::to_string(config.poll_ms) + " out of range [10, 600000]");
    }
    WatchedFolderConfig wc;
    wc.dir = config.watch_dir;
    wc.pattern = config.pattern;
    wc.record_path = config.record_path;
    auto folder = WatchedFolder::create(wc);
    if (!folder.ok()) return std::move(folder).error().with_context("file source");
    s->folder_.emplace(std::move(folder).value());
    s->sample_rate_hz_ = config.sample_rate_hz;
    s->channels_ = config.channels;
  } else {
    auto reader = SoundFileReader::create(config.path);
    if (!reader.ok()) return std::move(reader).error().with_context("file source");
    const double rate = reader->sample_rate_hz();
    const size_t channels = reader->channels();
    if ((config.sample_rate_hz > 0.0 && config.sample_rate_hz != rate) ||
        (config.channels > 0 && config.channels != channels)) {
      return base::make_error(base::ErrorCode::kInvalidArgument,
                              "file source " + config.path + ": file is " +
                                  format_of(rate, channels) + ", config expects " +
                                  format_of(config.sample_rate_hz, config.channels));
    }
    s->sample_rate_hz_ = rate;
    s->channels_ = channels;
    s->reader_.emplace(std::move(reader).value());
    s->current_path_ = config.path;
  }
  s->pacer_ = std::make_unique<Pacer>(config.pace, s->sample_rate_hz_);
  return s;
}

FileSource::FileSource(const FileSourceConfig& config) : config_(config) {}
FileSource::~FileSource() = default;

SourceCapabilities FileSource::capabilities() const {
  SourceCapabilities caps;
  caps.sample_rate_hz = sample_rate_hz_;
  caps.channels = channels_;
  caps.is_live = false;
  caps.paced = config_.pace == Pace::kRealTime;
  caps.can_loop = !watching();
  return caps;
}

base::Status FileSource::start() {
  if (started_) return base::make_error(base::ErrorCode::kInternal, "file source: start() called twice");
  started_ = true;
  clock_wall_ = config_.start_time.unix_ms != 0 ? config_.start_time : base::wall_now();
  clock_frame_ = 0;
  pacer_->start();
  next_poll_ = base::mono_now();
  health_.set_state(watching() ? SourceState::kWaiting : SourceState::kRunning);
  return base::Status::success();
}

void FileSource::stop() noexcept {
  pacer_->stop();
  health_.set_state(SourceState::kFinished);
}

void FileSource::skip(const std::string& path, const std::string& why) {
  folder_->mark_skipped(path);
  ++files_skipped_;
  health_.report_error("file source: skipped " + path + ": " + why);
}

bool FileSource::open_next_file() {
  const base::MonoTime now = base::mono_now();
  if (now >= next_poll_) {
    next_poll_ = now + std::chrono::milliseconds(config_.poll_ms);
    if (base::Status st = folder_->poll(); !st.ok()) {
      health_.report_error("file source: " + st.error().message);
      return false;
    }
  }
  while (std::optional<std::string> path = folder_->next_ready()) {
    auto reader = SoundFileReader::create(*path);
    if (!reader.ok()) {
      skip(*path, reader.error().message);
      continue;
    }
    if (reader->sample_rate_hz() != sample_rate_hz_ || reader->channels() != channels_) {
      skip(*path, "file is " + format_of(reader->sample_rate_hz(), reader->channels()) +
                      ", the source is " + format_of(sample_rate_hz_, channels_));
      continue;
    }
    reader_.emplace(std::move(reader).value());
    current_path_ = *path;
    // Restart the clock: an idle gap between recordings is not signal.
    const base::WallTimeMs prev_end =
        base::wall_after_samples(clock_wall_, frame_ - clock_frame_, sample_rate_hz_);
    if (frame_ > 0 || config_.start_time.unix_ms == 0) {
      clock_wall_ = std::max(base::wall_now(), prev_end);
    }
    clock_frame_ = frame_;
    pacer_->rebase(frame_);
    pending_discontinuity_ = frame_ > 0;
    return true;
  }
  return false;
}

void FileSource::finish_file() {
  ++files_done_;
  if (base::Status st = folder_->mark_done(current_path_); !st.ok()) {
    health_.report_error("file source: " + st.error().message);
  }
  reader_.reset();
  current_path_.clear();
}

base::Result<size_t> FileSource::read(std::span<float> out, BlockInfo* info) {
  if (!started_) return base::make_error(base::ErrorCode::kInternal, "file source: read() before start()");
  if (out.size() < channels_) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "file source: read buffer of " + std::to_string(out.size()) +
                                " samples is smaller than one frame of " +
                                std::to_string(channels_));
  }
  const std::span<float> whole = out.first(out.size() / channels_ * channels_);
  for (;;) {
    if (finished_ || pacer_->stopped()) {
      health_.set_state(SourceState::kFinished);
      return size_t{0};
    }
    if (!reader_) {
      if (!watching() || !open_next_file()) {
        if (!watching()) {
          finished_ = true;
          continue;
        }
        health_.set_state(SourceState::kWaiting);
        const auto wait = std::max(next_poll_ - base::mono_now(), base::MonoClock::duration(0));
        pacer_->sleep_for(wait);
        return size_t{0};
      }
    }
    base::Result<size_t> n = reader_->read(whole);
    if (!n.ok()) {
      // The frames before the fault were delivered already; report it and move on.
      health_.report_error("file source: " + n.error().message);
      if (watching()) {
        finish_file();
      } else {
        finished_ = true;
      }
      continue;
    }
    if (*n == 0) {
      if (watching()) {
        finish_file();
        continue;
      }
      if (!config_.loop) {
        ++files_done_;
        finished_ = true;
        continue;
      }
      // Reopening costs an allocation once per pass, not per block.
      auto again = SoundFileReader::create(config_.path);
      if (!again.ok()) {
        health_.report_error("file source: cannot loop: " + again.error().message);
        finished_ = true;
        continue;
      }
      reader_.emplace(std::move(again).value());
      ++loops_;
      pending_discontinuity_ = true;
      continue;
    }
    if (!pacer_->wait_until_due(frame_ + static_cast<int64_t>(*n))) {
      health_.set_state(SourceState::kFinished);
      return size_t{0};
    }
    if (info != nullptr) {
      info->first_frame = frame_;
      info->frames = *n;
      info->t_first = base::wall_after_samples(clock_wall_, frame_ - clock_frame_, sample_rate_hz_);
      info->discontinuity = pending_discontinuity_;
    }
    pending_discontinuity_ = false;
    frame_ += static_cast<int64_t>(*n);
    health_.add_frames(*n);
    health_.set_state(SourceState::kRunning);
    return *n;
  }
}

std::string FileSource::describe() const {
  std::string d = "file source: ";
  if (watching()) {
    d += "watching " + config_.watch_dir + " for " + config_.pattern + ", " +
         format_of(sample_rate_hz_, channels_) + ", scan every " +
         std::to_string(config_.poll_ms) + " ms" +
         (config_.record_path.empty() ? ", no record" : ", record " + config_.record_path);
  } else {
    d += config_.path + " (" + (reader_ ? reader_->format_description() : std::string("closed")) +
         ")" + (config_.loop ? ", looping" : "");
  }
  return d + ", " + to_string(config_.pace);
}

}  // namespace tonewarden::source
