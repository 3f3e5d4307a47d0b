// StoreWriter: the one thread that writes history to SQLite, in batches, with bounded memory.
//
// Threads: every public method is thread-safe and cheap (a short mutex hold); one internal
// writer thread owns the read-write connection. Each commit interval it takes everything
// queued and writes it in one BEGIN IMMEDIATE ... COMMIT, updating the per-minute and
// per-hour rollups in the same transaction. Each append call is committed whole or not at all.
// Between batches it prunes old rows in small steps and checkpoints the WAL now and then.
//
// Overflow policy: kRejectNewest. The queue holds at most queue_capacity items (readings,
// events, snapshots, annotations). An append that does not fit is rejected whole, counted in
// num_dropped(), and the caller gets false. Series registration and run records are never
// dropped. Items already queued are never discarded, even during a storage fault.
//
// Storage faults (disk full, I/O error, busy past busy_timeout): the batch is rolled back and
// kept; the writer retries with backoff, logs once per state change, and reports the state in
// health(). New appends keep being accepted until the queue is full, then dropped and counted.
// When space returns, the kept batch commits and writing resumes.
#pragma once

#include <chrono>
#include <cstdint>
#include <memory>
#include <span>
#include <string>

#include "tonewarden/base/result.h"
#include "tonewarden/store/records.h"

namespace tonewarden::store {

enum class OverflowPolicy { kRejectNewest };
inline constexpr OverflowPolicy kOverflowPolicy = OverflowPolicy::kRejectNewest;

struct RetentionConfig {
  int raw_days = 14;                   // raw readings kept this long (>= 1)
  int minute_rollup_days = 90;         // per-minute rollups (>= raw_days)
  int hour_rollup_days = 3650;         // per-hour rollups (>= minute_rollup_days)
  int snapshot_days = 90;              // snapshots older than this are pruned (>= 1)
  int64_t snapshots_per_channel = 5000;  // and at most this many per (rig, channel) (>= 1)
  int event_days = 3650;               // alarm events and annotations
  int64_t max_db_bytes = 0;            // 0: no cap; else >= 1 MiB, see "Size cap" below
};

// Size cap (retention.max_db_bytes). After every commit the writer measures the pages in use
// (page_count - freelist_count). Above kSizeCapHighWater of the cap it frees space, between
// commits, until use is at or below kSizeCapLowWater: first the oldest raw readings, at one
// time cutoff for all series (so nothing newer than a dropped reading is dropped), and only
// when no raw reading is left, the oldest snapshots. Rollups, alarm events, annotations, runs
// and the series dictionary are never dropped for size. Freed pages are reused, so the file
// (database + WAL after a checkpoint) stays at or below the cap as long as one commit adds
// less than (1 - kSizeCapHighWater) of it. The file does not shrink below its high-water
// mark without a VACUUM.
inline constexpr double kSizeCapHighWater = 0.9;
inline constexpr double kSizeCapLowWater = 0.8;

struct StoreConfig {
  std::string path;                    // database file; its directory must exist and be writable
  std::chrono::milliseconds commit_interval{1000};      // 10 ms .. 60 s
  size_t queue_capacity = 1'000'000;   // items, 1 .. 100 M (a reading takes 24 bytes)
  std::chrono::milliseconds busy_timeout{5000};         // per connection
  int64_t journal_size_limit_bytes = 64 << 20;          // WAL file size kept after checkpoint
  std::chrono::milliseconds checkpoint_interval{60'000};  // wal_checkpoint(TRUNCATE)
  std::chrono::milliseconds prune_interval{10'000};       // how often retention runs
  int prune_batch_rows = 5000;         // rows deleted per pruning transaction (100 .. 1 M)
  RetentionConfig retention;
  // Per-connection page cap (PRAGMA max_page_count); 0 leaves SQLite's default. For tests
  // and hard quotas: hitting it behaves like a full disk.
  int64_t max_page_count = 0;
};

// Validates ranges; every bad field is listed in one message.
base::Status validate(const StoreConfig& config);

struct StoreHealth {
  bool ok = true;            // false while the last write attempt failed
  bool disk_full = false;    // the failure was SQLITE_FULL (disk or page cap)
  std::string last_error;    // one line; empty when ok
  int64_t num_faults = 0;    // ok -> fault transitions since open
  int64_t live_bytes = 0;    // pages in use x page size, after the last commit or size step
  bool over_size_cap = false;   // above the high-water mark: dropping oldest rows for size
  bool size_cap_unmet = false;  // over it with no raw reading or snapshot left to drop
};

class StoreWriter {
 public:
  // Opens (creating if needed) and migrates the database, sets the pragmas, starts the
  // writer thread. Errors: kInvalidArgument (config), kIo (directory not writable, cannot
  // open), kCorruptData (not a database, or not ours), kUnavailable (newer schema, locked).
  static base::Result<std::unique_ptr<StoreWriter>> create(const StoreConfig& config);
  ~StoreWriter();  // stop()
  StoreWriter(const StoreWriter&) = delete;
  StoreWriter& operator=(const StoreWriter&) = delete;

  // Returns the id of a series, adding it to the dictionary (queued, never dropped) if new.
  // Fails with kInvalidArgument on empty or over-long names.
  base::Result<SeriesId> register_series(const SeriesKey& key);

  // Queue for the next batch. False if rejected (queue full, stopped, unknown series id,
  // non-finite value); a rejected call counts all its items in num_dropped().
  bool append(const Reading& r);
  bool append(std::span<const Reading> readings);
  bool append(const AlarmEvent& e);
  bool append(const Snapshot& s);
  bool append(const Annotation& a);

  // Runs: begin_run returns the new run's id at once; both are queued, never dropped.
  int64_t begin_run(const RunRecord& r);
  void end_run(int64_t run_id, WallTimeMs stop);

  // Waits until everything queued before the call is committed, or the timeout passes
  // (kUnavailable with the last storage error). Wakes the writer at once.
  base::Status flush(std::chrono::milliseconds timeout = std::chrono::seconds(30));
  // Flushes (bounded by `timeout`), stops the thread, closes. Idempotent; appends after
  // stop are rejected. Returns the flush result.
  base::Status stop(std::chrono::milliseconds timeout = std::chrono::seconds(30));

  StoreHealth health() const;
  int64_t num_committed_batches() const noexcept;
  int64_t num_written_readings() const noexcept;
  int64_t num_dropped() const noexcept;     // items rejected by append (all kinds)
  int64_t num_duplicates() const noexcept;  // readings whose (series, time) already existed
  int64_t num_pruned_rows() const noexcept;
  size_t queued() const;                    // items waiting, including a kept failed batch
  std::string describe() const;             // one line for the startup log

 private:
  struct Impl;
  explicit StoreWriter(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::store
