// DESIGN: StoreWriter owns one thread and one read-write connection. Producers append under
// a short mutex into `incoming_`; each commit interval (or at flush) the thread swaps it into
// `pending_` and commits it in one transaction. A failed batch stays in `pending_` and is
// retried with backoff (100 ms doubling to 5 s) until it commits, so nothing accepted is lost;
// meanwhile `queued_` (pending + incoming) caps memory and further appends are rejected and
// counted. Retention runs between batches in steps of prune_batch_rows, one step per loop
// turn, so a long prune never holds up a commit by more than one small transaction. The size
// cap is checked after every commit; while over it, its steps run back to back (still one per
// turn, between commits) ahead of age retention.
#include "tonewarden/store/store_writer.h"

#include <algorithm>
#include <cmath>
#include <condition_variable>
#include <mutex>
#include <thread>
#include <unordered_map>

#include "tonewarden/base/log.h"
#include "writer_db.h"

namespace tonewarden::store {

using base::ErrorCode;
using base::make_error;
using Clock = std::chrono::steady_clock;
using std::chrono::milliseconds;

namespace {
constexpr milliseconds kFirstRetry{100};
constexpr milliseconds kMaxRetry{5000};
constexpr milliseconds kPruneStepGap{5};  // pause between retention steps while more remain
constexpr milliseconds kSizeCapTurn{50};   // size-cap work between two commits, at most

struct SeriesKeyHash {
  size_t operator()(const SeriesKey& k) const noexcept {
    std::hash<std::string> h;
    return h(k.rig) ^ (h(k.channel) * 31) ^ (h(k.metric) * 131) ^ (h(k.unit) * 1031);
  }
};

bool name_ok(const std::string& s, bool may_be_empty) {
  return (may_be_empty || !s.empty()) && s.size() <= kMaxNameBytes;
}
}  // namespace

base::Status validate(const StoreConfig& c) {
  std::string bad;
  auto need = [&](bool ok, const std::string& what) {
    if (!ok) bad += (bad.empty() ? "" : "; ") + what;
  };
  const auto& r = c.retention;
  need(!c.path.empty(), "path is empty");
  need(c.commit_interval >= milliseconds(10) && c.commit_interval <= milliseconds(60'000),
       "commit_interval " + std::to_string(c.commit_interval.count()) + " ms outside 10..60000 ms");
  need(c.queue_capacity >= 1 && c.queue_capacity <= 100'000'000,
       "queue_capacity " + std::to_string(c.queue_capacity) + " outside 1..100000000 items");
  need(c.busy_timeout.count() >= 0, "busy_timeout is negative");
  need(c.journal_size_limit_bytes >= 0, "journal_size_limit_bytes is negative");
  need(c.checkpoint_interval >= milliseconds(100), "checkpoint_interval below 100 ms");
  need(c.prune_interval >= milliseconds(10), "prune_interval below 10 ms");
  need(c.prune_batch_rows >= 100 && c.prune_batch_rows <= 1'000'000,
       "prune_batch_rows " + std::to_string(c.prune_batch_rows) + " outside 100..1000000");
  need(r.raw_days >= 1, "retention.raw_days " + std::to_string(r.raw_days) + " below 1 day");
  need(r.minute_rollup_days >= r.raw_days, "retention.minute_rollup_days below raw_days");
  need(r.hour_rollup_days >= r.minute_rollup_days,
       "retention.hour_rollup_days below minute_rollup_days");
  need(r.snapshot_days >= 1, "retention.snapshot_days below 1 day");
  need(r.snapshots_per_channel >= 1, "retention.snapshots_per_channel below 1");
  need(r.event_days >= 1, "retention.event_days below 1 day");
  need(r.max_db_bytes == 0 || r.max_db_bytes >= (1 << 20),
       "retention.max_db_bytes " + std::to_string(r.max_db_bytes) + " below 1 MiB (0 = no cap)");
  need(c.max_page_count >= 0, "max_page_count is negative");
  if (bad.empty()) return {};
  return make_error(ErrorCode::kInvalidArgument, "store config: " + bad);
}

struct StoreWriter::Impl {
  StoreConfig config;
  detail::WriterDb db;

  mutable std::mutex mu;
  std::condition_variable wake;       // writer waits here
  std::condition_variable committed;  // flush() waits here
  detail::Batch incoming;
  size_t queued = 0;  // items in pending + incoming, against queue_capacity
  uint64_t enqueued_seq = 0;
  uint64_t committed_seq = 0;
  bool flush_requested = false;
  bool stopping = false;
  bool stopped = false;
  Clock::time_point stop_deadline{};
  StoreHealth health;
  std::unordered_map<SeriesKey, SeriesId, SeriesKeyHash> series_ids;
  SeriesId next_series_id = 1;
  int64_t next_run_id = 1;
  int64_t n_batches = 0, n_readings = 0, n_dropped = 0, n_duplicates = 0, n_pruned = 0;

  detail::Batch pending;  // writer thread only
  std::thread thread;

  explicit Impl(detail::WriterDb d) : db(std::move(d)) {}
  void run();
  void on_write_result(const base::Result<detail::WriteOutcome>& r, bool disk_full,
                       int64_t live_bytes);
  void on_size_state(int64_t live_bytes, bool over, bool unmet);
  bool exiting_soon() {  // stop() was called: flush first, housekeeping can wait for next run
    std::lock_guard lock(mu);
    return stopping;
  }
  bool admit(size_t n) {  // mu held
    if (stopping || queued + n > config.queue_capacity) {
      n_dropped += static_cast<int64_t>(n);
      return false;
    }
    queued += n;
    incoming.items += n;
    incoming.last_seq = ++enqueued_seq;
    return true;
  }
};

base::Result<std::unique_ptr<StoreWriter>> StoreWriter::create(const StoreConfig& config) {
  if (auto s = validate(config); !s.ok()) return std::move(s).error();
  auto db = detail::WriterDb::open(config);
  if (!db.ok()) return std::move(db).error().with_context("store");
  auto impl = std::make_unique<Impl>(std::move(db).value());
  impl->config = config;
  for (auto& s : impl->db.load_series()) {
    impl->next_series_id = std::max(impl->next_series_id, s.id + 1);
    impl->series_ids.emplace(std::move(s.key), s.id);
  }
  impl->next_run_id = impl->db.max_run_id() + 1;
  impl->thread = std::thread([p = impl.get()] { p->run(); });
  return std::unique_ptr<StoreWriter>(new StoreWriter(std::move(impl)));
}

StoreWriter::StoreWriter(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
StoreWriter::~StoreWriter() { (void)stop(); }

base::Result<SeriesId> StoreWriter::register_series(const SeriesKey& key) {
  if (!name_ok(key.rig, false) || !name_ok(key.channel, false) || !name_ok(key.metric, false) ||
      !name_ok(key.unit, true)) {
    return make_error(ErrorCode::kInvalidArgument,
                      "series '" + key.rig + "/" + key.channel + "/" + key.metric +
                          "': rig, channel and metric must be 1.." +
                          std::to_string(kMaxNameBytes) + " bytes, unit at most " +
                          std::to_string(kMaxNameBytes));
  }
  std::lock_guard lock(impl_->mu);
  auto it = impl_->series_ids.find(key);
  if (it != impl_->series_ids.end()) return it->second;
  const SeriesId id = impl_->next_series_id++;
  impl_->series_ids.emplace(key, id);
  impl_->incoming.series.push_back({id, key});
  impl_->incoming.last_seq = ++impl_->enqueued_seq;
  return id;
}

bool StoreWriter::append(const Reading& r) { return append(std::span<const Reading>(&r, 1)); }

bool StoreWriter::append(std::span<const Reading> readings) {
  std::lock_guard lock(impl_->mu);
  // Nothing to queue. Taking a sequence number here would make every later flush() wait for
  // a commit that never comes (an empty batch is never written).
  if (readings.empty()) return !impl_->stopping;
  for (const Reading& r : readings) {
    if (r.series_id < 1 || r.series_id >= impl_->next_series_id || !std::isfinite(r.value)) {
      impl_->n_dropped += static_cast<int64_t>(readings.size());
      return false;
    }
  }
  if (!impl_->admit(readings.size())) return false;
  impl_->incoming.readings.insert(impl_->incoming.readings.end(), readings.begin(),
                                  readings.end());
  return true;
}

bool StoreWriter::append(const AlarmEvent& e) {
  std::lock_guard lock(impl_->mu);
  if (!impl_->admit(1)) return false;
  impl_->incoming.events.push_back(e);
  return true;
}

bool StoreWriter::append(const Snapshot& s) {
  bool finite = true;
  for (float v : s.magnitude) finite = finite && std::isfinite(v);
  std::lock_guard lock(impl_->mu);
  if (!finite) {
    ++impl_->n_dropped;
    return false;
  }
  if (!impl_->admit(1)) return false;
  impl_->incoming.snapshots.push_back(s);
  return true;
}

bool StoreWriter::append(const Annotation& a) {
  std::lock_guard lock(impl_->mu);
  if (!impl_->admit(1)) return false;
  impl_->incoming.annotations.push_back(a);
  return true;
}

int64_t StoreWriter::begin_run(const RunRecord& r) {
  std::lock_guard lock(impl_->mu);
  RunRecord rec = r;
  rec.id = impl_->next_run_id++;
  impl_->incoming.run_starts.push_back(rec);
  impl_->incoming.last_seq = ++impl_->enqueued_seq;
  return rec.id;
}

void StoreWriter::end_run(int64_t run_id, WallTimeMs stop) {
  std::lock_guard lock(impl_->mu);
  impl_->incoming.run_stops.emplace_back(run_id, stop.unix_ms);
  impl_->incoming.last_seq = ++impl_->enqueued_seq;
}

base::Status StoreWriter::flush(milliseconds timeout) {
  std::unique_lock lock(impl_->mu);
  const uint64_t target = impl_->enqueued_seq;
  impl_->flush_requested = true;
  impl_->wake.notify_one();
  const bool done = impl_->committed.wait_for(lock, timeout, [&] {
    return impl_->committed_seq >= target || impl_->stopped;
  });
  if (done && impl_->committed_seq >= target) return {};
  return make_error(ErrorCode::kUnavailable,
                    "store: flush of " + impl_->config.path + " incomplete" +
                        (impl_->health.last_error.empty() ? std::string(" (timed out)")
                                                          : ": " + impl_->health.last_error));
}

base::Status StoreWriter::stop(milliseconds timeout) {
  {
    std::lock_guard lock(impl_->mu);
    if (!impl_->thread.joinable()) return {};
    if (!impl_->stopping) {
      impl_->stopping = true;
      impl_->stop_deadline = Clock::now() + timeout;
    }
  }
  base::Status result = flush(timeout);
  impl_->wake.notify_one();
  impl_->thread.join();
  std::lock_guard lock(impl_->mu);
  impl_->stopped = true;
  if (impl_->committed_seq < impl_->enqueued_seq) {
    base::log_error("store: stopped with " + std::to_string(impl_->queued) +
                    " items not written to " + impl_->config.path);
  }
  return result;
}

void StoreWriter::Impl::on_write_result(const base::Result<detail::WriteOutcome>& r,
                                        bool disk_full, int64_t live_bytes) {
  std::lock_guard lock(mu);
  if (r.ok()) {
    committed_seq = pending.last_seq;
    queued -= pending.items;
    ++n_batches;
    n_readings += r->readings_written;
    n_duplicates += r->duplicates;
    if (!health.ok) base::log_info("store: writing to " + config.path + " again");
    health.ok = true;
    health.disk_full = false;
    health.last_error.clear();
    // Set together with committed_seq, so that a flush() that returns already sees whether
    // this commit put the store over its size cap.
    if (live_bytes >= 0) {
      health.live_bytes = live_bytes;
      const double cap = static_cast<double>(config.retention.max_db_bytes);
      if (static_cast<double>(live_bytes) > kSizeCapHighWater * cap && !health.over_size_cap) {
        base::log_info("store: " + config.path + " uses " + std::to_string(live_bytes) +
                       " bytes, over " + std::to_string(static_cast<int>(kSizeCapHighWater * 100)) +
                       " % of its " + std::to_string(config.retention.max_db_bytes) +
                       "-byte cap; dropping the oldest raw readings");
        health.over_size_cap = true;
      }
    }
    committed.notify_all();
    return;
  }
  if (health.ok) {  // log once per state change
    ++health.num_faults;
    base::log_error(r.error().message + "; keeping the batch and retrying");
  }
  health.ok = false;
  health.disk_full = disk_full;
  health.last_error = r.error().message;
}

void StoreWriter::Impl::on_size_state(int64_t live_bytes, bool over, bool unmet) {
  std::lock_guard lock(mu);
  health.live_bytes = live_bytes;
  health.over_size_cap = over;
  if (unmet != health.size_cap_unmet) {  // log once per state change
    if (unmet) {
      base::log_warn("store: " + config.path + " uses " + std::to_string(live_bytes) +
                     " bytes with no raw reading or snapshot left to drop; rollups and the "
                     "alarm log alone exceed the size cap of " +
                     std::to_string(config.retention.max_db_bytes) + " bytes");
    } else {
      base::log_info("store: " + config.path + " is within its size cap again");
    }
  }
  health.size_cap_unmet = unmet;
}

void StoreWriter::Impl::run() {
  auto next_commit = Clock::now() + config.commit_interval;
  auto next_prune = Clock::now() + config.prune_interval;
  auto next_checkpoint = Clock::now() + config.checkpoint_interval;
  Clock::time_point retry_at{};
  milliseconds backoff = kFirstRetry;
  bool prune_more = false;
  const bool capped = config.retention.max_db_bytes > 0;
  const double high_water = kSizeCapHighWater * static_cast<double>(config.retention.max_db_bytes);
  // The cap may have been lowered since the last run: check once before the first batch.
  bool size_more = capped && static_cast<double>(db.live_bytes()) > high_water;
  for (;;) {
    bool exiting = false;
    {
      std::unique_lock lock(mu);
      auto until = pending.empty() ? next_commit : retry_at;
      if (prune_more) until = std::min(until, Clock::now() + kPruneStepGap);
      if (size_more) until = Clock::now();  // the cap comes first: no pause between its steps
      if (stopping) until = std::min(until, stop_deadline);
      wake.wait_until(lock, until, [&] {
        return (flush_requested || stopping) && (pending.empty() || Clock::now() >= retry_at);
      });
      flush_requested = false;
      if (pending.empty() && !incoming.empty()) std::swap(pending, incoming);
      exiting = stopping && ((pending.empty() && incoming.empty()) || Clock::now() >= stop_deadline);
    }
    const auto now = Clock::now();
    if (!pending.empty() && now >= retry_at) {
      bool disk_full = false;
      auto r = db.write(pending, &disk_full);
      const int64_t live = r.ok() && capped ? db.live_bytes() : -1;
      on_write_result(r, disk_full, live);
      if (live >= 0 && static_cast<double>(live) > high_water) size_more = true;
      if (r.ok()) {
        pending.clear();
        backoff = kFirstRetry;
      } else {
        retry_at = now + backoff;
        backoff = std::min(backoff * 2, kMaxRetry);
      }
    }
    if (now >= next_commit) next_commit = now + config.commit_interval;
    if (exiting) break;
    if (!pending.empty()) continue;  // storage fault: no housekeeping until writes work
    if (size_more && !exiting_soon()) {
      // Steps back to back for up to kSizeCapTurn, then the next batch gets its turn: the
      // cap gets most of the writer's time without holding a commit for long.
      const auto turn_end = Clock::now() + kSizeCapTurn;
      bool unmet = false;
      int64_t freed_rows = 0;
      while (size_more && Clock::now() < turn_end) {
        auto n = db.size_step(&size_more, &unmet);
        if (!n.ok()) {
          size_more = false;
          base::log_warn("store: " + n.error().message);
          break;
        }
        freed_rows += *n;
      }
      {
        std::lock_guard lock(mu);
        n_pruned += freed_rows;
      }
      on_size_state(db.live_bytes(), size_more, unmet);
      continue;
    }
    if (prune_more || now >= next_prune) {
      if (!prune_more) next_prune = now + config.prune_interval;
      auto n = db.prune_step(base::wall_now().unix_ms, &prune_more);
      if (n.ok()) {
        std::lock_guard lock(mu);
        n_pruned += *n;
      } else {
        prune_more = false;
        base::log_warn("store: " + n.error().message);
      }
    }
    if (now >= next_checkpoint) {
      next_checkpoint = now + config.checkpoint_interval;
      db.checkpoint();
    }
  }
  db.checkpoint();
}

StoreHealth StoreWriter::health() const {
  std::lock_guard lock(impl_->mu);
  return impl_->health;
}
int64_t StoreWriter::num_committed_batches() const noexcept {
  std::lock_guard lock(impl_->mu);
  return impl_->n_batches;
}
int64_t StoreWriter::num_written_readings() const noexcept {
  std::lock_guard lock(impl_->mu);
  return impl_->n_readings;
}
int64_t StoreWriter::num_dropped() const noexcept {
  std::lock_guard lock(impl_->mu);
  return impl_->n_dropped;
}
int64_t StoreWriter::num_duplicates() const noexcept {
  std::lock_guard lock(impl_->mu);
  return impl_->n_duplicates;
}
int64_t StoreWriter::num_pruned_rows() const noexcept {
  std::lock_guard lock(impl_->mu);
  return impl_->n_pruned;
}
size_t StoreWriter::queued() const {
  std::lock_guard lock(impl_->mu);
  return impl_->queued;
}

std::string StoreWriter::describe() const {
  const auto& c = impl_->config;
  return "store " + c.path + ": WAL, commit every " + std::to_string(c.commit_interval.count()) +
         " ms, queue " + std::to_string(c.queue_capacity) + " items (reject newest), raw " +
         std::to_string(c.retention.raw_days) + " d, minute " +
         std::to_string(c.retention.minute_rollup_days) + " d, hour " +
         std::to_string(c.retention.hour_rollup_days) + " d, size cap " +
         (c.retention.max_db_bytes > 0 ? std::to_string(c.retention.max_db_bytes) + " bytes"
                                       : std::string("none"));
}

}  // namespace tonewarden::store
