// FileSource: WAV/FLAC recordings as a Source, paced in real time or as fast as possible.
// Two modes:
//  - one file (path), optionally looping; its format comes from the file;
//  - a watched folder (watch_dir): new recordings matching a glob are played one after the
//    other as the recorder drops them (see WatchedFolder), with a declared rate and channel
//    count. A file whose format differs, or that cannot be read (corrupt, truncated), is
//    skipped and reported; the source carries on with the next one.
// The frame index runs on across loops and files; the first block after a wrap or a new file
// has BlockInfo::discontinuity set. Timestamps follow the frame count: for one file from the
// start time; in a watched folder each file restarts the clock at the wall time its playing
// began (never before the end of the previous file), since idle gaps between recordings are
// not signal.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <span>
#include <string>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"
#include "tonewarden/source/pacer.h"
#include "tonewarden/source/sound_file_reader.h"
#include "tonewarden/source/source.h"
#include "tonewarden/source/source_health.h"
#include "tonewarden/source/watched_folder.h"

namespace tonewarden::source {

struct FileSourceConfig {
  std::string path;               // one recording; or
  std::string watch_dir;          // a folder to watch (exactly one of the two)
  std::string pattern = "*.wav";  // watched folder: file-name glob
  std::string record_path;        // watched folder: finished-file record (in the data dir)
  int poll_ms = 1000;             // watched folder: [10, 600000] between folder scans
  double sample_rate_hz = 0.0;    // watched folder: required, > 0; one file: 0 or must match
  size_t channels = 0;            // watched folder: required, [1, 64]; one file: 0 or must match
  bool loop = false;              // one file only: start over at the end
  Pace pace = Pace::kRealTime;
  base::WallTimeMs start_time{};  // unix_ms 0: the wall clock at start()
};

// Threads: as Source. read() in a watched folder with nothing ready sleeps one poll interval
// (interruptible by stop()) and returns 0 with state kWaiting.
class FileSource final : public Source {
 public:
  // One file: opens it here, so a missing, corrupt or truncated file fails early.
  static base::Result<std::unique_ptr<FileSource>> create(const FileSourceConfig& config);
  ~FileSource() override;

  SourceCapabilities capabilities() const override;
  base::Status start() override;
  base::Result<size_t> read(std::span<float> out_interleaved, BlockInfo* info) override;
  void stop() noexcept override;
  SourceHealth health() const override { return health_.snapshot(); }
  std::string describe() const override;

  // Capture thread only.
  const std::string& current_file() const noexcept { return current_path_; }
  uint64_t num_files_done() const noexcept { return files_done_; }
  uint64_t num_files_skipped() const noexcept { return files_skipped_; }
  uint64_t num_loops() const noexcept { return loops_; }
  uint64_t num_pacing_sleeps() const noexcept { return pacer_->num_sleeps(); }

 private:
  explicit FileSource(const FileSourceConfig& config);
  bool watching() const noexcept { return !config_.watch_dir.empty(); }
  // Watched folder: opens the next ready file; false when none is ready.
  bool open_next_file();
  void skip(const std::string& path, const std::string& why);
  void finish_file();

  FileSourceConfig config_;
  double sample_rate_hz_ = 0.0;
  size_t channels_ = 0;
  std::unique_ptr<Pacer> pacer_;  // made once the rate is known
  HealthTracker health_;
  std::optional<WatchedFolder> folder_;
  std::optional<SoundFileReader> reader_;
  std::string current_path_;
  bool started_ = false;
  bool finished_ = false;
  bool pending_discontinuity_ = false;
  base::MonoTime next_poll_{};
  base::WallTimeMs clock_wall_{};  // wall time of frame clock_frame_
  int64_t clock_frame_ = 0;
  int64_t frame_ = 0;
  uint64_t files_done_ = 0;
  uint64_t files_skipped_ = 0;
  uint64_t loops_ = 0;
};

}  // namespace tonewarden::source
