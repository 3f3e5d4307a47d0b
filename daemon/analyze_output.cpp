// The analyze report in three forms: a table for people, one JSON object for scripts, CSV
// rows of peaks for spreadsheets; plus the spectrum as frequency_hz,value CSV.
#include <cstdio>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "analyze.h"

namespace tonewarden::daemon {

namespace {

std::string fmt(const char* f, double v) {
  char buf[64];
  std::snprintf(buf, sizeof buf, f, v);
  return buf;
}

// The amplitude's unit as shown to people: "g peak", "g RMS", "g²", "g²/Hz".
std::string scaled_unit(const std::string& unit, dsp::SpectrumScale scale) {
  switch (scale) {
    case dsp::SpectrumScale::kPeak: return unit + " peak";
    case dsp::SpectrumScale::kRms: return unit + " RMS";
    case dsp::SpectrumScale::kPower: return unit + "^2";
    case dsp::SpectrumScale::kPsd: return unit + "^2/Hz";
  }
  return unit;
}

nlohmann::json peaks_json(const std::vector<PeakReport>& peaks) {
  nlohmann::json a = nlohmann::json::array();
  for (const PeakReport& p : peaks) {
    a.push_back({{"frequency_hz", p.frequency_hz},
                 {"amplitude", p.amplitude},
                 {"level_db", p.level_db},
                 {"prominence_db", p.prominence_db}});
  }
  return a;
}

void table_peaks(std::ostringstream& o, const std::vector<PeakReport>& peaks,
                 const std::string& amp_unit) {
  if (peaks.empty()) {
    o << "  (no peak stands above the noise floor)\n";
    return;
  }
  char line[160];
  std::snprintf(line, sizeof line, "  %4s %14s %16s %10s %14s\n", "rank", "frequency Hz",
                "amplitude", "dB re 1", "above floor dB");
  o << line << "  amplitude in " << amp_unit << "\n";
  for (size_t i = 0; i < peaks.size(); ++i) {
    const PeakReport& p = peaks[i];
    std::snprintf(line, sizeof line, "  %4zu %14.4f %16.6g %10.2f %14.1f\n", i + 1, p.frequency_hz,
                  p.amplitude, p.level_db, p.prominence_db);
    o << line;
  }
}

}  // namespace

std::string format_json(const AnalyzeReport& r) {
  nlohmann::json j;
  j["file"] = r.path;
  j["format"] = r.format_description;
  j["sample_rate_hz"] = r.sample_rate_hz;
  j["channel"] = r.channel;
  j["channels"] = r.channels;
  j["samples"] = r.samples;
  j["duration_s"] = static_cast<double>(r.samples) / r.sample_rate_hz;
  j["block"] = r.block;
  j["hop"] = r.hop;
  j["pad"] = r.pad;
  j["fft_length"] = r.fft_length;
  j["bin_hz"] = r.bin_hz;
  j["resolution_hz"] = r.resolution_hz;
  j["enbw_bins"] = r.enbw_bins;
  j["window"] = r.window;
  j["average"] = r.average;
  j["frames"] = r.frames;
  j["frames_analysed"] = r.frames_total;
  j["scale"] = dsp::spectrum_scale_name(r.scale);
  j["unit"] = r.unit;
  j["peaks"] = peaks_json(r.peaks);
  nlohmann::json bands = nlohmann::json::array();
  for (const BandReport& b : r.bands)
    bands.push_back({{"low_hz", b.band.low_hz}, {"high_hz", b.band.high_hz}, {"rms", b.rms}});
  j["bands"] = bands;
  j["overall_rms"] = r.overall_rms;
  j["overall_band"] = {{"low_hz", r.overall_band.low_hz}, {"high_hz", r.overall_band.high_hz}};
  j["time"] = {{"unit", r.time_unit},       {"mean", r.time.mean},
               {"rms", r.time.rms},         {"peak", r.time.peak},
               {"crest_factor", r.time.crest_factor}, {"kurtosis", r.time.kurtosis},
               {"kurtosis_convention", "pearson"}};
  if (r.envelope) {
    j["envelope"] = {{"low_hz", r.envelope->band.low_hz},
                     {"high_hz", r.envelope->band.high_hz},
                     {"unit", r.envelope->unit},
                     {"median", r.envelope->median}};
    j["envelope_peaks"] = peaks_json(r.envelope->peaks);
  }
  return j.dump(2) + "\n";
}

std::string format_csv(const AnalyzeReport& r) {
  std::ostringstream o;
  o << "kind,rank,frequency_hz,amplitude,level_db,prominence_db\n";
  auto rows = [&o](const char* kind, const std::vector<PeakReport>& peaks) {
    char line[200];
    for (size_t i = 0; i < peaks.size(); ++i) {
      std::snprintf(line, sizeof line, "%s,%zu,%.6f,%.9g,%.4f,%.2f\n", kind, i + 1,
                    peaks[i].frequency_hz, peaks[i].amplitude, peaks[i].level_db,
                    peaks[i].prominence_db);
      o << line;
    }
  };
  rows("spectrum", r.peaks);
  if (r.envelope) rows("envelope", r.envelope->peaks);
  return o.str();
}

std::string format_table(const AnalyzeReport& r) {
  std::ostringstream o;
  const double duration_s = static_cast<double>(r.samples) / r.sample_rate_hz;
  o << "recording   " << r.path << "\n";
  o << "            " << r.format_description << "; channel " << r.channel << " of "
    << r.channels << ", " << r.samples << " samples (" << fmt("%.2f", duration_s) << " s)\n";
  o << "analysis    " << r.window << " window, block " << r.block << ", hop " << r.hop
    << ", FFT " << r.fft_length << " (pad x" << r.pad << ")\n";
  o << "            bin " << fmt("%.4g", r.bin_hz) << " Hz, resolution "
    << fmt("%.4g", r.resolution_hz) << " Hz; average " << r.average << " (" << r.frames
    << " of " << r.frames_total << " frames)\n";
  o << "time        rms " << fmt("%.6g", r.time.rms) << " " << r.time_unit << ", peak "
    << fmt("%.6g", r.time.peak) << " " << r.time_unit << ", crest factor " << fmt("%.3f", r.time.crest_factor)
    << ", kurtosis " << fmt("%.3f", r.time.kurtosis) << " (Pearson, Gaussian = 3)\n";
  o << "overall     rms " << fmt("%.6g", r.overall_rms) << " " << r.unit << " over "
    << fmt("%g", r.overall_band.low_hz) << "-" << fmt("%g", r.overall_band.high_hz) << " Hz\n";
  for (const BandReport& b : r.bands)
    o << "band        " << fmt("%g", b.band.low_hz) << "-" << fmt("%g", b.band.high_hz)
      << " Hz: rms " << fmt("%.6g", b.rms) << " " << r.unit << "\n";
  o << "\npeaks (" << dsp::spectrum_scale_name(r.scale) << " scale)\n";
  table_peaks(o, r.peaks, scaled_unit(r.unit, r.scale));
  if (r.envelope) {
    o << "\nenvelope of " << fmt("%g", r.envelope->band.low_hz) << "-"
      << fmt("%g", r.envelope->band.high_hz) << " Hz; median "
      << fmt("%.4g", r.envelope->median) << " " << scaled_unit(r.envelope->unit, r.scale) << "\n";
    table_peaks(o, r.envelope->peaks, scaled_unit(r.envelope->unit, r.scale));
  }
  return o.str();
}

base::Status write_spectrum_csv(const AnalyzeReport& r, const std::string& path) {
  std::ofstream out(path, std::ios::trunc);
  if (!out)
    return base::errno_error(base::ErrorCode::kIo, "--spectrum-out " + path + ": cannot create",
                             errno);
  out << "frequency_hz,value\n";
  char line[64];
  for (size_t k = 0; k < r.spectrum.size(); ++k) {
    std::snprintf(line, sizeof line, "%.6f,%.9g\n", static_cast<double>(k) * r.bin_hz,
                  static_cast<double>(r.spectrum[k]));
    out << line;
  }
  out.flush();
  if (!out)
    return base::errno_error(base::ErrorCode::kIo, "--spectrum-out " + path + ": write failed",
                             errno);
  return base::Status::success();
}

}  // namespace tonewarden::daemon
