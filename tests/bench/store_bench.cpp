// Store benchmarks (not pass/fail): batched insert rate, a 30-day 1 Hz trend reduced to 2000
// points, and database bytes per channel-day at default settings.
//
// Channel-day assumption: one channel carries 20 scalar metrics (RMS, peak, crest, orders,
// bearing tones...), each stored at 1 reading/s = 1 728 000 readings/day, plus one periodic
// snapshot of 4097 bins every 10 minutes (144/day). Both parts are reported separately.
#include <benchmark/benchmark.h>
#include <stdlib.h>
#include <sys/stat.h>

#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "tonewarden/store/store_reader.h"
#include "tonewarden/store/store_writer.h"

namespace {

using namespace tonewarden::store;

constexpr int64_t kT0 = 1'700'000'000'000 - (1'700'000'000'000 % 3'600'000);
constexpr int64_t kDayMs = 86'400'000;

std::string temp_dir() {
  char tmpl[] = "/tmp/tw-store-bench-XXXXXX";
  return mkdtemp(tmpl);
}

int64_t file_bytes(const std::string& path) {
  struct stat st {};
  return ::stat(path.c_str(), &st) == 0 ? st.st_size : 0;
}

std::unique_ptr<StoreWriter> writer(const std::string& path) {
  StoreConfig c;
  c.path = path;
  // Retention is relative to the wall clock; the fixed 2023 timestamps here must not be pruned.
  c.retention.raw_days = 36500;
  c.retention.minute_rollup_days = 36500;
  c.retention.hour_rollup_days = 36500;
  c.retention.snapshot_days = 36500;
  auto w = StoreWriter::create(c);
  if (!w.ok()) {
    std::fprintf(stderr, "%s\n", w.error().message.c_str());
    std::abort();
  }
  return std::move(w).value();
}

// 20 series x 1 Hz; appended in chunks of `chunk` readings.
void write_channel_seconds(StoreWriter& w, const std::vector<SeriesId>& ids, int64_t t0,
                           int64_t seconds, size_t chunk) {
  std::vector<Reading> buf;
  buf.reserve(chunk);
  for (int64_t s = 0; s < seconds; ++s) {
    for (size_t k = 0; k < ids.size(); ++k) {
      buf.push_back({ids[k], t0 + s * 1000, 1.0 + 0.001 * static_cast<double>((s * 7 + k) % 997)});
      if (buf.size() == chunk) {
        while (!w.append(buf)) (void)w.flush();
        buf.clear();
      }
    }
  }
  if (!buf.empty()) w.append(buf);
}

std::vector<SeriesId> twenty_series(StoreWriter& w) {
  std::vector<SeriesId> ids;
  for (int k = 0; k < 20; ++k) {
    ids.push_back(w.register_series({"rig", "ch", "metric" + std::to_string(k), "g"}).value());
  }
  return ids;
}

void BM_InsertBatched(benchmark::State& state) {
  const std::string dir = temp_dir();
  auto w = writer(dir + "/h.db");
  const auto ids = twenty_series(*w);
  const int64_t seconds = 5000;  // 100 000 readings per iteration
  int64_t t = kT0;
  for (auto _ : state) {
    write_channel_seconds(*w, ids, t, seconds, static_cast<size_t>(state.range(0)));
    if (!w->flush().ok()) state.SkipWithError("flush failed");
    t += seconds * 1000;
  }
  state.SetItemsProcessed(state.iterations() * seconds * 20);
  state.counters["dropped"] = static_cast<double>(w->num_dropped());
  w.reset();
  std::filesystem::remove_all(dir);
}
BENCHMARK(BM_InsertBatched)->Arg(100)->Arg(1000)->Arg(10000)->UseRealTime()
    ->Unit(benchmark::kMillisecond);

// One series, 30 days at 1 Hz = 2 592 000 readings, built once per process.
struct ThirtyDays {
  std::string dir = temp_dir();
  std::string path = dir + "/h.db";
  SeriesId id = 0;
  ThirtyDays() {
    auto w = writer(path);
    id = w->register_series({"rig", "ch", "rms", "g"}).value();
    write_channel_seconds(*w, {id}, kT0, 30 * 86'400, 10'000);
    (void)w->stop();
  }
  ~ThirtyDays() { std::filesystem::remove_all(dir); }
};
ThirtyDays& thirty_days() {
  static ThirtyDays d;
  return d;
}

void BM_Trend30DaysTo2000Points(benchmark::State& state) {
  auto& d = thirty_days();
  auto r = StoreReader::open(d.path).value();
  size_t points = 0;
  for (auto _ : state) {
    auto t = r->trend({{d.id}, {kT0}, {kT0 + 30 * kDayMs}, 2000});
    points = t.value()[0].points.size();
    benchmark::DoNotOptimize(points);
  }
  state.counters["points"] = static_cast<double>(points);
  state.counters["rows"] = 2'592'000;
}
BENCHMARK(BM_Trend30DaysTo2000Points)->Unit(benchmark::kMillisecond);

// One day at 2000 points: 43.2 s buckets, so this one scans 86 400 raw rows.
void BM_Trend1DayRawTo2000Points(benchmark::State& state) {
  auto& d = thirty_days();
  auto r = StoreReader::open(d.path).value();
  for (auto _ : state) {
    auto t = r->trend({{d.id}, {kT0 + 10 * kDayMs}, {kT0 + 11 * kDayMs}, 2000});
    benchmark::DoNotOptimize(t.value()[0].points.size());
  }
}
BENCHMARK(BM_Trend1DayRawTo2000Points)->Unit(benchmark::kMillisecond);

void BM_BytesPerChannelDay(benchmark::State& state) {
  for (auto _ : state) {
    const std::string dir = temp_dir();
    {
      auto w = writer(dir + "/trend.db");
      write_channel_seconds(*w, twenty_series(*w), kT0, 86'400, 1000);
      (void)w->stop();  // the final checkpoint truncates the WAL
    }
    {
      auto w = writer(dir + "/snap.db");
      Snapshot s;
      s.rig = "rig";
      s.channel = "ch";
      s.reason = "periodic";
      s.sample_rate_hz = 51200;
      s.fft_length = 8192;
      s.bin_hz = 6.25;
      s.window = "hann";
      s.scale = "peak";
      s.unit = "g";
      s.magnitude.resize(4097);
      for (size_t k = 0; k < s.magnitude.size(); ++k) {
        s.magnitude[k] = 1e-4f * static_cast<float>(1 + (k * 37) % 1000);
      }
      for (int i = 0; i < 144; ++i) {
        s.t = {kT0 + i * 600'000};
        w->append(s);
      }
      (void)w->stop();
    }
    const int64_t empty = [&] {
      auto w = writer(dir + "/empty.db");
      (void)w->stop();
      return file_bytes(dir + "/empty.db");
    }();
    state.counters["trend_bytes_per_channel_day"] =
        static_cast<double>(file_bytes(dir + "/trend.db") - empty);
    state.counters["snapshot_bytes_per_channel_day"] =
        static_cast<double>(file_bytes(dir + "/snap.db") - empty);
    state.counters["bytes_per_reading"] =
        static_cast<double>(file_bytes(dir + "/trend.db") - empty) / 1'728'000.0;
    std::filesystem::remove_all(dir);
  }
}
BENCHMARK(BM_BytesPerChannelDay)->Iterations(1)->Unit(benchmark::kSecond);

}  // namespace

BENCHMARK_MAIN();
