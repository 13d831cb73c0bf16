// The truncated Neumann-series inverse against its analytical truncation error, evaluated in
// 50 digits (Boost.Multiprecision), and its convergence region for i.i.d. Rayleigh Gram matrices.
#include "fxmimo/golden/neumann.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <iostream>
#include <string>

#include "fxmimo/golden/rng.hpp"
#include "golden_test_support.hpp"
#include "multiprecision_support.hpp"

namespace fxmimo::golden {
namespace {

using test::mp_complex;
using test::mp_matrix;

Eigen::MatrixXcd rayleigh_gram(int num_ant, int num_users, std::uint64_t seed) {
  random_stream rng(seed);
  Eigen::MatrixXcd h(num_ant, num_users);
  for (int i_user = 0; i_user < num_users; ++i_user) {
    for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
      h(i_ant, i_user) = rng.complex_normal();
    }
  }
  const Eigen::MatrixXcd g = h.adjoint() * h;
  return (0.5 * (g + g.adjoint())).eval();
}

// Algebra of the series (exact, not an approximation): with E = I - D^-1 A,
// A^-1 = sum_{n>=0} E^n D^-1 when rho(E) < 1, so A^-1 - X_T = E^T A^-1; the identity
// (I - E^T) A^-1 = sum_{n<T} E^n D^-1 holds for every T even without convergence
// (telescoping: (I - E) sum_{n<T} E^n = I - E^T and (I - E) = D^-1 A).
// Reference: E, A^-1 and E^T A^-1 in 50 digits; the double series must equal A^-1 - E^T A^-1
// up to its own rounding, about T n eps ||sum of terms||, far below the 1e-9 asked for.
struct neumann_case {
  int num_ant;
  int num_users;
  std::uint64_t seed;
};

class neumann_truncation : public ::testing::TestWithParam<neumann_case> {};

TEST_P(neumann_truncation, equals_the_analytical_error) {
  const auto [num_ant, num_users, seed] = GetParam();
  const Eigen::MatrixXcd a = rayleigh_gram(num_ant, num_users, seed);
  const auto n = static_cast<std::size_t>(num_users);
  const mp_matrix a_mp = test::to_mp(a);
  const mp_matrix a_inv = test::mp_inverse(a_mp);
  mp_matrix e = test::mp_identity(n);
  for (std::size_t i = 0; i < n; ++i) {
    const mp_complex d_recip = mp_complex(1) / a_mp(i, i);
    for (std::size_t j = 0; j < n; ++j) {
      e(i, j) -= d_recip * a_mp(i, j);
    }
  }
  mp_matrix e_power = test::mp_identity(n);  // E^T
  for (int num_terms = 1; num_terms <= 8; ++num_terms) {
    e_power = test::mp_multiply(e_power, e);
    const mp_matrix tail = test::mp_multiply(e_power, a_inv);  // analytical error E^T A^-1
    mp_matrix expected = a_inv;
    for (std::size_t k = 0; k < expected.v.size(); ++k) {
      expected.v[k] -= tail.v[k];
    }
    const Eigen::MatrixXcd x = neumann_inverse(a, num_terms);
    // Measured error A^-1 - X_T versus the analytical E^T A^-1, relative to ||A^-1||.
    const double mismatch = test::relative_error(x, expected) * test::mp_norm(expected) / test::mp_norm(a_inv);
    EXPECT_LT(mismatch, 1e-9) << num_ant << "x" << num_users << ", T = " << num_terms << ", seed " << seed;
    if (num_users > 1 && num_terms < 4) {
      // The truncation error is real (above the tolerance), so the check above is not vacuous.
      // (K = 1: E = 0 and one term is exact; the mismatch check then tests exactly that.)
      EXPECT_GT(test::mp_norm(tail) / test::mp_norm(a_inv), 1e-8);
    }
  }
}

INSTANTIATE_TEST_SUITE_P(boost_multiprecision_50_digits, neumann_truncation,
                         ::testing::Values(neumann_case{128, 8, 11}, neumann_case{128, 16, 12},
                                           neumann_case{64, 16, 13}, neumann_case{64, 32, 14}, neumann_case{8, 1, 15}));

// Spectral radius: the Hermitian shortcut used by the kernel must agree with the eigenvalues of
// the non-Hermitian I - D^-1 A computed directly (Eigen's complex QR eigen-solver).
TEST(neumann, spectral_radius_matches_direct_eigenvalues) {
  for (std::uint64_t seed = 21; seed < 26; ++seed) {
    const Eigen::MatrixXcd a = rayleigh_gram(48, 12, seed);
    const Eigen::VectorXd d_recip = a.diagonal().real().cwiseInverse();
    const Eigen::MatrixXcd e = Eigen::MatrixXcd::Identity(12, 12) - d_recip.asDiagonal() * a;
    const Eigen::ComplexEigenSolver<Eigen::MatrixXcd> direct(e, false);
    EXPECT_NEAR(neumann_spectral_radius(a), direct.eigenvalues().cwiseAbs().maxCoeff(), 1e-12) << "seed " << seed;
  }
}

// Convergence region for i.i.d. Rayleigh: the spectral radius of I - D^-1 G tends to
// 2 sqrt(K/M) + K/M (from the Marchenko–Pastur edges (1 +- sqrt(K/M))^2 of G/M; attributed to
// Zhu, Li & Liang, ICC 2015 (from memory)), so the series converges for M/K > (1 + sqrt 2)^2 = 5.83.
// With few users the extreme eigenvalues stay well inside the edges (a Monte Carlo run on this kind of
// machine when the test was written: 64 x 16 converges in about 2/3 of realisations although its
// limit is 1.25), so the limit itself is checked at
// 2048 x 128, where the Tracy–Widom edge spread of G/M is about 0.013 and the diagonal
// normalisation adds O(1/sqrt(M)): we allow 10 % below the limit and 2 % above.
// The convergence decision is checked far from the boundary: M/K = 16 always, M/K = 2 never.
TEST(neumann, convergence_region_of_rayleigh_gram_matrices) {
  struct region {
    int num_ant;
    int num_users;
    bool always;
    bool never;
  };
  for (const region r : {region{128, 8, true, false}, region{256, 16, true, false}, region{64, 32, false, true},
                         region{128, 64, false, true}, region{2048, 128, false, false}}) {
    const double load = static_cast<double>(r.num_users) / r.num_ant;
    const double limit = 2.0 * std::sqrt(load) + load;
    double sum = 0.0;
    int num_converged = 0;
    const int num_trials = r.num_ant > 1000 ? 6 : 40;
    for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
      const Eigen::MatrixXcd g = rayleigh_gram(r.num_ant, r.num_users, 1000 + static_cast<std::uint64_t>(i_trial));
      sum += neumann_spectral_radius(g);
      num_converged += neumann_converges(g) ? 1 : 0;
    }
    std::cout << r.num_ant << "x" << r.num_users << ": mean radius " << sum / num_trials << ", limit " << limit << "\n";
    if (!r.always && !r.never) {
      EXPECT_GT(sum / num_trials, 0.90 * limit) << r.num_ant << "x" << r.num_users << ", seeds from 1000";
      EXPECT_LT(sum / num_trials, 1.02 * limit) << r.num_ant << "x" << r.num_users << ", seeds from 1000";
    }
    if (r.always) {
      EXPECT_EQ(num_converged, num_trials) << r.num_ant << "x" << r.num_users;
    }
    if (r.never) {
      EXPECT_EQ(num_converged, 0) << r.num_ant << "x" << r.num_users;
    }
  }
}

TEST(neumann, one_term_is_the_diagonal_inverse) {
  const Eigen::MatrixXcd a = rayleigh_gram(16, 4, 3);
  const Eigen::MatrixXcd x = neumann_inverse(a, 1);
  for (int i = 0; i < 4; ++i) {
    for (int j = 0; j < 4; ++j) {
      EXPECT_EQ(x(i, j), i == j ? std::complex<double>(1.0 / a(i, i).real(), 0.0) : std::complex<double>(0.0, 0.0));
    }
  }
}

}  // namespace
}  // namespace fxmimo::golden
