// fast_length: the smallest 7-smooth number (2^a·3^b·5^c·7^d) at or above n.
#include "tonewarden/dsp/fast_length.h"

#include <limits>

namespace tonewarden::dsp {

size_t fast_length(size_t n) noexcept {
  if (n <= 1) return 1;
  constexpr size_t kMax = std::numeric_limits<size_t>::max();
  // Start from the next power of two; if even that does not fit, no smooth length does
  // either (every candidate below is smaller than it), so return n unchanged.
  size_t best = 1;
  while (best < n) {
    if (best > kMax / 2) return n;
    best *= 2;
  }
  // Enumerate the odd parts 3^b·5^c·7^d below `best` (a few hundred even for n ~ 1e12) and
  // scale each by the power of two that first reaches n.
  for (size_t p7 = 1; p7 < best; p7 = (p7 > kMax / 7) ? best : p7 * 7) {
    for (size_t p5 = p7; p5 < best; p5 = (p5 > kMax / 5) ? best : p5 * 5) {
      for (size_t p3 = p5; p3 < best; p3 = (p3 > kMax / 3) ? best : p3 * 3) {
        size_t m = p3;
        while (m < n) m *= 2;  // m < n <= best <= 2^63, so 2m cannot overflow
        if (m < best) best = m;
      }
    }
  }
  return best;
}

}  // namespace tonewarden::dsp
