// The Cholesky and Gauss-Seidel inverses against 50-digit Boost.Multiprecision evaluations on the
// matrices of the LDL^H check (gram_cases.hpp), and the Gauss-Seidel iteration's convergence.
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <iostream>
#include <limits>
#include <string>
#include <vector>

#include "fxmimo/golden/cholesky.hpp"
#include "fxmimo/golden/gauss_seidel.hpp"
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/trial.hpp"
#include "golden_test_support.hpp"
#include "gram_cases.hpp"
#include "multiprecision_support.hpp"

namespace fxmimo::golden {
namespace {

using test::gram_case;
using test::mp_complex;
using test::mp_matrix;
using test::mp_real;

constexpr double eps = std::numeric_limits<double>::epsilon();

class cholesky_against_multiprecision : public ::testing::TestWithParam<gram_case> {};

TEST_P(cholesky_against_multiprecision, inverse_and_factor) {
  const gram_case& c = GetParam();
  const Eigen::MatrixXcd a = test::rayleigh_gram(c.num_ant, c.num_users, c.loading, c.seed);
  const cholesky_factors f = cholesky_decompose(a);
  const Eigen::MatrixXcd inv = cholesky_inverse(f);

  // Reference: the exact inverse of the same double matrix, in 50 digits (Gauss-Jordan).
  const double err = test::relative_error(inv, test::mp_inverse(test::to_mp(a)));
  // Derived bound: Cholesky is backward stable for positive definite matrices (Higham, Accuracy
  // and Stability of Numerical Algorithms, 2nd ed., Thm 10.3, from memory); the two triangular
  // solves add O(n eps) each, so the inverse's forward error is a small multiple of n cond eps:
  // we allow 8 n cond eps, as for LDL^H.
  const double cond = test::condition_number(a);
  EXPECT_LT(err, 8.0 * c.num_users * cond * eps) << c.name << ": cond " << cond;
  if (c.num_ant >= 2 * c.num_users) {
    EXPECT_LT(err, 1e-12) << c.name;  // cond < 40 here
  }

  // Factor: L L^H rebuilt in 50 digits must reproduce A, ||L L^H - A|| <= c n eps ||A|| (Higham,
  // same theorem); the reciprocal roots are 1/l_jj to a few eps; L is lower triangular.
  const auto n = static_cast<std::size_t>(c.num_users);
  mp_matrix rebuilt(n);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) {
      mp_complex sum(0);
      for (std::size_t k = 0; k <= std::min(i, j); ++k) {
        const auto lik = f.lower(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(k));
        const auto ljk = f.lower(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(k));
        sum += mp_complex(lik.real(), lik.imag()) * mp_complex(ljk.real(), -ljk.imag());
      }
      rebuilt(i, j) = sum;
    }
  }
  EXPECT_LT(test::relative_error(a, rebuilt), 8.0 * c.num_users * eps) << c.name;
  for (Eigen::Index j = 0; j < a.rows(); ++j) {
    EXPECT_EQ(f.lower(j, j).imag(), 0.0);
    EXPECT_NEAR(f.lower(j, j).real() * f.diag_rsqrt(j), 1.0, 4 * eps) << c.name << " j " << j;
    for (Eigen::Index i = 0; i < j; ++i) EXPECT_EQ(f.lower(i, j), std::complex<double>(0.0, 0.0));
  }
  // The forward solves alone are L^-1: L (L^-1) = I within the solve's error n cond(L) eps,
  // cond(L) = sqrt(cond(A)).
  const Eigen::MatrixXcd y = cholesky_forward(f);
  const Eigen::MatrixXcd identity = Eigen::MatrixXcd::Identity(a.rows(), a.cols());
  EXPECT_LT((f.lower * y - identity).norm(), 8.0 * c.num_users * std::sqrt(cond) * eps * std::sqrt(c.num_users))
      << c.name;
}

INSTANTIATE_TEST_SUITE_P(boost_multiprecision_50_digits, cholesky_against_multiprecision,
                         ::testing::ValuesIn(test::gram_cases()),
                         [](const ::testing::TestParamInfo<gram_case>& param_info) { return param_info.param.name; });

TEST(cholesky, hand_computed_two_by_two) {
  // G = [[4, 2 - 2i], [2 + 2i, 6]]: l_00 = 2, l_10 = (2 + 2i) / 2 = 1 + i, r_1 = 6 - |1 + i|^2 = 4,
  // l_11 = 2; G^-1 = [[6, -(2 - 2i)], [-(2 + 2i), 4]] / det, det = 24 - 8 = 16. Every value is a
  // short binary fraction, so double computes it exactly.
  Eigen::MatrixXcd a(2, 2);
  a << 4.0, std::complex<double>(2, -2), std::complex<double>(2, 2), 6.0;
  const cholesky_factors f = cholesky_decompose(a);
  EXPECT_EQ(f.lower(0, 0), 2.0);
  EXPECT_EQ(f.lower(1, 0), std::complex<double>(1, 1));
  EXPECT_EQ(f.lower(1, 1), 2.0);
  EXPECT_EQ(f.diag_rsqrt(1), 0.5);
  const Eigen::MatrixXcd inv = cholesky_inverse(f);
  EXPECT_EQ(inv(0, 0), 6.0 / 16);
  EXPECT_EQ(inv(1, 0), std::complex<double>(-2, -2) / 16.0);
  EXPECT_EQ(inv(0, 1), std::complex<double>(-2, 2) / 16.0);
  EXPECT_EQ(inv(1, 1), 4.0 / 16);
}

TEST(cholesky, singular_input_gives_non_finite_values_not_an_exception) {
  const Eigen::MatrixXcd a = Eigen::MatrixXcd::Ones(3, 3);  // rank 1: r_1 = r_2 = 0
  EXPECT_FALSE(cholesky_inverse(cholesky_decompose(a)).allFinite());
}

// --- Gauss-Seidel

/// The sweeps in 50 digits, in the update order gauss_seidel.hpp defines.
std::vector<mp_matrix> mp_gauss_seidel(const mp_matrix& a, int num_sweeps) {
  const std::size_t n = a.n;
  mp_matrix x(n);
  for (std::size_t i = 0; i < n; ++i) x(i, i) = mp_complex(1) / a(i, i);
  std::vector<mp_matrix> out;
  for (int s = 0; s < num_sweeps; ++s) {
    for (std::size_t c = 0; c < n; ++c) {
      for (std::size_t i = 0; i < n; ++i) {
        mp_complex v = i == c ? mp_complex(1) : mp_complex(0);
        for (std::size_t j = 0; j < n; ++j)
          if (j != i) v -= a(i, j) * x(j, c);
        x(i, c) = v / a(i, i);
      }
    }
    out.push_back(x);
  }
  return out;
}

/// trace(E^H A E) for E = X - A^-1: the squared A-norm error of X's columns, summed.
mp_real energy_error(const mp_matrix& a, const mp_matrix& x, const mp_matrix& a_inv) {
  const std::size_t n = a.n;
  mp_matrix e(n);
  for (std::size_t i = 0; i < n * n; ++i) e.v[i] = x.v[i] - a_inv.v[i];
  const mp_matrix ae = test::mp_multiply(a, e);
  mp_real sum = 0;
  for (std::size_t i = 0; i < n; ++i)
    for (std::size_t c = 0; c < n; ++c) sum += real(conj(e(i, c)) * ae(i, c));
  return sum;
}

class gauss_seidel_against_multiprecision : public ::testing::TestWithParam<gram_case> {};

TEST_P(gauss_seidel_against_multiprecision, sweeps_and_their_energy_error) {
  const gram_case& c = GetParam();
  const Eigen::MatrixXcd a = test::rayleigh_gram(c.num_ant, c.num_users, c.loading, c.seed);
  const mp_matrix a_mp = test::to_mp(a);
  const mp_matrix a_inv = test::mp_inverse(a_mp);
  constexpr int num_sweeps = 4;
  const std::vector<Eigen::MatrixXcd> x = gauss_seidel_sweeps(a, num_sweeps);
  const std::vector<mp_matrix> ref = mp_gauss_seidel(a_mp, num_sweeps);
  ASSERT_EQ(x.size(), static_cast<std::size_t>(num_sweeps));
  const double cond = test::condition_number(a);
  // The double sweeps against the same sweeps in 50 digits: each sweep's rounding is a backward
  // error of n eps in each row's update, and the iteration carries earlier errors on through
  // its matrix, whose powers are bounded by sqrt(cond) in the 2-norm (they contract in the
  // A-norm, below); with the error relative to X_s that is below s n cond eps: we allow 8 s n cond eps.
  for (int s = 0; s < num_sweeps; ++s) {
    const double err = test::relative_error(x[static_cast<std::size_t>(s)], ref[static_cast<std::size_t>(s)]);
    EXPECT_LT(err, 8.0 * (s + 1) * c.num_users * cond * eps) << c.name << " sweep " << s + 1;
  }
  EXPECT_EQ(gauss_seidel_inverse(a, num_sweeps), x.back());
  // Theorem: Gauss-Seidel converges for every Hermitian positive definite A (Golub & Van Loan,
  // Matrix Computations, 4th ed., Thm 11.2.3, from memory); each row update minimises the A-norm
  // error along one coordinate, so the A-norm error of every column falls at every sweep (Saad,
  // Iterative Methods for Sparse Linear Systems, 2nd ed., Sec. 5.2, from memory), strictly unless
  // it is 0. Checked in 50 digits from X_0 = D^-1.
  mp_matrix x0(a_mp.n);
  for (std::size_t i = 0; i < a_mp.n; ++i) x0(i, i) = mp_complex(1) / a_mp(i, i);
  mp_real previous = energy_error(a_mp, x0, a_inv);
  for (int s = 0; s < num_sweeps; ++s) {
    const mp_real now = energy_error(a_mp, ref[static_cast<std::size_t>(s)], a_inv);
    if (c.num_users > 1) {
      EXPECT_LT(now, previous) << c.name << " sweep " << s + 1;
    } else {
      EXPECT_LT(now, mp_real(1e-40)) << c.name;  // K = 1: D^-1 is the inverse
    }
    previous = now;
  }
}

INSTANTIATE_TEST_SUITE_P(boost_multiprecision_50_digits, gauss_seidel_against_multiprecision,
                         ::testing::ValuesIn(test::gram_cases()),
                         [](const ::testing::TestParamInfo<gram_case>& param_info) { return param_info.param.name; });

TEST(gauss_seidel, hand_computed_first_sweep) {
  // G = [[4, 2 - 2i], [2 + 2i, 8]], X_0 = diag(1/4, 1/8). Sweep 1, column 0:
  //   x_00 = (1 - g_01 x_10) / 4 = (1 - 0) / 4 = 1/4 (x_10 of X_0 is 0),
  //   x_10 = (0 - g_10 x_00) / 8 = -(2 + 2i) / 32 = -(1 + i) / 16;
  // column 1: x_01 = (0 - g_01 x_11) / 4 = -(2 - 2i) / 32 = -(1 - i) / 16 (x_11 = 1/8 of X_0),
  //   x_11 = (1 - g_10 x_01) / 8 = (1 + (2 + 2i)(1 - i) / 16) / 8 = (1 + 4/16) / 8 = 5/32.
  Eigen::MatrixXcd a(2, 2);
  a << 4.0, std::complex<double>(2, -2), std::complex<double>(2, 2), 8.0;
  const Eigen::MatrixXcd x = gauss_seidel_inverse(a, 1);
  EXPECT_EQ(x(0, 0), 0.25);
  EXPECT_EQ(x(1, 0), std::complex<double>(-1, -1) / 16.0);
  EXPECT_EQ(x(0, 1), std::complex<double>(-1, 1) / 16.0);
  EXPECT_EQ(x(1, 1), 5.0 / 32);
}

/// Median of the residual ||I - G X_S||_F / sqrt(K) over `num_draws` Rayleigh Gram matrices.
double median_residual(int num_ant, int num_users, int num_sweeps, int num_draws) {
  std::vector<double> r;
  for (int t = 0; t < num_draws; ++t) {
    const Eigen::MatrixXcd a = test::rayleigh_gram(num_ant, num_users, 0.0, 1000 + static_cast<std::uint64_t>(t));
    r.push_back(inverse_residual(a, gauss_seidel_inverse(a, num_sweeps)));
  }
  std::sort(r.begin(), r.end());
  return r[r.size() / 2];
}

// K = 16 users, M/K = 2, 4, 8, S = 1..4 sweeps, 21 draws each. The table is printed; the checks
// are the theorem's consequences: the residual falls with S at every M/K, and falls faster with
// more antennas per user (the Jacobi iteration matrix's spectral radius tends to 2 sqrt(K/M) + K/M,
// the Marchenko-Pastur edge, README "Downlink precoding"; Gauss-Seidel's is smaller still).
TEST(gauss_seidel, residual_falls_with_sweeps_and_antennas_per_user) {
  constexpr int num_users = 16, num_draws = 21;
  double table[3][5] = {};
  const int ratios[3] = {2, 4, 8};
  for (int r = 0; r < 3; ++r) {
    std::cout << "M/K = " << ratios[r] << ": median residual";
    for (int s = 1; s <= 4; ++s) {
      table[r][s] = median_residual(ratios[r] * num_users, num_users, s, num_draws);
      std::cout << "  S=" << s << " " << table[r][s];
    }
    std::cout << "\n";
  }
  for (int r = 0; r < 3; ++r) {
    for (int s = 2; s <= 4; ++s) EXPECT_LT(table[r][s], table[r][s - 1]) << "M/K " << ratios[r] << " S " << s;
    if (r > 0) {
      for (int s = 1; s <= 4; ++s) EXPECT_LT(table[r][s], table[r - 1][s]) << "M/K " << ratios[r] << " S " << s;
    }
  }
  // The warning's two sides (gauss_seidel_residual_limit): M/K = 2 after one sweep is far from
  // the inverse, M/K = 8 after four sweeps within the limit.
  EXPECT_GT(table[0][1], gauss_seidel_residual_limit);
  EXPECT_LT(table[2][4], gauss_seidel_residual_limit);
}

TEST(gauss_seidel, converges_to_the_inverse_on_a_well_conditioned_gram) {
  // M/K = 8: the sweeps approach the 50-digit inverse geometrically; after 30 sweeps the iterate
  // is the inverse to double precision (relative error below 1e-12, the LDL^H check's bound).
  const Eigen::MatrixXcd a = test::rayleigh_gram(128, 16, 0.0, 5);
  const mp_matrix a_inv = test::mp_inverse(test::to_mp(a));
  double previous = 1.0;
  for (int s : {1, 2, 4, 8, 16}) {
    const double err = test::relative_error(gauss_seidel_inverse(a, s), a_inv);
    EXPECT_LT(err, previous) << "S " << s;
    previous = err;
  }
  EXPECT_LT(test::relative_error(gauss_seidel_inverse(a, 30), a_inv), 1e-12);
  // Strict diagonal dominance is sufficient for convergence, not necessary: a Rayleigh Gram at
  // M/K = 2 is not diagonally dominant (|g_ij| ~ sqrt(M) for each of K - 1 entries against
  // g_ii ~ M), yet the sweeps converge (slowly).
  const Eigen::MatrixXcd b = test::rayleigh_gram(32, 16, 0.0, 5);
  EXPECT_FALSE(strictly_diagonally_dominant(b));
  EXPECT_LT(test::relative_error(gauss_seidel_inverse(b, 400), test::mp_inverse(test::to_mp(b))), 1e-9);
  Eigen::MatrixXcd dominant = Eigen::MatrixXcd::Identity(3, 3) * 4.0;
  dominant(1, 0) = dominant(0, 1) = 1.0;
  EXPECT_TRUE(strictly_diagonally_dominant(dominant));
}

TEST(gauss_seidel, golden_trial_reports_the_residual) {
  // A scenario of our own: 32 antennas, 16 users, one sweep: the trial's residual is the
  // inverse's, above the limit; with inversion = "ldl" it is 0.
  const std::string text = R"(
name = "gs-residual"
seed = 3
[array]
antennas = 32
[cells]
count = 1
users_per_cell = 16
[pilots]
snr_db = 20.0
[estimator]
kind = "perfect"
[precoder]
kind = "zf"
inversion = "gauss_seidel"
sweeps = 1
[data]
symbols = 8
snr_db = 10.0
)";
  const scenario scen = test::make_scenario(text);
  EXPECT_EQ(scen.precoder.gauss_seidel_sweeps, 1);
  const trial_data td = run_trial(scen, 0);
  EXPECT_DOUBLE_EQ(td.gauss_seidel_residual, inverse_residual(td.gram, td.inverse));
  EXPECT_GT(td.gauss_seidel_residual, gauss_seidel_residual_limit);
  EXPECT_EQ(td.inverse, gauss_seidel_inverse(td.gram, 1));
}

}  // namespace
}  // namespace fxmimo::golden
