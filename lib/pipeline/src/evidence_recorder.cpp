// EvidenceRecorder: pre-trigger ring on the analysis thread, FLAC streaming on a writer thread.
#include "tonewarden/pipeline/evidence_recorder.h"

#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <condition_variable>
#include <cstdio>
#include <deque>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <nlohmann/json.hpp>
#include <system_error>
#include <thread>

#include "tonewarden/base/log.h"
#include "tonewarden/source/sound_file_writer.h"

namespace tonewarden::pipeline {
namespace fs = std::filesystem;
using base::ErrorCode;
using base::make_error;

namespace {

constexpr size_t kMaxChannels = 8;  // FLAC via the sound-file writer
constexpr double kMaxSeconds = 120;
constexpr size_t kMaxRulesPerClip = 64;
constexpr auto kWriterPoll = std::chrono::milliseconds(100);  // writer re-checks a clip this often

bool is_safe_char(char ch) {
  return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') ||
         ch == '-' || ch == '_' || ch == '.';
}

// File-name-safe copy: letters, digits, '-', '_' and '.' (never leading); the rest become '_'.
std::string safe_name(std::string_view text) {
  std::string out;
  for (char ch : text) {
    out += is_safe_char(ch) && !(ch == '.' && out.empty()) ? ch : '_';
    if (out.size() >= 80) break;
  }
  return out.empty() ? std::string("_") : out;
}

// "20261202T031500.250Z": sorts in time order, safe in file names.
std::string compact_time(base::WallTimeMs t) {
  std::string s = base::format_rfc3339(t);  // 2026-12-02T03:15:00.250Z
  s.erase(std::remove(s.begin(), s.end(), '-'), s.end());
  s.erase(std::remove(s.begin(), s.end(), ':'), s.end());
  return s;
}

bool is_clip_file(const fs::path& p) {
  const std::string ext = p.extension().string();
  return ext == ".flac" || ext == ".json";
}

}  // namespace

// One clip: a fixed buffer the analysis thread fills and the writer thread drains.
struct Clip {
  std::string rel_path;               // evidence/RIG/NAME.flac
  fs::path path;                      // absolute or data_dir-relative path of the .flac
  std::vector<float> samples;         // interleaved, sized once, normalised to full scale
  size_t total_frames = 0;
  size_t pre_frames = 0;
  std::atomic<size_t> frames_ready{0};  // written by the analysis thread (release)
  std::atomic<bool> complete{false};
  std::string end_reason = "complete";  // set before `complete`
  base::WallTimeMs t_start, t_activation;
  int64_t first_frame = 0;            // the source's frame index of the clip's first frame
  std::vector<std::string> rules;     // guarded by Impl::mu
};

struct EvidenceRecorder::Impl {
  EvidenceRecorderConfig config;
  size_t nch = 0;
  fs::path rig_dir;
  std::vector<float> inv_full_scale;

  // Analysis thread only.
  std::vector<float> ring;   // interleaved, pre_capacity frames
  size_t pre_capacity = 0;   // frames
  size_t ring_pos = 0;       // next frame slot
  size_t ring_filled = 0;
  size_t post_frames = 0;
  int64_t last_end_frame = 0;
  base::WallTimeMs last_end_time;
  std::shared_ptr<Clip> active;
  int64_t last_clip_start_ms = INT64_MIN;

  // Shared with the writer thread.
  std::mutex mu;
  std::condition_variable cv;
  std::deque<std::shared_ptr<Clip>> queue;  // clips being written, oldest first
  bool stopping = false;
  std::thread writer;

  std::atomic<uint64_t> written{0}, skipped{0}, failures{0};

  void append(std::span<const std::span<const float>> volts, size_t from, size_t frames) noexcept;
  void complete_active(const char* reason);
  void writer_loop();
  bool write_clip(Clip& clip);
  void write_sidecar(const Clip& clip, size_t frames);
  void enforce_cap();
};

EvidenceRecorder::EvidenceRecorder(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}

EvidenceRecorder::~EvidenceRecorder() {
  finish();
  {
    std::lock_guard lock(impl_->mu);
    impl_->stopping = true;
  }
  impl_->cv.notify_all();
  if (impl_->writer.joinable()) impl_->writer.join();
}

base::Result<std::unique_ptr<EvidenceRecorder>> EvidenceRecorder::create(
    const EvidenceRecorderConfig& config) {
  const std::string what = "evidence for rig '" + config.rig + "': ";
  const double fs_hz = config.sample_rate_hz;
  if (!(fs_hz >= 1.0 && fs_hz <= 655350.0) || std::floor(fs_hz) != fs_hz) {
    char rate[32];
    std::snprintf(rate, sizeof rate, "%g", fs_hz);
    return make_error(ErrorCode::kInvalidArgument,
                      what + "sample rate " + rate + " Hz is not a whole number FLAC can store");
  }
  if (config.channels.empty() || config.channels.size() > kMaxChannels)
    return make_error(ErrorCode::kInvalidArgument,
                      what + std::to_string(config.channels.size()) + " channels; clips hold 1..8");
  if (!(config.pre_s >= 0 && config.pre_s <= kMaxSeconds && config.post_s >= 0 &&
        config.post_s <= kMaxSeconds && config.pre_s + config.post_s > 0))
    return make_error(ErrorCode::kInvalidArgument,
                      what + "pre_s and post_s must be in [0, 120] s with a sum > 0");
  if (!(config.min_interval_s >= 0))
    return make_error(ErrorCode::kInvalidArgument, what + "min_interval_s must be >= 0");

  auto impl = std::make_unique<Impl>();
  impl->config = config;
  impl->nch = config.channels.size();
  for (const ChannelSpec& c : config.channels) {
    if (!(c.full_scale_v > 0))
      return make_error(ErrorCode::kInvalidArgument,
                        what + "channel '" + c.name + "' has no positive full scale");
    impl->inv_full_scale.push_back(static_cast<float>(1.0 / c.full_scale_v));
  }
  impl->rig_dir = fs::path(config.data_dir) / kEvidenceFolder / safe_name(config.rig);
  std::error_code ec;
  fs::create_directories(impl->rig_dir, ec);
  if (ec)
    return make_error(ErrorCode::kIo,
                      what + "cannot create " + impl->rig_dir.string() + " (" + ec.message() + ")");
  // A clip cut short by a crash: its partial file is of no use to anyone.
  for (const auto& entry : fs::directory_iterator(impl->rig_dir, ec)) {
    if (entry.path().extension() == ".part") fs::remove(entry.path(), ec);
  }
  impl->pre_capacity = static_cast<size_t>(std::llround(config.pre_s * fs_hz));
  impl->post_frames = static_cast<size_t>(std::llround(config.post_s * fs_hz));
  impl->ring.assign(impl->pre_capacity * impl->nch, 0.0f);
  Impl* raw = impl.get();
  impl->writer = std::thread([raw] { raw->writer_loop(); });
  return std::unique_ptr<EvidenceRecorder>(new EvidenceRecorder(std::move(impl)));
}

void EvidenceRecorder::Impl::append(std::span<const std::span<const float>> volts, size_t from,
                                    size_t frames) noexcept {
  Clip& clip = *active;
  const size_t at = clip.frames_ready.load(std::memory_order_relaxed);
  const size_t n = std::min(frames, clip.total_frames - at);
  float* out = clip.samples.data() + at * nch;
  for (size_t i = 0; i < n; ++i) {
    for (size_t c = 0; c < nch; ++c) *out++ = volts[c][from + i] * inv_full_scale[c];
  }
  clip.frames_ready.store(at + n, std::memory_order_release);
}

void EvidenceRecorder::on_block(std::span<const std::span<const float>> volts,
                                int64_t first_frame, base::WallTimeMs t_first,
                                bool discontinuity) noexcept {
  Impl& s = *impl_;
  if (volts.size() != s.nch || volts.empty()) return;
  const size_t frames = volts[0].size();
  if (discontinuity) {
    s.ring_filled = 0;
    if (s.active) s.complete_active("gap in the signal");
  }
  if (s.active) {
    s.append(volts, 0, frames);
    if (s.active->frames_ready.load(std::memory_order_relaxed) >= s.active->total_frames) {
      s.complete_active("complete");
    } else {
      // No lock here: a wake-up the writer misses costs it at most kWriterPoll.
      s.cv.notify_all();
    }
  }
  // Pre-trigger ring: only the newest pre_capacity frames matter.
  if (s.pre_capacity > 0) {
    const size_t skip = frames > s.pre_capacity ? frames - s.pre_capacity : 0;
    for (size_t i = skip; i < frames; ++i) {
      float* slot = s.ring.data() + s.ring_pos * s.nch;
      for (size_t c = 0; c < s.nch; ++c) slot[c] = volts[c][i] * s.inv_full_scale[c];
      s.ring_pos = s.ring_pos + 1 == s.pre_capacity ? 0 : s.ring_pos + 1;
    }
    s.ring_filled = std::min(s.pre_capacity, s.ring_filled + frames);
  }
  s.last_end_frame = first_frame + static_cast<int64_t>(frames);
  s.last_end_time = base::wall_after_samples(t_first, static_cast<int64_t>(frames),
                                             s.config.sample_rate_hz);
}

std::string EvidenceRecorder::on_activation(base::WallTimeMs t, std::string_view rule) {
  Impl& s = *impl_;
  if (s.active) {
    std::lock_guard lock(s.mu);
    if (s.active->rules.size() < kMaxRulesPerClip) s.active->rules.emplace_back(rule);
    return s.active->rel_path;
  }
  const double since_s = (t.unix_ms - s.last_clip_start_ms) / 1000.0;
  if (s.last_clip_start_ms != INT64_MIN && since_s < s.config.min_interval_s) {
    ++s.skipped;
    return "";
  }
  {
    std::lock_guard lock(s.mu);
    if (!s.queue.empty()) {  // the writer is still on the previous clip
      ++s.skipped;
      base::log_warn("evidence: rig '" + s.config.rig + "': the previous clip is still being written; no clip for " +
                     std::string(rule));
      return "";
    }
  }
  auto clip = std::make_shared<Clip>();
  clip->pre_frames = s.ring_filled;
  clip->total_frames = clip->pre_frames + s.post_frames;
  clip->samples.resize(clip->total_frames * s.nch);
  // Oldest ring frame first.
  const size_t start = (s.ring_pos + s.pre_capacity - s.ring_filled) % std::max<size_t>(s.pre_capacity, 1);
  for (size_t i = 0; i < clip->pre_frames; ++i) {
    const size_t slot = (start + i) % s.pre_capacity;
    std::copy_n(s.ring.data() + slot * s.nch, s.nch, clip->samples.data() + i * s.nch);
  }
  clip->frames_ready.store(clip->pre_frames, std::memory_order_release);
  clip->t_activation = t;
  clip->first_frame = s.last_end_frame - static_cast<int64_t>(clip->pre_frames);
  clip->t_start = base::WallTimeMs{s.last_end_time.unix_ms -
                                   std::llround(clip->pre_frames * 1000.0 / s.config.sample_rate_hz)};
  if (s.last_end_time.unix_ms == 0) clip->t_start = t;
  const std::string name = compact_time(t) + "-" + safe_name(rule) + ".flac";
  clip->path = s.rig_dir / name;
  clip->rel_path = std::string(kEvidenceFolder) + "/" + safe_name(s.config.rig) + "/" + name;
  clip->rules.emplace_back(rule);
  s.last_clip_start_ms = t.unix_ms;
  s.active = clip;
  {
    std::lock_guard lock(s.mu);
    s.queue.push_back(clip);
  }
  if (clip->frames_ready.load(std::memory_order_relaxed) >= clip->total_frames) {
    s.complete_active("complete");
  } else {
    s.cv.notify_all();
  }
  return clip->rel_path;
}

void EvidenceRecorder::Impl::complete_active(const char* reason) {
  {
    std::lock_guard lock(mu);
    active->end_reason = reason;
    active->complete.store(true, std::memory_order_release);
  }
  active.reset();
  cv.notify_all();
}

void EvidenceRecorder::finish() {
  Impl& s = *impl_;
  if (s.active) s.complete_active("stopped");
  std::unique_lock lock(s.mu);
  s.cv.wait(lock, [&] { return s.queue.empty(); });
}

void EvidenceRecorder::Impl::writer_loop() {
  std::unique_lock lock(mu);
  for (;;) {
    cv.wait(lock, [&] { return stopping || !queue.empty(); });
    if (queue.empty()) return;  // stopping, nothing left
    std::shared_ptr<Clip> clip = queue.front();
    lock.unlock();
    const bool ok = write_clip(*clip);
    lock.lock();
    queue.pop_front();
    if (ok) ++written; else ++failures;
    lock.unlock();
    if (ok) enforce_cap();
    cv.notify_all();
    lock.lock();
  }
}

// Streams the clip as its samples arrive; returns once it is complete and on disk.
bool EvidenceRecorder::Impl::write_clip(Clip& clip) {
  const fs::path part = fs::path(clip.path.string() + ".part");
  source::SoundFileWriterConfig wc;
  wc.sample_rate_hz = config.sample_rate_hz;
  wc.channels = nch;
  wc.encoding = source::SoundFileEncoding::kFlac24;
  auto writer = source::SoundFileWriter::create(part.string(), wc);
  base::Status status = writer ? base::Status::success() : base::Status(writer.error());
  size_t done = 0;
  for (;;) {
    bool complete = false;
    size_t ready = 0;
    {
      std::unique_lock lock(mu);
      cv.wait_for(lock, kWriterPoll, [&] {
        return clip.complete.load(std::memory_order_acquire) ||
               clip.frames_ready.load(std::memory_order_acquire) > done;
      });
      complete = clip.complete.load(std::memory_order_acquire);
      ready = clip.frames_ready.load(std::memory_order_acquire);
    }
    if (status && ready > done) {
      status = writer->write(std::span<const float>(clip.samples.data() + done * nch,
                                                    (ready - done) * nch));
    }
    done = ready;
    if (complete) break;
  }
  if (status) status = writer->close();
  std::error_code ec;
  if (status) {
    fs::rename(part, clip.path, ec);
    if (ec) status = make_error(ErrorCode::kIo, "renaming " + part.string() + ": " + ec.message());
  }
  if (!status) {
    fs::remove(part, ec);
    base::log_error("evidence: rig '" + config.rig + "': clip " + clip.rel_path +
                    " was not written: " + status.error().message);
    return false;
  }
  write_sidecar(clip, done);
  char seconds[32];
  std::snprintf(seconds, sizeof seconds, "%.2f s", done / config.sample_rate_hz);
  base::log_info("evidence: wrote " + clip.rel_path + " (" + seconds + ", " + clip.end_reason + ")");
  return true;
}

void EvidenceRecorder::Impl::write_sidecar(const Clip& clip, size_t frames) {
  const double fs_hz = config.sample_rate_hz;
  nlohmann::json j;
  j["rig"] = config.rig;
  {
    std::lock_guard lock(mu);
    j["rules"] = clip.rules;
  }
  j["activation"] = base::format_rfc3339(clip.t_activation);
  j["start"] = base::format_rfc3339(clip.t_start);
  j["first_frame"] = clip.first_frame;  // in the source's own count (a file's sample index)
  j["sample_rate_hz"] = fs_hz;
  j["frames"] = frames;
  j["pre_s"] = clip.pre_frames / fs_hz;
  j["post_s"] = (frames - std::min(frames, clip.pre_frames)) / fs_hz;
  j["end"] = clip.end_reason;
  j["file_value"] = "volts / full_scale_v (24-bit FLAC)";
  nlohmann::json chans = nlohmann::json::array();
  std::string first_vibration;
  for (size_t c = 0; c < nch; ++c) {
    const ChannelSpec& ch = config.channels[c];
    const double per_unit = ch.sensitivity_v_per_unit / ch.full_scale_v;
    chans.push_back({{"index", c},
                     {"name", ch.name},
                     {"unit", ch.unit},
                     {"tach", ch.is_tach},
                     {"full_scale_v", ch.full_scale_v},
                     {"sensitivity_v_per_unit", ch.sensitivity_v_per_unit},
                     {"file_value_per_unit", per_unit}});
    if (!ch.is_tach && first_vibration.empty()) {
      char buf[64];
      std::snprintf(buf, sizeof buf, "%.9g", per_unit);
      first_vibration = "tonewarden analyze " + clip.path.filename().string() + " --channel " +
                        std::to_string(c) + " --sensitivity " + buf + " --unit " + ch.unit;
    }
  }
  j["channels"] = std::move(chans);
  if (!first_vibration.empty()) j["analyze"] = first_vibration;
  fs::path sidecar = clip.path;
  sidecar.replace_extension(".json");
  const fs::path tmp = fs::path(sidecar.string() + ".part");
  {
    std::ofstream out(tmp, std::ios::trunc);
    out << j.dump(2) << '\n';
    if (!out.flush()) {
      base::log_warn("evidence: cannot write " + sidecar.string());
      std::error_code ec;
      fs::remove(tmp, ec);
      return;
    }
  }
  std::error_code ec;
  fs::rename(tmp, sidecar, ec);
}

// Deletes the oldest clips (and their sidecars) until the evidence folder fits the cap.
void EvidenceRecorder::Impl::enforce_cap() {
  const fs::path root = fs::path(config.data_dir) / kEvidenceFolder;
  struct Entry {
    std::string stem;  // sort key: file names start with the time
    fs::path path;
    uint64_t bytes;
  };
  std::vector<Entry> files;
  uint64_t total = 0;
  std::error_code ec;
  for (auto it = fs::recursive_directory_iterator(root, ec); !ec && it != fs::end(it); it.increment(ec)) {
    if (!it->is_regular_file(ec) || !is_clip_file(it->path())) continue;
    const uint64_t bytes = it->file_size(ec);
    if (ec) continue;
    files.push_back({it->path().filename().string(), it->path(), bytes});
    total += bytes;
  }
  if (total <= config.max_total_bytes) return;
  std::sort(files.begin(), files.end(), [](const Entry& a, const Entry& b) { return a.stem < b.stem; });
  size_t removed = 0;
  for (const Entry& e : files) {
    if (total <= config.max_total_bytes) break;
    if (fs::remove(e.path, ec)) {
      total -= e.bytes;
      ++removed;
    }
  }
  base::log_info("evidence: size cap " + std::to_string(config.max_total_bytes) +
                 " bytes reached; removed " + std::to_string(removed) + " oldest files");
}

uint64_t EvidenceRecorder::num_clips_written() const noexcept { return impl_->written; }
uint64_t EvidenceRecorder::num_clips_skipped() const noexcept { return impl_->skipped; }
uint64_t EvidenceRecorder::num_write_failures() const noexcept { return impl_->failures; }
const EvidenceRecorderConfig& EvidenceRecorder::config() const noexcept { return impl_->config; }

base::Result<std::string> resolve_evidence_path(const std::string& data_dir,
                                                std::string_view relative_path) {
  const fs::path rel(relative_path);
  auto refuse = [&] {
    return make_error(ErrorCode::kInvalidArgument,
                      "evidence path '" + std::string(relative_path) + "' is not a clip in the evidence folder");
  };
  if (rel.is_absolute() || rel.extension() != ".flac") return refuse();
  std::vector<std::string> parts;
  for (const fs::path& p : rel) parts.push_back(p.string());
  if (parts.size() != 3 || parts[0] != kEvidenceFolder) return refuse();
  for (const std::string& p : parts) {
    if (p.empty() || p.front() == '.' || !std::all_of(p.begin(), p.end(), is_safe_char)) return refuse();
  }
  return (fs::path(data_dir) / rel).string();
}

}  // namespace tonewarden::pipeline
