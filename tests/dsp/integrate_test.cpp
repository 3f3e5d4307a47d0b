// Focus: integrate_power_spectrum gain per order, low cut and DC zeroing, in-place use.
#include "tonewarden/dsp/integrate.h"

#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <vector>

namespace tonewarden::dsp {
namespace {

TEST(IntegrateTest, VelocityAndDisplacementGains) {
  // Power gain (scale/(2πf)^order)²: at 10 Hz, order 1 divides by (20π)², order 2 by (20π)⁴.
  const std::vector<float> a{1, 1, 1};  // bins at 0, 10, 20 Hz
  std::vector<float> v(3), d(3);
  integrate_power_spectrum(a, 10.0, 0.0, IntegrationOrder::kVelocity, 1.0, v);
  integrate_power_spectrum(a, 10.0, 0.0, IntegrationOrder::kDisplacement, 1.0, d);
  const double w10 = 2 * std::numbers::pi * 10;
  EXPECT_EQ(v[0], 0.0f);
  EXPECT_NEAR(v[1], 1.0 / (w10 * w10), 1e-9);
  EXPECT_NEAR(d[1], 1.0 / std::pow(w10, 4), 1e-12);
  EXPECT_NEAR(v[2], 1.0 / (4 * w10 * w10), 1e-9);
}

TEST(IntegrateTest, LowCutZeroesBinsBelow) {
  std::vector<float> p{5, 5, 5, 5, 5};  // 0, 5, 10, 15, 20 Hz
  integrate_power_spectrum(p, 5.0, 10.0, IntegrationOrder::kVelocity, 2.0, p);  // in place
  EXPECT_EQ(p[0], 0.0f);
  EXPECT_EQ(p[1], 0.0f);
  const double w10 = 2 * std::numbers::pi * 10;
  EXPECT_NEAR(p[2], 5.0 * 4.0 / (w10 * w10), 1e-7);  // 10 Hz is kept: cut is "below"
  EXPECT_GT(p[4], 0.0f);
}

}  // namespace
}  // namespace tonewarden::dsp
