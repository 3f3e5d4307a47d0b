// peaks_bench: cost of PeakFinder::find() (floor, detection, interpolation) on a machine-like
// spectrum, beside the bare real FFT of the same length, plus PeakFinder::create for Kaiser.
// Not a pass/fail test. Goal (reported, not asserted): find() <= 0.3 ms at block 65536, Hann,
// pad 1 and 2, i.e. well under the FFT it follows.
//
// usage: peaks_bench [--benchmark_filter=...]   (Google Benchmark flags)
#include <benchmark/benchmark.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <vector>

#include "support/signals.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/dsp/window.h"

namespace tw = tonewarden;

namespace {

constexpr double kFs = 51200.0;
constexpr size_t kTones = 20;

template <typename T>
T must(tw::base::Result<T> r, const char* what) {
  if (!r.ok()) {
    std::fprintf(stderr, "peaks_bench: %s: %s\n", what, r.error().message.c_str());
    std::exit(1);
  }
  return std::move(r).value();
}

tw::dsp::SpectrumAnalyzer make_analyzer(size_t block, size_t pad, tw::dsp::WindowSpec window) {
  tw::dsp::SpectrumConfig config;
  config.sample_rate_hz = kFs;
  config.block = block;
  config.pad_factor = pad;
  config.window = window;
  config.planning = tw::dsp::FftPlanning::kEstimate;
  return must(tw::dsp::SpectrumAnalyzer::create(config), "analyzer");
}

// Broadband noise plus 20 tones spread over the band, from 0 dB down to -50 dB (a shaft
// line with harmonics, mesh tones, hum), so the floor, the leakage test and the interpolator
// all have work to do.
std::vector<float> machine_spectrum(tw::dsp::SpectrumAnalyzer& analyzer) {
  const size_t block = analyzer.config().block;
  std::vector<float> x(block, 0.0f);
  for (size_t i = 0; i < kTones; ++i) {
    const double f = 37.3 + 1210.7 * static_cast<double>(i) + 13.1 * static_cast<double>(i * i);
    const double amplitude = std::pow(10.0, -2.5 * static_cast<double>(i) / 20.0);
    tw::testing::add_sine(x, kFs, f, amplitude, 0.3 * static_cast<double>(i));
  }
  tw::testing::add_gaussian_noise(x, 1e-3, 11);
  std::vector<float> power(analyzer.num_bins());
  if (!analyzer.process(x, power)) std::exit(1);
  return power;
}

void BM_PeakFind(benchmark::State& state) {
  const auto block = static_cast<size_t>(state.range(0));
  const auto pad = static_cast<size_t>(state.range(1));
  auto analyzer = make_analyzer(block, pad, {tw::dsp::WindowKind::kHann, 0.0});
  const std::vector<float> power = machine_spectrum(analyzer);
  tw::dsp::PeakConfig config;
  config.sample_rate_hz = kFs;
  config.fft_length = analyzer.fft_length();
  config.max_peaks = kTones;
  auto finder = must(tw::dsp::PeakFinder::create(config, analyzer.window()), "finder");
  std::vector<tw::dsp::Peak> peaks(kTones);
  size_t found = 0;
  for (auto _ : state) {
    found = finder.find(power, peaks);
    benchmark::DoNotOptimize(peaks.data());
  }
  state.counters["peaks"] = static_cast<double>(found);
  state.counters["bins"] = static_cast<double>(power.size());
}
BENCHMARK(BM_PeakFind)
    ->ArgsProduct({{8192, 65536, 524288}, {1, 2}})
    ->Unit(benchmark::kMicrosecond);

// The bare real FFT of the same length, for scale.
void BM_BareFft(benchmark::State& state) {
  const auto length = static_cast<size_t>(state.range(0)) * static_cast<size_t>(state.range(1));
  auto fft = must(tw::dsp::RealFft::create(length, tw::dsp::FftPlanning::kEstimate), "fft");
  std::vector<float> noise(length, 0.0f);
  tw::testing::add_gaussian_noise(noise, 1.0, 3);
  std::copy(noise.begin(), noise.end(), fft.input().begin());
  for (auto _ : state) {
    fft.execute();
    benchmark::DoNotOptimize(fft.output().data());
  }
}
BENCHMARK(BM_BareFft)
    ->ArgsProduct({{8192, 65536, 524288}, {1, 2}})
    ->Unit(benchmark::kMicrosecond);

// create() for Kaiser tabulates the window's transform once per configuration.
void BM_KaiserCreate(benchmark::State& state) {
  const auto block = static_cast<size_t>(state.range(0));
  auto window = must(tw::dsp::Window::create({tw::dsp::WindowKind::kKaiser, 8.0}, block), "window");
  tw::dsp::PeakConfig config;
  config.sample_rate_hz = kFs;
  config.fft_length = block;
  for (auto _ : state) {
    auto finder = tw::dsp::PeakFinder::create(config, window);
    benchmark::DoNotOptimize(finder);
  }
}
BENCHMARK(BM_KaiserCreate)->Arg(8192)->Arg(65536)->Unit(benchmark::kMillisecond)->Iterations(1);

}  // namespace

BENCHMARK_MAIN();
