// Test signal generators.
#include "support/signals.h"

#include <cmath>
#include <numbers>
#include <random>

namespace tonewarden::testing {

std::vector<float> make_sine(size_t count, double sample_rate_hz, double frequency_hz,
                             double amplitude, double phase_rad) {
  std::vector<float> x(count, 0.0f);
  add_sine(x, sample_rate_hz, frequency_hz, amplitude, phase_rad);
  return x;
}

void add_sine(std::vector<float>& x, double sample_rate_hz, double frequency_hz, double amplitude,
              double phase_rad) {
  const double w = 2.0 * std::numbers::pi * frequency_hz / sample_rate_hz;
  for (size_t n = 0; n < x.size(); ++n) {
    x[n] += static_cast<float>(amplitude * std::sin(w * static_cast<double>(n) + phase_rad));
  }
}

void add_gaussian_noise(std::vector<float>& x, double sigma, uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::normal_distribution<double> dist(0.0, sigma);
  for (float& v : x) v += static_cast<float>(dist(rng));
}

}  // namespace tonewarden::testing
