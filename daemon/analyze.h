// `tonewarden analyze`: the settings, the one-pass streaming analysis of a recording, and
// its report in table, JSON or CSV form. Split across analyze_command.cpp (options),
// analyze_run.cpp (the pipeline) and analyze_output.cpp (the report).
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/dsp/averager.h"
#include "tonewarden/dsp/scaling.h"
#include "tonewarden/dsp/window.h"

namespace tonewarden::daemon {

// Defaults, stated in --help.
inline constexpr size_t kAnalyzeDefaultBlock = 8192;
inline constexpr double kAnalyzeDefaultOverlap = 0.5;
inline constexpr size_t kAnalyzeDefaultPeaks = 10;
// Velocity: bins below this are zeroed before integrating (1/f blows up low-frequency noise).
// 10 Hz is common practice and the lower edge of the ISO 20816 velocity band.
inline constexpr double kVelocityLowCutHz = 10.0;

struct FrequencyBand {
  double low_hz = 0;
  double high_hz = 0;
};

// Validated settings (the command line parsed and checked against the file).
struct AnalyzeSettings {
  std::string path;
  size_t channel = 0;
  size_t block = kAnalyzeDefaultBlock;
  size_t pad = 1;
  double overlap = kAnalyzeDefaultOverlap;
  dsp::WindowSpec window;
  std::optional<dsp::AverageConfig> average;  // nullopt: linear over every frame of the file
  std::string average_text = "linear:all";
  dsp::SpectrumScale scale = dsp::SpectrumScale::kPeak;
  double sensitivity = 1.0;   // file value per engineering unit (e.g. V per g)
  std::string unit = "raw";
  bool velocity = false;
  size_t max_peaks = kAnalyzeDefaultPeaks;
  std::vector<FrequencyBand> bands;
  std::optional<FrequencyBand> envelope;
  bool show_progress = false;
};

struct PeakReport {
  double frequency_hz = 0;
  double amplitude = 0;      // in the chosen scale
  double level_db = 0;       // dB re 1 unit (10·log10 for power/psd, 20·log10 otherwise)
  double prominence_db = 0;  // above the local noise floor
};

struct BandReport {
  FrequencyBand band;
  double rms = 0;
};

struct TimeReport {
  double mean = 0, rms = 0, peak = 0, crest_factor = 0, kurtosis = 0;
};

struct EnvelopeReport {
  FrequencyBand band;
  std::string unit;           // unit² (the squared envelope)
  double median = 0;          // median of the envelope spectrum in the chosen scale
  std::vector<PeakReport> peaks;
};

struct AnalyzeReport {
  std::string path, format_description;
  double sample_rate_hz = 0;
  size_t channel = 0, channels = 0;
  uint64_t samples = 0;
  size_t block = 0, hop = 0, pad = 1, fft_length = 0;
  double bin_hz = 0, resolution_hz = 0, enbw_bins = 0;
  std::string window, average;
  uint64_t frames = 0;          // frames in the reported average
  uint64_t frames_total = 0;    // frames analysed
  dsp::SpectrumScale scale = dsp::SpectrumScale::kPeak;
  std::string unit;             // of the spectrum (mm/s with --velocity)
  std::string time_unit;        // of the time-domain statistics
  std::vector<PeakReport> peaks;
  std::vector<BandReport> bands;
  double overall_rms = 0;
  FrequencyBand overall_band;
  TimeReport time;
  std::optional<EnvelopeReport> envelope;
  std::vector<float> spectrum;  // final spectrum in the chosen scale (bins 0..fft/2)
};

// Runs the whole analysis; streams the file block by block. Errors carry the exit-code class
// in their ErrorCode (see exit_code_for).
base::Result<AnalyzeReport> run_analysis(const AnalyzeSettings& settings);

// kInvalidArgument, kNotFound, kCorruptData -> 2 (usage or input); others -> 1.
int exit_code_for(const base::Error& error);

std::string format_table(const AnalyzeReport& report);
std::string format_json(const AnalyzeReport& report);
std::string format_csv(const AnalyzeReport& report);
// Writes frequency_hz,value rows of the final spectrum.
base::Status write_spectrum_csv(const AnalyzeReport& report, const std::string& path);

}  // namespace tonewarden::daemon
