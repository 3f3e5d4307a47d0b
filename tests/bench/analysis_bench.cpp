// analysis_bench: how fast the analysis path runs, beside bare FFTW on the same frames and
// beside the numpy/scipy pipeline (tests/bench/scipy_pipeline.py), all in one run.
// Not a pass/fail test. Goals (reported, not asserted): >= 5x scipy, >= 60 % of the bare-FFT
// rate, < 64 MB peak RSS on a one-hour file, prime block <= 1.2x the smooth one.
//
// usage: analysis_bench [--minutes M] [--hour] [--keep DIR] [--path-only] [--repeat R]
//   --minutes M  length of the generated 51.2 kHz mono float recording (default 10)
//   --path-only  only the analysis path vs bare FFTW (no scipy, CLI or prime block): quick,
//                and what `perf record` should look at
//   --repeat R   run the analysis-path vs bare-FFTW comparison R times (default 1), so a
//                loaded machine shows a range instead of one lucky or unlucky figure
//   --hour       also write a one-hour recording and measure the CLI's peak RSS with
//                /usr/bin/time -v tonewarden analyze FILE --block 65536
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <ctime>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <nlohmann/json.hpp>
#include <optional>
#include <random>
#include <string>
#include <vector>

#include "support/subprocess.h"
#include "tonewarden/dsp/averager.h"
#include "tonewarden/dsp/fft.h"
#include "tonewarden/dsp/framer.h"
#include "tonewarden/dsp/peaks.h"
#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/source/sound_file_reader.h"
#include "tonewarden/source/sound_file_writer.h"

namespace tw = tonewarden;

namespace {

constexpr double kFs = 51200.0;
constexpr size_t kBlock = 65536;
constexpr size_t kReadFrames = 65536;

// Wall time and this process's CPU time. On a shared, loaded machine the CPU time is the
// fairer figure, so the ratios below use it and the wall times are printed beside.
struct Stamp {
  double wall_s = 0, cpu_s = 0;
  static Stamp now() {
    timespec w{}, c{};
    clock_gettime(CLOCK_MONOTONIC, &w);
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &c);
    return {static_cast<double>(w.tv_sec) + 1e-9 * static_cast<double>(w.tv_nsec),
            static_cast<double>(c.tv_sec) + 1e-9 * static_cast<double>(c.tv_nsec)};
  }
  Stamp since(const Stamp& t0) const { return {wall_s - t0.wall_s, cpu_s - t0.cpu_s}; }
  Stamp& operator+=(const Stamp& o) {
    wall_s += o.wall_s;
    cpu_s += o.cpu_s;
    return *this;
  }
};

[[noreturn]] void die(const std::string& what) {
  std::fprintf(stderr, "analysis_bench: %s\n", what.c_str());
  std::exit(1);
}

// A machine-like recording: shaft line and harmonics, a mesh tone, hum, broadband noise.
void write_recording(const std::string& path, double seconds) {
  auto w = tw::source::SoundFileWriter::create(path, {kFs, 1, tw::source::SoundFileEncoding::kWavFloat32});
  if (!w) die(w.error().message);
  std::vector<float> buf(kReadFrames);
  std::mt19937_64 rng(7);
  std::normal_distribution<float> noise(0.0f, 0.05f);
  const auto total = static_cast<uint64_t>(seconds * kFs);
  for (uint64_t n0 = 0; n0 < total; n0 += buf.size()) {
    const size_t count = static_cast<size_t>(std::min<uint64_t>(buf.size(), total - n0));
    for (size_t i = 0; i < count; ++i) {
      const double t = static_cast<double>(n0 + i) / kFs;
      buf[i] = static_cast<float>(0.8 * std::sin(2 * M_PI * 49.6 * t) +
                                  0.3 * std::sin(2 * M_PI * 99.2 * t + 0.4) +
                                  0.2 * std::sin(2 * M_PI * 297.6 * t + 1.0) +
                                  0.05 * std::sin(2 * M_PI * 100.0 * t)) +
               noise(rng);
    }
    if (auto st = w->write(std::span<const float>(buf.data(), count)); !st) die(st.error().message);
  }
  if (auto st = w->close(); !st) die(st.error().message);
}

struct PathResult {
  Stamp took;
  uint64_t samples = 0;
  uint64_t frames = 0;
  double top_peak_hz = 0;
};

// The analysis path as `tonewarden analyze` runs it: read -> Framer -> SpectrumAnalyzer ->
// SpectrumAverager (linear over every frame) -> PeakFinder. Plans are made before timing.
PathResult run_analysis_path(const std::string& path, size_t block, tw::dsp::FftPlanning planning,
                             uint64_t max_samples) {
  auto reader = tw::source::SoundFileReader::create(path);
  if (!reader) die(reader.error().message);
  const uint64_t samples = std::min<uint64_t>(max_samples, reader->frames());
  const size_t hop = block / 2;
  auto framer = tw::dsp::Framer::create({block, hop});
  if (!framer) die(framer.error().message);
  tw::dsp::SpectrumConfig sc;
  sc.sample_rate_hz = kFs;
  sc.block = block;
  sc.planning = planning;
  auto analyzer = tw::dsp::SpectrumAnalyzer::create(sc);
  if (!analyzer) die(analyzer.error().message);
  tw::dsp::AverageConfig ac;
  ac.linear_frames = (samples - block) / hop + 1;
  ac.num_bins = analyzer->num_bins();
  ac.frame_period_s = static_cast<double>(hop) / kFs;
  auto averager = tw::dsp::SpectrumAverager::create(ac);
  if (!averager) die(averager.error().message);
  tw::dsp::PeakConfig pc;
  pc.sample_rate_hz = kFs;
  pc.fft_length = analyzer->fft_length();
  auto finder = tw::dsp::PeakFinder::create(pc, analyzer->window());
  if (!finder) die(finder.error().message);
  std::vector<float> block_buf(kReadFrames), frame(block), power(analyzer->num_bins());
  std::vector<tw::dsp::Peak> peaks(10);

  PathResult r;
  const Stamp t0 = Stamp::now();
  while (r.samples < samples) {
    const size_t want = static_cast<size_t>(std::min<uint64_t>(kReadFrames, samples - r.samples));
    auto got = reader->read(std::span<float>(block_buf.data(), want));
    if (!got) die(got.error().message);
    if (*got == 0) break;
    r.samples += *got;
    std::span<const float> rest(block_buf.data(), *got);
    while (!rest.empty()) {
      rest = rest.subspan(framer->push(rest));
      int64_t first = 0;
      while (framer->next_frame(frame, &first)) {
        analyzer->process(frame, power);
        averager->push(power);
        ++r.frames;
      }
    }
  }
  const size_t n = finder->find(averager->result(), peaks);
  r.took = Stamp::now().since(t0);
  if (n > 0) r.top_peak_hz = peaks[0].frequency_hz;
  return r;
}

// Bare FFTW on the same number of frames: RealFft::execute() only (filling is not timed).
Stamp run_bare_fft(const std::string& path, size_t n, uint64_t frames, tw::dsp::FftPlanning planning) {
  auto fft = tw::dsp::RealFft::create(n, planning);
  if (!fft) die(fft.error().message);
  auto reader = tw::source::SoundFileReader::create(path);
  if (!reader) die(reader.error().message);
  std::vector<float> data(n);
  auto got = reader->read(data);
  if (!got) die(got.error().message);
  Stamp total;
  for (uint64_t f = 0; f < frames; ++f) {
    std::copy(data.begin(), data.end(), fft->input().begin());
    const Stamp t0 = Stamp::now();
    fft->execute();
    total += Stamp::now().since(t0);
  }
  return total;
}

// Wall time of a child and its CPU time (user + system, from the children's rusage).
Stamp time_cli(const std::vector<std::string>& args) {
  auto child_cpu = [] {
    rusage u{};
    getrusage(RUSAGE_CHILDREN, &u);
    return static_cast<double>(u.ru_utime.tv_sec + u.ru_stime.tv_sec) +
           1e-6 * static_cast<double>(u.ru_utime.tv_usec + u.ru_stime.tv_usec);
  };
  const Stamp t0 = Stamp::now();
  const double c0 = child_cpu();
  const auto r = tw::testing::run_process(args);
  Stamp s = Stamp::now().since(t0);
  s.cpu_s = child_cpu() - c0;
  if (r.exit_code != 0) die("CLI failed: " + r.stderr_text);
  return s;
}

}  // namespace

int main(int argc, char** argv) {
  double minutes = 10.0;
  bool hour = false;
  bool path_only = false;
  int repeat = 1;
  std::string dir;
  for (int i = 1; i < argc; ++i) {
    if (!std::strcmp(argv[i], "--minutes") && i + 1 < argc) minutes = std::atof(argv[++i]);
    else if (!std::strcmp(argv[i], "--hour")) hour = true;
    else if (!std::strcmp(argv[i], "--keep") && i + 1 < argc) dir = argv[++i];
    else if (!std::strcmp(argv[i], "--path-only")) path_only = true;
    else if (!std::strcmp(argv[i], "--repeat") && i + 1 < argc) repeat = std::max(1, std::atoi(argv[++i]));
    else die(std::string("unknown argument ") + argv[i] + " (see the file's header for usage)");
  }
  if (dir.empty()) {
    char tmpl[] = "/tmp/tw_bench_XXXXXX";
    if (!mkdtemp(tmpl)) die("mkdtemp failed");
    dir = tmpl;
  }
  const std::string path = dir + "/recording_51k2.wav";
  std::printf("writing %.1f min of 51.2 kHz mono float to %s\n", minutes, path.c_str());
  write_recording(path, minutes * 60.0);

  // Warm the page cache so every contender reads from memory.
  run_analysis_path(path, kBlock, tw::dsp::FftPlanning::kEstimate, UINT64_MAX);

  std::printf("\nblock %zu, Hann, 50 %% overlap, linear average of every frame, 10 peaks\n", kBlock);
  std::printf("rates in Msamples/s of input, from CPU time (wall time in brackets)\n");
  for (int rep = 0; rep < repeat; ++rep) {
    for (auto planning : {tw::dsp::FftPlanning::kEstimate, tw::dsp::FftPlanning::kMeasure}) {
      const char* name = planning == tw::dsp::FftPlanning::kEstimate ? "estimate" : "measure";
      const PathResult a = run_analysis_path(path, kBlock, planning, UINT64_MAX);
      const Stamp fft = run_bare_fft(path, kBlock, a.frames, planning);
      const double n = static_cast<double>(a.samples);
      // The bare FFT's rate in input samples: each of the same frames advances the stream a hop.
      std::printf("  planning %-8s analysis path %7.1f (%7.1f)  %llu frames, top peak %.3f Hz\n", name,
                  n / a.took.cpu_s / 1e6, n / a.took.wall_s / 1e6,
                  static_cast<unsigned long long>(a.frames), a.top_peak_hz);
      std::printf("  planning %-8s bare RealFft  %7.1f (%7.1f)  -> analysis at %.0f %% of the bare-FFT rate (%.0f %% wall)\n",
                  name, n / fft.cpu_s / 1e6, n / fft.wall_s / 1e6, 100.0 * fft.cpu_s / a.took.cpu_s,
                  100.0 * fft.wall_s / a.took.wall_s);
    }
  }
  if (path_only) {
    std::remove(path.c_str());
    return 0;
  }

  const PathResult a = run_analysis_path(path, kBlock, tw::dsp::FftPlanning::kAuto, UINT64_MAX);
  const double n = static_cast<double>(a.samples);
  const auto py = tw::testing::run_process(
      {tw::testing::kReferencePython, std::string(TONEWARDEN_SOURCE_DIR) + "/tests/bench/scipy_pipeline.py",
       path, std::to_string(kBlock), "10"});
  if (py.exit_code != 0) die("scipy pipeline failed: " + py.stderr_text);
  const auto pj = nlohmann::json::parse(py.stdout_text);
  const double py_cpu = pj["read_cpu_s"].get<double>() + pj["compute_cpu_s"].get<double>();
  const double py_wall = pj["read_s"].get<double>() + pj["compute_s"].get<double>();
  std::printf("\nscipy pipeline (wavfile.read + spectrogram + find_peaks, /usr/bin/python3):\n");
  std::printf("  read %.3f s cpu (%.3f wall), compute %.3f s cpu (%.3f wall)\n",
              pj["read_cpu_s"].get<double>(), pj["read_s"].get<double>(),
              pj["compute_cpu_s"].get<double>(), pj["compute_s"].get<double>());
  std::printf("  scipy %.1f (%.1f) incl. read; analysis path (auto planning) %.1f (%.1f)\n",
              n / py_cpu / 1e6, n / py_wall / 1e6, n / a.took.cpu_s / 1e6, n / a.took.wall_s / 1e6);
  std::printf("  ratio analysis/scipy = %.1fx cpu (%.1fx wall); vs scipy compute only %.1fx cpu\n",
              py_cpu / a.took.cpu_s, py_wall / a.took.wall_s,
              pj["compute_cpu_s"].get<double>() / a.took.cpu_s);

  const Stamp cli = time_cli({tw::testing::tonewarden_binary(), "analyze", path, "--block",
                              std::to_string(kBlock), "--format", "json"});
  std::printf("\nCLI end to end: tonewarden analyze FILE --block %zu --format json\n", kBlock);
  std::printf("  %.3f s cpu (%.3f wall) -> %.1f (%.1f) Msamples/s, process start and planning included\n",
              cli.cpu_s, cli.wall_s, n / cli.cpu_s / 1e6, n / cli.wall_s / 1e6);

  // Prime vs smooth block on the first 60 s: the analyzer pads the prime block to a fast length.
  const uint64_t slice = static_cast<uint64_t>(std::min(60.0, minutes * 60.0) * kFs);
  const PathResult smooth = run_analysis_path(path, 524288, tw::dsp::FftPlanning::kEstimate, slice);
  const PathResult prime = run_analysis_path(path, 524287, tw::dsp::FftPlanning::kEstimate, slice);
  std::printf("\nblock 524288 vs 524287 (prime), first %.0f s, estimate planning:\n",
              static_cast<double>(slice) / kFs);
  std::printf("  %.3f s vs %.3f s cpu (%.3f vs %.3f wall) -> prime/smooth %.2fx cpu (%.2fx wall)\n",
              smooth.took.cpu_s, prime.took.cpu_s, smooth.took.wall_s, prime.took.wall_s,
              prime.took.cpu_s / smooth.took.cpu_s, prime.took.wall_s / smooth.took.wall_s);

  if (hour) {
    const std::string hour_path = dir + "/hour_51k2.wav";
    std::printf("\nwriting 60 min to %s\n", hour_path.c_str());
    write_recording(hour_path, 3600.0);
    const auto r = tw::testing::run_process({"/usr/bin/time", "-v", tw::testing::tonewarden_binary(),
                                             "analyze", hour_path, "--block", "65536"});
    const size_t at = r.stderr_text.find("Maximum resident set size (kbytes): ");
    const size_t wall = r.stderr_text.find("Elapsed (wall clock) time");
    std::printf("/usr/bin/time -v tonewarden analyze %s --block 65536 -> exit %d\n", hour_path.c_str(), r.exit_code);
    if (at != std::string::npos)
      std::printf("  %s\n", r.stderr_text.substr(at, r.stderr_text.find('\n', at) - at).c_str());
    if (wall != std::string::npos)
      std::printf("  %s\n", r.stderr_text.substr(wall, r.stderr_text.find('\n', wall) - wall).c_str());
    std::remove(hour_path.c_str());
  }
  std::remove(path.c_str());
  return 0;
}
