// Test helper for the track suite: one frame through dsp::SpectrumAnalyzer, returned with the
// SpectrumLayout that track needs to read it.
#pragma once

#include <gtest/gtest.h>

#include <span>
#include <vector>

#include "tonewarden/dsp/spectrum_analyzer.h"
#include "tonewarden/track/tone_search.h"

namespace tonewarden::track {

struct AnalyzedSpectrum {
  SpectrumLayout layout;
  std::vector<float> power;
};

// The first `block` samples of `x`, mean removed, windowed, padded ×pad, one-sided power.
inline AnalyzedSpectrum analyze(const std::vector<float>& x, double fs, size_t block, size_t pad,
                                dsp::WindowKind window = dsp::WindowKind::kHann) {
  dsp::SpectrumConfig sc;
  sc.sample_rate_hz = fs;
  sc.block = block;
  sc.pad_factor = pad;
  sc.window.kind = window;
  sc.planning = dsp::FftPlanning::kEstimate;
  auto analyzer = dsp::SpectrumAnalyzer::create(sc);
  EXPECT_TRUE(analyzer.ok());
  AnalyzedSpectrum a;
  if (!analyzer.ok()) return a;
  a.power.resize(analyzer->num_bins());
  EXPECT_TRUE(analyzer->process(std::span<const float>(x).first(block), a.power));
  a.layout = {fs, block, analyzer->fft_length(), sc.window};
  return a;
}

}  // namespace tonewarden::track
