// Cost of the synthetic rig's signal generation: ns per sample, and the share of one core
// that the demo's 2 ch x 48 kHz real-time stream takes. Run by hand; not pass/fail.
#include <benchmark/benchmark.h>

#include <vector>

#include "tonewarden/source/synthetic_rig.h"

namespace {

using tonewarden::source::Pace;
using tonewarden::source::SyntheticRig;
using tonewarden::source::SyntheticRigConfig;

// Generation in blocks of `frames`, with the defect running (impacts and resonator busy).
void BM_SyntheticRigGenerate(benchmark::State& state) {
  SyntheticRigConfig config;
  config.pace = Pace::kFast;
  config.tach_channel = state.range(1) != 0;
  config.story_start_s = config.defect_onset_s + config.defect_growth_s;  // full-size defect
  auto rig = SyntheticRig::create(config);
  if (!rig.ok()) {
    state.SkipWithError(rig.error().message.c_str());
    return;
  }
  const size_t frames = static_cast<size_t>(state.range(0));
  const size_t nch = (*rig)->num_channels();
  std::vector<float> block(frames * nch);
  for (auto _ : state) {
    (*rig)->generate(block);
    benchmark::DoNotOptimize(block.data());
    benchmark::ClobberMemory();
  }
  const double total_frames = static_cast<double>(state.iterations()) * frames;
  state.SetItemsProcessed(static_cast<int64_t>(total_frames * nch));  // samples
  // CPU seconds per second of a 48 kHz stream, in percent of one core (the counter is
  // CPU time / (signal seconds / 100)).
  state.counters["core_pct_48k"] = benchmark::Counter(
      total_frames / 48000.0 / 100.0, benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
  state.counters["ns_per_sample"] = benchmark::Counter(
      total_frames * nch * 1e-9, benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
}
BENCHMARK(BM_SyntheticRigGenerate)->Args({480, 0})->Args({4800, 0})->Args({4800, 1});

}  // namespace

BENCHMARK_MAIN();
