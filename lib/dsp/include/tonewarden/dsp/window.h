// Spectral windows in periodic (DFT-even) form, normalised to a peak of 1, with the
// figures that make amplitude and density right for any window: coherent gain, ENBW,
// scallop loss. Cosine-sum windows also expose their coefficients, whose closed-form
// transform the peak interpolator uses.
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"

namespace tonewarden::dsp {

enum class WindowKind {
  kRectangular,
  kHann,
  kHamming,
  kBlackman,
  kBlackmanHarris,  // 4-term, minimum sidelobe (-92 dB)
  kFlatTop,         // D'Antona & Ferrero 5-term flat-top
  kHft95,           // Heinzel et al. 2002 HFT95
  kKaiser,          // Kaiser-Bessel with shape beta
};

struct WindowSpec {
  WindowKind kind = WindowKind::kHann;
  double kaiser_beta = 0.0;  // kKaiser only; [0, 50]
};

// Parses the CLI/config names: rect hann hamming blackman blackman-harris flattop hft95 kaiser:BETA.
base::Result<WindowSpec> parse_window_spec(std::string_view name);
// The canonical name, the inverse of parse_window_spec (e.g. "kaiser:8").
std::string window_name(const WindowSpec& spec);

class Window {
 public:
  // length >= 2. Allocates the coefficient table once.
  static base::Result<Window> create(const WindowSpec& spec, size_t length);

  const WindowSpec& spec() const noexcept { return spec_; }
  size_t length() const noexcept { return w_.size(); }
  std::span<const float> coefficients() const noexcept { return w_; }

  double sum() const noexcept { return sum_; }                 // Σw
  double sum_of_squares() const noexcept { return sum_sq_; }   // Σw²
  double coherent_gain() const noexcept;                        // Σw/N
  double enbw_bins() const noexcept;                            // N·Σw²/(Σw)²
  double scallop_loss_db() const noexcept { return scallop_db_; }  // > 0 dB: loss at half a bin

  // For cosine-sum windows w[n] = Σ_k (-1)^k a_k cos(2πkn/N): the a_k, normalised to peak 1.
  // Empty for Kaiser.
  std::span<const double> cosine_terms() const noexcept { return cosine_terms_; }

  // |W(nu)| / |W(0)|: the normalised magnitude of the window's DTFT at nu bins (of the
  // unpadded length) from the centre. Closed form for cosine-sum windows; exact DTFT for
  // Kaiser. Allocation-free.
  double kernel_magnitude(double nu_bins) const noexcept;

 private:
  WindowSpec spec_;
  std::vector<float> w_;
  std::vector<double> cosine_terms_;
  double sum_ = 0, sum_sq_ = 0, scallop_db_ = 0;
};

}  // namespace tonewarden::dsp
