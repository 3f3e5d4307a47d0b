// Peak-preserving decimation of a spectrum for display: each output point is the MAXIMUM of
// its bucket of bins, placed at the frequency of the bin that holds it, so tonal peaks keep
// their height and position however few points the client asks for.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace tonewarden::http {

struct DecimatedSpectrum {
  std::vector<double> frequency_hz;  // of the bin holding each bucket's maximum
  std::vector<float> magnitude;      // the bucket's maximum (NaN bins ignored)
};

// Splits bins [0, n) into min(points, n) contiguous buckets; bucket i holds bins
// [floor(i*n/m), floor((i+1)*n/m)) with m buckets, so bucket sizes differ by at most one.
// Bin k lies at k*bin_hz. points >= n returns every bin. points == 0 returns nothing.
// A bucket of NaNs only yields NaN at its first bin. Allocates the two output vectors.
DecimatedSpectrum decimate_max(std::span<const float> magnitudes, double bin_hz, size_t points);

}  // namespace tonewarden::http
