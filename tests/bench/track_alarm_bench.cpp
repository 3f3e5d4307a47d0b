// Benchmarks (not pass/fail): one period of ChannelTracker work and of AlarmEngine::evaluate,
// the per-period cost that track and alarm add to the analysis thread.
#include <benchmark/benchmark.h>

#include <cmath>
#include <string>
#include <vector>

#include "support/signals.h"
#include "tonewarden/alarm/alarm_engine.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/track/channel_tracker.h"

namespace tw = tonewarden;

// 48 kHz, block 65536 padded ×2: 65537 bins. Eight targets (orders with harmonics and
// sidebands, bearing tones, hum) plus velocity RMS.
static void BM_ChannelTrackerPeriod(benchmark::State& state) {
  const double fs = 48000.0;
  const size_t block = 65536;
  auto x = tw::testing::make_sine(block, fs, 49.58, 1.0);
  tw::testing::add_gaussian_noise(x, 0.01, 1);
  tw::dsp::SpectrumConfig sc{fs, block, 2, {}, true, tw::dsp::FftPlanning::kEstimate};
  auto analyzer = tw::dsp::SpectrumAnalyzer::create(sc);
  std::vector<float> power(analyzer->num_bins());
  analyzer->process(x, power);
  tw::track::ChannelTrackConfig cc;
  cc.channel = "de";
  cc.spectrum = {fs, block, analyzer->fft_length(), sc.window};
  for (int k = 1; k <= 4; ++k) {
    tw::track::TargetConfig t;
    t.name = "order" + std::to_string(k);
    t.kind = tw::track::TargetKind::kOrder;
    t.order = k;
    t.harmonics = 3;
    t.sidebands = true;
    cc.targets.push_back(t);
  }
  for (auto tone : {tw::track::BearingTone::kBpfo, tw::track::BearingTone::kBpfi,
                    tw::track::BearingTone::kTwoBsf}) {
    tw::track::TargetConfig t;
    t.name = tw::track::bearing_tone_name(tone);
    t.kind = tw::track::TargetKind::kBearing;
    t.bearing = {9, 7.94, 39.04, 0.0};
    t.bearing_tone = tone;
    t.harmonics = 3;
    cc.targets.push_back(t);
  }
  tw::track::TargetConfig hum;
  hum.name = "hum";
  hum.kind = tw::track::TargetKind::kHum;
  hum.hum_multiple = 2;
  cc.targets.push_back(hum);
  tw::track::ReadingSet set;
  auto tracker = tw::track::ChannelTracker::create(cc, set);
  tw::dsp::TimeStats stats{};
  for (auto _ : state) {
    tracker->process({power, {}, &stats}, tw::track::SpeedEstimate::fixed(2975.0), set);
    benchmark::DoNotOptimize(set[0].value);
  }
  state.counters["readings"] = static_cast<double>(set.size());
}
BENCHMARK(BM_ChannelTrackerPeriod)->Unit(benchmark::kMicrosecond);

// 200 rules (absolute, with hysteresis and delays) on 200 readings, values moving.
static void BM_AlarmEvaluate(benchmark::State& state) {
  tw::track::ReadingSet set;
  tw::alarm::AlarmEngineConfig config;
  for (int i = 0; i < 200; ++i) {
    const std::string name = "ch" + std::to_string(i % 4) + ".t" + std::to_string(i) + ".amplitude";
    (void)set.add(name, "g", "ch" + std::to_string(i % 4));
    tw::alarm::RuleConfig r;
    r.name = "rule" + std::to_string(i);
    r.reading = name;
    r.warning = 1.0;
    r.critical = 2.0;
    r.hysteresis = 0.1;
    r.on_delay_s = 2.0;
    config.rules.push_back(r);
  }
  auto engine = tw::alarm::AlarmEngine::create(config).value();
  tw::alarm::EventBuffer events(1024);
  int64_t t = 1'700'000'000'000;
  for (auto _ : state) {
    for (size_t i = 0; i < set.size(); ++i) set.set(i, 1.0 + std::sin(0.001 * double(t) + i));
    events.clear();
    engine->evaluate(set, tw::base::WallTimeMs{t}, events);
    t += 1000;
  }
}
BENCHMARK(BM_AlarmEvaluate)->Unit(benchmark::kMicrosecond);

BENCHMARK_MAIN();
