// Test signal generators shared by every suite: tones, noise, sums. Deterministic.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace tonewarden::testing {

// amplitude·sin(2π·frequency_hz·n/fs + phase_rad), n = 0..count-1, computed in double.
std::vector<float> make_sine(size_t count, double sample_rate_hz, double frequency_hz,
                             double amplitude, double phase_rad = 0.0);
// Adds a sine in place.
void add_sine(std::vector<float>& x, double sample_rate_hz, double frequency_hz, double amplitude,
              double phase_rad = 0.0);
// Adds zero-mean Gaussian noise of standard deviation `sigma`, seeded.
void add_gaussian_noise(std::vector<float>& x, double sigma, uint64_t seed);

}  // namespace tonewarden::testing
