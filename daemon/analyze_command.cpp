// `tonewarden analyze FILE`: one-shot spectral analysis of a recording. This file owns the
// options and their checks; analyze_run.cpp streams the file, analyze_output.cpp reports.
#include <unistd.h>

#include <charconv>
#include <cmath>
#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

#include "analyze.h"
#include "commands.h"
#include "tonewarden/base/units.h"

namespace tonewarden::daemon {

namespace {

// Limits, with the reason for each.
constexpr size_t kMinBlock = 16;               // shorter frames resolve nothing useful
constexpr size_t kMaxBlock = size_t{1} << 22;  // ~4.2 M samples: keeps buffers under ~100 MB
constexpr size_t kMaxPad = 64;
constexpr size_t kMaxPeaks = 1000;

struct RawOptions {
  std::string file;
  size_t channel = 0;
  size_t block = kAnalyzeDefaultBlock;
  size_t pad = 1;
  double overlap = kAnalyzeDefaultOverlap;
  std::string window = "hann";
  std::string average;
  std::string scale = "peak";
  double sensitivity = 1.0;
  std::string unit = "raw";
  bool velocity = false;
  size_t peaks = kAnalyzeDefaultPeaks;
  std::vector<std::string> bands;
  std::string envelope;
  std::string format = "table";
  std::string spectrum_out;
};

base::Error usage(std::string message) {
  return base::make_error(base::ErrorCode::kInvalidArgument, std::move(message));
}

bool parse_double(std::string_view text, double* out) {
  if (text.empty()) return false;
  const auto* end = text.data() + text.size();
  const auto [ptr, ec] = std::from_chars(text.data(), end, *out);
  return ec == std::errc() && ptr == end && std::isfinite(*out);
}

// "LO:HI" in Hz, 0 <= LO < HI. The upper limit (Nyquist) is checked once the file is open.
base::Result<FrequencyBand> parse_band(const std::string& option, const std::string& text) {
  const size_t colon = text.find(':');
  FrequencyBand b;
  if (colon == std::string::npos ||
      !parse_double(std::string_view(text).substr(0, colon), &b.low_hz) ||
      !parse_double(std::string_view(text).substr(colon + 1), &b.high_hz))
    return usage(option + " '" + text + "': expected LO:HI in Hz, e.g. 10:1000");
  if (b.low_hz < 0 || b.high_hz <= b.low_hz)
    return usage(option + " '" + text + "': needs 0 <= LO < HI");
  return b;
}

base::Result<AnalyzeSettings> validate(const RawOptions& o) {
  AnalyzeSettings s;
  s.path = o.file;
  s.channel = o.channel;
  if (o.block < kMinBlock || o.block > kMaxBlock)
    return usage("--block " + std::to_string(o.block) + ": allowed " + std::to_string(kMinBlock) +
                 ".." + std::to_string(kMaxBlock) + " samples");
  s.block = o.block;
  if (o.pad < 1 || o.pad > kMaxPad || (o.pad & (o.pad - 1)) != 0)
    return usage("--pad " + std::to_string(o.pad) + ": must be a power of two, 1..64");
  s.pad = o.pad;
  if (!(o.overlap >= 0.0 && o.overlap < 1.0))
    return usage("--overlap " + std::to_string(o.overlap) + ": needs 0 <= F < 1");
  s.overlap = o.overlap;
  auto window = dsp::parse_window_spec(o.window);
  if (!window) return usage("--window '" + o.window + "': " + window.error().message);
  s.window = *window;
  if (!o.average.empty()) {
    auto avg = dsp::parse_average_spec(o.average);
    if (!avg) return usage("--average '" + o.average + "': " + avg.error().message);
    s.average = *avg;
    s.average_text = o.average;
  }
  const auto scale = dsp::parse_spectrum_scale(o.scale);
  if (!scale) return usage("--scale '" + o.scale + "': expected peak, rms, power or psd");
  s.scale = *scale;
  if (!(o.sensitivity > 0.0) || !std::isfinite(o.sensitivity))
    return usage("--sensitivity " + std::to_string(o.sensitivity) + ": must be > 0 (file value per unit)");
  s.sensitivity = o.sensitivity;
  if (o.unit.empty()) return usage("--unit: must not be empty");
  s.unit = o.unit;
  if (o.velocity && !base::parse_accel_unit(o.unit))
    return usage("--velocity integrates acceleration: needs --unit g or m/s2 (got '" + o.unit + "')");
  s.velocity = o.velocity;
  if (o.peaks > kMaxPeaks)
    return usage("--peaks " + std::to_string(o.peaks) + ": allowed 0.." + std::to_string(kMaxPeaks));
  s.max_peaks = o.peaks;
  for (const std::string& text : o.bands) {
    auto b = parse_band("--band", text);
    if (!b) return std::move(b).error();
    s.bands.push_back(*b);
  }
  if (!o.envelope.empty()) {
    auto b = parse_band("--envelope", o.envelope);
    if (!b) return std::move(b).error();
    s.envelope = *b;
  }
  s.show_progress = ::isatty(STDERR_FILENO) == 1;
  return s;
}

int fail(const base::Error& error) {
  std::fprintf(stderr, "tonewarden analyze: %s\n", error.message.c_str());
  return exit_code_for(error);
}

}  // namespace

CommandRunner register_analyze_command(CLI::App& app) {
  auto* cmd = app.add_subcommand(
      "analyze",
      "Analyse a recording once: averaged spectrum, tonal peaks, band and overall levels,\n"
      "time-domain statistics and, optionally, the envelope spectrum of a resonance band.");
  static RawOptions o;
  cmd->add_option("FILE", o.file, "WAV or FLAC recording (streamed, never loaded whole)")
      ->required();
  cmd->add_option("--channel", o.channel, "Channel to analyse, from 0 (default 0)");
  cmd->add_option("--block", o.block, "Samples per frame (default 8192; any length, prime too)");
  cmd->add_option("--pad", o.pad, "Zero-padding factor 1, 2, 4 ... 64 (default 1)");
  cmd->add_option("--overlap", o.overlap, "Frame overlap 0 <= F < 1 (default 0.5)");
  cmd->add_option("--window", o.window,
                  "rect, hann, hamming, blackman, blackman-harris, flattop, hft95, kaiser:BETA "
                  "(default hann)");
  cmd->add_option("--average", o.average,
                  "linear:N, exp:SECONDS or peak (default: linear over every frame of the file)");
  cmd->add_option("--scale", o.scale, "Amplitude scale: peak, rms, power or psd (default peak)");
  cmd->add_option("--sensitivity", o.sensitivity,
                  "File value per engineering unit, e.g. 0.1 for 100 mV/g (default 1)");
  cmd->add_option("--unit", o.unit, "Engineering unit name, e.g. g, m/s2, Pa (default raw)");
  cmd->add_flag("--velocity", o.velocity,
                "Integrate acceleration (--unit g or m/s2) to velocity in mm/s; bins below 10 Hz are "
                "zeroed");
  cmd->add_option("--peaks", o.peaks, "Number of peaks to report, strongest first (default 10)");
  cmd->add_option("--band", o.bands, "Band RMS over LO:HI Hz; repeat for more bands")
      ->type_size(1)
      ->expected(1)
      ->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
  cmd->add_option("--envelope", o.envelope,
                  "Envelope spectrum of the band LO:HI Hz (a resonance the impacts excite)");
  cmd->add_option("--format", o.format, "table, json or csv (default table)")
      ->check(CLI::IsMember({"table", "json", "csv"}));
  cmd->add_option("--spectrum-out", o.spectrum_out,
                  "Also write the averaged spectrum as frequency_hz,value CSV to this file");

  return [] {
    auto settings = validate(o);
    if (!settings) return fail(settings.error());
    if (!o.spectrum_out.empty()) {
      // Fail before a long analysis, not after it.
      std::ofstream probe(o.spectrum_out, std::ios::trunc);
      if (!probe)
        return fail(base::errno_error(base::ErrorCode::kInvalidArgument,
                                      "--spectrum-out " + o.spectrum_out + ": cannot create", errno));
    }
    auto report = run_analysis(*settings);
    if (!report) return fail(report.error());
    if (!o.spectrum_out.empty()) {
      if (auto st = write_spectrum_csv(*report, o.spectrum_out); !st) return fail(st.error());
    }
    const std::string text = o.format == "json"  ? format_json(*report)
                             : o.format == "csv" ? format_csv(*report)
                                                 : format_table(*report);
    std::fwrite(text.data(), 1, text.size(), stdout);
    if (std::fflush(stdout) != 0) return kExitRuntimeFailure;
    return kExitOk;
  };
}

}  // namespace tonewarden::daemon
