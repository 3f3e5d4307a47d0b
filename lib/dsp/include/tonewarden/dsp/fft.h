// FFTW behind small RAII types; <fftw3.h> stays out of this header.
// Plans are made once, in create(); execute() is allocation-free and thread-safe for
// distinct objects. Planning itself is serialised internally (FFTW's planner is not
// thread-safe).
#pragma once

#include <complex>
#include <cstddef>
#include <memory>
#include <span>
#include <string>

#include "tonewarden/base/result.h"

namespace tonewarden::dsp {

enum class FftPlanning {
  kAuto,      // MEASURE when wisdom was loaded or when asked; ESTIMATE otherwise
  kEstimate,  // fast to plan, slower to run
  kMeasure,   // slow to plan (seconds at 2^19), fastest to run; wisdom makes it quick next time
};

// Process-wide FFTW wisdom. Thread-safe.
class FftWisdom {
 public:
  // Loads wisdom from `path`. A missing file is not an error (returns false in *loaded).
  static base::Status load(const std::string& path, bool* loaded);
  // Saves the accumulated wisdom to `path` atomically (temp file + rename).
  static base::Status save(const std::string& path);
  // True once any wisdom was loaded in this process.
  static bool any_loaded() noexcept;
};

// Real-to-complex forward transform of length n (n >= 2): n real inputs, n/2+1 outputs.
class RealFft {
 public:
  static base::Result<RealFft> create(size_t n, FftPlanning planning = FftPlanning::kAuto);
  RealFft(RealFft&&) noexcept;
  RealFft& operator=(RealFft&&) noexcept;
  ~RealFft();

  size_t length() const noexcept;
  // SIMD-aligned buffers owned by this object: fill input(), execute(), read output().
  std::span<float> input() noexcept;
  std::span<const std::complex<float>> output() const noexcept;
  void execute() noexcept;

 private:
  struct Impl;
  explicit RealFft(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

// Complex-to-complex transform of length n, forward (e^{-j}) or backward (e^{+j}, unnormalised).
class ComplexFft {
 public:
  enum class Direction { kForward, kBackward };
  static base::Result<ComplexFft> create(size_t n, Direction direction,
                                         FftPlanning planning = FftPlanning::kAuto);
  ComplexFft(ComplexFft&&) noexcept;
  ComplexFft& operator=(ComplexFft&&) noexcept;
  ~ComplexFft();

  size_t length() const noexcept;
  std::span<std::complex<float>> input() noexcept;
  std::span<const std::complex<float>> output() const noexcept;
  void execute() noexcept;

 private:
  struct Impl;
  explicit ComplexFft(std::unique_ptr<Impl> impl);
  std::unique_ptr<Impl> impl_;
};

}  // namespace tonewarden::dsp
