// Fast FFT lengths: FFTW is as quick on 7-smooth lengths as on powers of two, and can be
// 30-40x slower on a prime length.
#pragma once

#include <cstddef>

namespace tonewarden::dsp {

// The smallest 2^a·3^b·5^c·7^d >= n (n >= 1). Returns 1 for n <= 1.
size_t fast_length(size_t n) noexcept;

}  // namespace tonewarden::dsp
