// Hexagonal layout, user drops and the gain normalisation.
#include "fxmimo/golden/large_scale.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <cstdlib>
#include <vector>

#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

int hex_distance(std::pair<int, int> a, std::pair<int, int> b) {
  const int dq = a.first - b.first;
  const int dr = a.second - b.second;
  return (std::abs(dq) + std::abs(dr) + std::abs(dq + dr)) / 2;
}

// Layout: cells 1..6 are the first ring, 7..18 the second (hexagonal axial distance 1 and 2).
// Reuse colourings: no two neighbouring cells share a pilot group (the defining property of the
// classic 3- and 7-colourings of the hexagonal lattice); with reuse 7 the centre cluster of 7
// cells uses all 7 groups.
TEST(hex_layout, rings_and_reuse_colourings) {
  for (int i_cell = 0; i_cell < 19; ++i_cell) {
    const int ring = hex_distance(hex_cell_axial(i_cell), {0, 0});
    EXPECT_EQ(ring, i_cell == 0 ? 0 : (i_cell <= 6 ? 1 : 2)) << "cell " << i_cell;
  }
  for (int reuse : {3, 7}) {
    for (int a = 0; a < 19; ++a) {
      for (int b = a + 1; b < 19; ++b) {
        if (hex_distance(hex_cell_axial(a), hex_cell_axial(b)) == 1) {
          EXPECT_NE(hex_pilot_group(a, reuse), hex_pilot_group(b, reuse))
              << "reuse " << reuse << ", cells " << a << ", " << b;
        }
      }
    }
  }
  std::vector<bool> used(7, false);
  for (int i_cell = 0; i_cell < 7; ++i_cell) {
    used[static_cast<std::size_t>(hex_pilot_group(i_cell, 7))] = true;
  }
  for (bool u : used) {
    EXPECT_TRUE(u);
  }
  EXPECT_EQ(hex_pilot_group(0, 3), 0);
  EXPECT_EQ(hex_pilot_group(0, 7), 0);
}

// Drops without shadowing: beta = (d / R)^-alpha, so d = R beta^(-1/alpha).
// (a) Every user lies in its hexagon (d <= R to its own BS, so beta >= 1 = 0 dB at the radius,
//     the stated normalisation) and at least min_distance away (beta <= (d_min / R)^-alpha).
// (b) Uniform in the hexagon: E[d^2] = 5 R^2 / 12, the polar second moment of area of a regular
//     hexagon over its area (standard mechanics tables (from memory)); the excluded disc of radius
//     10 m changes it by less than 1e-5 relative. d^2 / R^2 lies in [0, 1], so its standard
//     deviation is below 0.5 and 5 standard errors are allowed.
// (c) Links to other base stations are weaker than to the own BS on average.
TEST(hex_layout, uniform_drops_and_gain_normalisation) {
  const scenario scen = test::make_scenario(R"(
[array]
antennas = 1
[cells]
count = 7
users_per_cell = 50
radius_m = 250
min_distance_m = 10
shadowing_db = 0
pathloss_exponent = 3.5
[pilots]
snr_db = 0
[precoder]
kind = "mf"
[data]
snr_db = 0
)");
  random_stream rng(12);
  const int num_drops = 40;
  double sum_d2 = 0.0;
  int count = 0;
  for (int i_drop = 0; i_drop < num_drops; ++i_drop) {
    const large_scale ls = draw_large_scale(scen, rng);
    for (int i_cell = 0; i_cell < 7; ++i_cell) {
      for (int i_user = 0; i_user < 50; ++i_user) {
        const double beta = ls.at(i_cell, i_cell, i_user);
        EXPECT_GE(beta, 1.0 - 1e-12);
        EXPECT_LE(beta, std::pow(10.0 / 250.0, -3.5) * (1.0 + 1e-12));
        const double d_over_r = std::pow(beta, -1.0 / 3.5);
        sum_d2 += d_over_r * d_over_r;
        ++count;
        for (int i_bs = 0; i_bs < 7; ++i_bs) {
          if (i_bs != i_cell) {
            // Any other BS is at least the inradius sqrt(3)/2 R away from the cell's edge region.
            EXPECT_LT(ls.at(i_bs, i_cell, i_user), std::pow(std::sqrt(3.0) / 2.0, -3.5) * (1.0 + 1e-12));
          }
        }
      }
    }
  }
  EXPECT_NEAR(sum_d2 / count, 5.0 / 12.0, 5.0 * 0.5 / std::sqrt(static_cast<double>(count))) << "seed 12";
}

// Fixed per-user gains: own-BS gain user_gains_db[k] in every cell, cross_gain_db elsewhere; with
// fixed gains the pilot group of cell l is l mod reuse.
TEST(large_scale, fixed_gains_are_copied) {
  const scenario scen = test::make_scenario(R"(
[array]
antennas = 2
[cells]
count = 3
users_per_cell = 2
user_gains_db = [0, -10]
cross_gain_db = -20
[pilots]
snr_db = 0
reuse = 3
[precoder]
kind = "mf"
[data]
snr_db = 0
)");
  random_stream rng(1);
  const large_scale ls = draw_large_scale(scen, rng);
  EXPECT_DOUBLE_EQ(ls.at(1, 1, 0), 1.0);
  EXPECT_DOUBLE_EQ(ls.at(2, 2, 1), 0.1);
  EXPECT_DOUBLE_EQ(ls.at(0, 2, 1), 0.01);
  EXPECT_EQ(scen.pilot_group(0), 0);
  EXPECT_EQ(scen.pilot_group(1), 1);
  EXPECT_EQ(scen.pilot_group(2), 2);
}

}  // namespace
}  // namespace fxmimo::golden
