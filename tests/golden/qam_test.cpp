// Gray-mapped square QAM: unit mean power, Gray property, decision round trip.
#include "fxmimo/golden/qam.hpp"

#include <gtest/gtest.h>

#include <bit>
#include <cmath>

namespace fxmimo::golden {
namespace {

class qam_orders : public ::testing::TestWithParam<modulation> {};

// Square Q-QAM with levels +-1, +-3, ... has mean energy 2 (Q - 1) / 3 (Proakis, Digital
// Communications, 4th ed., Sec. 5.2 (from memory)); after scaling, the mean over all equally
// likely points must be 1 up to rounding (Q terms, each exact to eps).
TEST_P(qam_orders, unit_mean_power) {
  const Eigen::VectorXcd points = qam_constellation(GetParam());
  ASSERT_EQ(points.size(), 1 << bits_per_symbol(GetParam()));
  EXPECT_NEAR(points.squaredNorm() / static_cast<double>(points.size()), 1.0, 1e-14);
  // Zero mean (symmetric grid): the sum of Q rounded points is within Q eps of 0.
  EXPECT_NEAR(std::abs(points.mean()), 0.0, 1e-13);
}

// Gray property (Gray, US patent 2,632,058, 1953, applied per axis): every pair of nearest
// neighbours (distance = minimum distance, horizontal or vertical) differs in exactly one bit, and
// every point has 2 to 4 such neighbours.
TEST_P(qam_orders, nearest_neighbours_differ_in_one_bit) {
  const modulation mod = GetParam();
  const Eigen::VectorXcd points = qam_constellation(mod);
  const auto n = static_cast<std::uint32_t>(points.size());
  double d_min = 1e300;
  for (std::uint32_t a = 0; a < n; ++a) {
    for (std::uint32_t b = a + 1; b < n; ++b) {
      d_min = std::min(d_min, std::abs(points(a) - points(b)));
    }
  }
  const double num_points = static_cast<double>(n);
  EXPECT_NEAR(d_min, 2.0 * std::sqrt(3.0 / (2.0 * (num_points - 1.0))), 1e-14);
  for (std::uint32_t a = 0; a < n; ++a) {
    int num_neighbours = 0;
    for (std::uint32_t b = 0; b < n; ++b) {
      if (b != a && std::abs(points(a) - points(b)) < 1.001 * d_min) {
        ++num_neighbours;
        EXPECT_EQ(std::popcount(a ^ b), 1) << "labels " << a << " and " << b;
      }
    }
    EXPECT_GE(num_neighbours, 2);
    EXPECT_LE(num_neighbours, 4);
  }
}

TEST_P(qam_orders, hard_decision_round_trip) {
  const modulation mod = GetParam();
  const Eigen::VectorXcd points = qam_constellation(mod);
  const double half_spacing = std::sqrt(3.0 / (2.0 * (static_cast<double>(points.size()) - 1.0)));
  for (Eigen::Index label = 0; label < points.size(); ++label) {
    const auto expected = static_cast<std::uint32_t>(label);
    EXPECT_EQ(qam_demap(mod, points(label)), expected);
    // Just inside the decision region in every direction.
    EXPECT_EQ(qam_demap(mod, points(label) + std::complex<double>(0.99 * half_spacing, -0.99 * half_spacing)),
              expected);
    EXPECT_EQ(qam_demap(mod, points(label) - std::complex<double>(0.99 * half_spacing, -0.99 * half_spacing)),
              expected);
  }
}

INSTANTIATE_TEST_SUITE_P(every_order, qam_orders,
                         ::testing::Values(modulation::qpsk, modulation::qam16, modulation::qam64, modulation::qam256,
                                           modulation::qam1024),
                         [](const ::testing::TestParamInfo<modulation>& param_info) {
                           return std::string("m") + std::string(modulation_name(param_info.param));
                         });

TEST(qam, qpsk_points) {
  // QPSK: (+-1 +- j) / sqrt 2, label bit 1 (MSB) selects the in-phase sign.
  const double h = 1.0 / std::sqrt(2.0);
  EXPECT_NEAR(std::abs(qam_map(modulation::qpsk, 0) - std::complex<double>(-h, -h)), 0.0, 1e-15);
  EXPECT_NEAR(std::abs(qam_map(modulation::qpsk, 2) - std::complex<double>(h, -h)), 0.0, 1e-15);
  EXPECT_NEAR(std::abs(qam_map(modulation::qpsk, 3) - std::complex<double>(h, h)), 0.0, 1e-15);
}

}  // namespace
}  // namespace fxmimo::golden
