// Focus: bearing defect orders from geometry against a worked example and the published
// multiples of the open bearing dataset in tests/data/bearing-cwru.
#include "tonewarden/track/bearing.h"

#include <gtest/gtest.h>

#include "tonewarden/base/units.h"

namespace tonewarden::track {
namespace {

TEST(BearingFrequenciesTest, WorkedExampleMatchesFormulas) {
  // Formulas: R. B. Randall, J. Antoni, "Rolling element bearing diagnostics — A tutorial",
  // MSSP 25(2):485–520, 2011, Eqs. (1)–(4). Expected values for n=9, d=7.94 mm, D=39.04 mm,
  // φ=0 at 1797 rpm computed from those formulas and verified numerically with Debian's
  // python3 (REFERENCES.md, tag [V]).
  auto orders = bearing_orders({9, 7.94, 39.04, 0.0});
  ASSERT_TRUE(orders.ok()) << orders.error().message;
  const double fr = 1797.0 / 60.0;
  EXPECT_NEAR(orders->bpfo * fr, 107.3643, 1e-4);
  EXPECT_NEAR(orders->bpfi * fr, 162.1857, 1e-4);
  EXPECT_NEAR(orders->bsf * fr, 70.5846, 1e-4);
  EXPECT_NEAR(orders->ftf * fr, 11.9294, 1e-4);
  EXPECT_NEAR(orders->two_bsf, 2.0 * orders->bsf, 1e-15);
  // Identities of the formulas: BPFO + BPFI = n·fr; BPFO = n·FTF.
  EXPECT_NEAR(orders->bpfo + orders->bpfi, 9.0, 1e-12);
  EXPECT_NEAR(orders->bpfo, 9.0 * orders->ftf, 1e-12);
}

TEST(BearingFrequenciesTest, OpenDatasetPublishedMultiples) {
  // Geometry and defect multiples as published with the dataset (tests/data/bearing-cwru/
  // README.md): 9 balls, 0.3126 in ball, 1.537 in pitch, contact angle 0; BPFI 5.4152,
  // BPFO 3.5848, FTF 0.39828, rolling element (2×BSF) 4.7135. Ours from the formulas are
  // 5.415224, 3.584776, 0.398308, 4.713443: they agree to 4 significant digits (relative
  // 1e-4); BPFI and BPFO also to all 5 published digits. The last digit of FTF and 2×BSF
  // differs slightly in the published table.
  const double in = base::kMmPerInch;  // units do not matter, only d/D; mm for realism
  auto orders = bearing_orders({9, 0.3126 * in, 1.537 * in, 0.0});
  ASSERT_TRUE(orders.ok());
  EXPECT_NEAR(orders->bpfi, 5.4152, 5e-5);
  EXPECT_NEAR(orders->bpfo, 3.5848, 5e-5);
  EXPECT_NEAR(orders->ftf, 0.39828, 0.39828 * 1e-4);
  EXPECT_NEAR(orders->two_bsf, 4.7135, 4.7135 * 1e-4);
  // README: at 1796 rpm (29.933 Hz), BPFO is 107.30 Hz.
  EXPECT_NEAR(orders->bpfo * 1796.0 / 60.0, 107.30, 5e-3);
}

TEST(BearingFrequenciesTest, ContactAngleLowersOuterAndRaisesInnerRace) {
  // With φ > 0 the ratio (d/D)cosφ shrinks, so FTF and BPFO rise and BPFI falls, and at
  // φ = 60° cosφ = 1/2 exactly: FTF = (1 − d/(2D))/2.
  auto zero = bearing_orders({9, 7.94, 39.04, 0.0});
  auto sixty = bearing_orders({9, 7.94, 39.04, 60.0});
  ASSERT_TRUE(zero.ok() && sixty.ok());
  EXPECT_NEAR(sixty->ftf, 0.5 * (1.0 - 7.94 / 39.04 / 2.0), 1e-12);
  EXPECT_GT(sixty->bpfo, zero->bpfo);
  EXPECT_LT(sixty->bpfi, zero->bpfi);
}

TEST(BearingFrequenciesTest, RejectsImpossibleGeometry) {
  auto r = bearing_orders({9, 40.0, 39.04, 0.0});
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("pitch_diameter"), std::string::npos) << r.error().message;
  EXPECT_FALSE(bearing_orders({0, 7.94, 39.04, 0.0}).ok());
  EXPECT_FALSE(bearing_orders({9, 7.94, 39.04, 90.0}).ok());
  EXPECT_FALSE(bearing_orders({9, -1.0, 39.04, 0.0}).ok());
}

}  // namespace
}  // namespace tonewarden::track
