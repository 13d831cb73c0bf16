// Small-scale fading statistics: Marchenko–Pastur behaviour of the Gram node, the exponential
// correlation model and the Rician line-of-sight component.
#include "fxmimo/golden/channel.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <numbers>
#include <string>
#include <vector>

#include "fxmimo/golden/trial.hpp"
#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

using test::make_scenario;
using test::mean_se;

// ---------------------------------------------------------------------------------------------
// Gram node G = H^H H of i.i.d. CN(0,1) channels (perfect CSI, M = 256, K = 64, beta = 1).
// Marchenko & Pastur (1967): the eigenvalues of G lie near [M (1 - sqrt(K/M))^2, M (1 + sqrt(K/M))^2]
// = [(sqrt M - sqrt K)^2, (sqrt M + sqrt K)^2] = [64, 576]. Finite size: the extreme eigenvalues
// fluctuate on the Tracy–Widom scale (Johansson 2000; Johnstone 2001 (from memory))
// sigma+ = (sqrt M + sqrt K)(1/sqrt M + 1/sqrt K)^(1/3) = 13.7 and
// sigma- = (sqrt M - sqrt K)(1/sqrt K - 1/sqrt M)^(1/3) = 3.2; the TW2 law puts less than 1e-6
// of its mass beyond 5 sigma, so every eigenvalue of every trial must lie within the edges +- 5 sigma,
// and the mean extreme eigenvalues lie inside the support within 3 sigma of their edge.
// Exact moments of the complex Wishart matrix (Tulino & Verdú 2004, Sec. 2.2 (from memory)):
// E tr(G) / K = M and E tr(G^2) / K = M (M + K).
TEST(gram_eigenvalues, marchenko_pastur_support_and_moments) {
  const int num_ant = 256;
  const int num_users = 64;
  const std::uint64_t seed = 1967;
  const scenario scen =
      make_scenario(fmt::format(R"(seed = {}
[array]
antennas = {}
[cells]
users_per_cell = {}
user_gains_db = [{}]
[pilots]
snr_db = 0
[estimator]
kind = "perfect"
[precoder]
kind = "zf"
inversion = "reference"
[data]
symbols = 1
snr_db = 10
)",
                                seed, num_ant, num_users, fmt::join(std::vector<int>(num_users, 0), ", ")));
  const double sm = std::sqrt(static_cast<double>(num_ant));
  const double sk = std::sqrt(static_cast<double>(num_users));
  const double upper = (sm + sk) * (sm + sk);
  const double lower = (sm - sk) * (sm - sk);
  const double sigma_upper = (sm + sk) * std::cbrt(1.0 / sm + 1.0 / sk);
  const double sigma_lower = (sm - sk) * std::cbrt(1.0 / sk - 1.0 / sm);

  const int num_trials = 60;
  std::vector<double> first_moment;
  std::vector<double> second_moment;
  std::vector<double> largest;
  std::vector<double> smallest;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(i_trial));
    const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXcd> solver(td.gram, Eigen::EigenvaluesOnly);
    const Eigen::VectorXd& lambda = solver.eigenvalues();
    first_moment.push_back(lambda.mean());
    second_moment.push_back(lambda.squaredNorm() / num_users);
    largest.push_back(lambda.maxCoeff());
    smallest.push_back(lambda.minCoeff());
    EXPECT_LT(lambda.maxCoeff(), upper + 5.0 * sigma_upper) << "trial " << i_trial << ", seed " << seed;
    EXPECT_GT(lambda.minCoeff(), lower - 5.0 * sigma_lower) << "trial " << i_trial << ", seed " << seed;
  }
  const mean_se m1 = test::sample_mean(first_moment);
  const mean_se m2 = test::sample_mean(second_moment);
  EXPECT_NEAR(m1.mean, num_ant, 4.0 * m1.se);
  EXPECT_NEAR(m2.mean, static_cast<double>(num_ant) * (num_ant + num_users), 4.0 * m2.se);
  const double mean_largest = test::sample_mean(largest).mean;
  const double mean_smallest = test::sample_mean(smallest).mean;
  EXPECT_LT(mean_largest, upper);
  EXPECT_GT(mean_largest, upper - 3.0 * sigma_upper);
  EXPECT_GT(mean_smallest, lower);
  EXPECT_LT(mean_smallest, lower + 3.0 * sigma_lower);
}

// ---------------------------------------------------------------------------------------------
// Exponential correlation (Loyka, IEEE Commun. Lett. 5(9), 2001): E[h_m conj(h_n)] = beta r^|m-n|.
// Sample covariance over many independent draws; each product h_m conj(h_n) has variance
// beta^2 (1 + r^(2|m-n|)) - |beta r^|m-n||^2 <= beta^2, so with N draws the standard error is at most
// beta / sqrt(N); 5 standard errors are allowed per entry.
TEST(channel, exponential_correlation_model) {
  scenario scen = make_scenario(R"(
[array]
antennas = 12
layout = "upa"
columns = 4
[cells]
users_per_cell = 1
user_gains_db = [3]
[channel]
model = "correlated"
correlation = 0.7
[pilots]
snr_db = 0
[data]
snr_db = 0
)");
  large_scale gains;
  gains.num_cells = 1;
  gains.num_users = 1;
  gains.gain = {2.0};
  gains.azimuth = {0.0};
  gains.elevation = {0.0};
  const double r = 0.7;
  const std::uint64_t seed = 2001;
  random_stream rng(seed);
  const int num_draws = 20000;
  for (const array_layout layout : {array_layout::ula, array_layout::upa}) {
    scen.array.layout = layout;
    scen.array.num_columns = layout == array_layout::upa ? 4 : 12;
    Eigen::MatrixXcd cov = Eigen::MatrixXcd::Zero(12, 12);
    for (int i_draw = 0; i_draw < num_draws; ++i_draw) {
      const Eigen::VectorXcd h = draw_channel(scen, gains, 0, 0, rng).col(0);
      cov += h * h.adjoint();
    }
    cov /= num_draws;
    const double tol = 5.0 * 2.0 / std::sqrt(static_cast<double>(num_draws));
    for (int m = 0; m < 12; ++m) {
      for (int n = 0; n < 12; ++n) {
        double expected = 0.0;
        if (layout == array_layout::ula) {
          expected = 2.0 * std::pow(r, std::abs(m - n));
        } else {
          // Separable (Kronecker) model along rows and columns of the 3 x 4 array.
          expected = 2.0 * std::pow(r, std::abs(m / 4 - n / 4) + std::abs(m % 4 - n % 4));
        }
        EXPECT_NEAR(cov(m, n).real(), expected, tol) << "m " << m << ", n " << n << ", seed " << seed;
        EXPECT_NEAR(cov(m, n).imag(), 0.0, tol) << "m " << m << ", n " << n << ", seed " << seed;
      }
    }
  }
}

// Rician fading: h = sqrt(beta) (sqrt(kappa/(kappa+1)) e^{j phi} a + sqrt(1/(kappa+1)) z) (e.g. Tse &
// Viswanath, Fundamentals of Wireless Communication, 2005, Sec. 2.4 (from memory)), a the far-field
// steering vector. Then E|h_m|^2 = beta and E|a^H h|^2 = beta (kappa M^2 + M) / (kappa + 1).
// Per-draw |a^H h|^2 / M^2 lies within [0, 4 beta]; with the variance estimated from the draws,
// 5 standard errors are allowed.
TEST(channel, rician_line_of_sight_power) {
  scenario scen = make_scenario(R"(
[array]
antennas = 32
spacing = 0.5
[cells]
users_per_cell = 1
user_gains_db = [0]
[channel]
model = "rician"
k_factor_db = 5
[pilots]
snr_db = 0
[data]
snr_db = 0
)");
  const double kappa = std::pow(10.0, 0.5);
  large_scale gains;
  gains.num_cells = 1;
  gains.num_users = 1;
  gains.gain = {1.0};
  gains.azimuth = {0.4};
  gains.elevation = {0.0};
  const Eigen::VectorXcd a = array_response(scen.array, 0.4, 0.0);
  // Steering vector of a ULA: a_m = exp(j 2 pi d m sin theta).
  EXPECT_NEAR(std::arg(a(1) * std::conj(a(0))),
              std::remainder(std::numbers::pi * std::sin(0.4), 2.0 * std::numbers::pi), 1e-12);
  random_stream rng(77);
  const int num_draws = 4000;
  std::vector<double> projection;
  std::vector<double> element_power;
  for (int i_draw = 0; i_draw < num_draws; ++i_draw) {
    const Eigen::VectorXcd h = draw_channel(scen, gains, 0, 0, rng).col(0);
    projection.push_back(std::norm(a.dot(h)) / (32.0 * 32.0));
    element_power.push_back(h.squaredNorm() / 32.0);
  }
  const mean_se p = test::sample_mean(projection);
  const mean_se e = test::sample_mean(element_power);
  EXPECT_NEAR(p.mean, (kappa * 32.0 * 32.0 + 32.0) / (kappa + 1.0) / (32.0 * 32.0), 5.0 * p.se) << "seed 77";
  EXPECT_NEAR(e.mean, 1.0, 5.0 * e.se) << "seed 77";
}

}  // namespace
}  // namespace fxmimo::golden
