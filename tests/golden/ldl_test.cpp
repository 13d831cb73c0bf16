// The LDL^H kernel against a 50-digit Boost.Multiprecision evaluation on the same matrices.
#include "fxmimo/golden/ldl.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <string>

#include "gram_cases.hpp"
#include "multiprecision_support.hpp"

namespace fxmimo::golden {
namespace {

using test::mp_complex;
using test::mp_matrix;

using test::condition_number;
using test::gram_case;
using test::rayleigh_gram;

class ldl_against_multiprecision : public ::testing::TestWithParam<gram_case> {};

TEST_P(ldl_against_multiprecision, inverse_and_factors) {
  const gram_case& c = GetParam();
  const Eigen::MatrixXcd a = rayleigh_gram(c.num_ant, c.num_users, c.loading, c.seed);
  const ldl_factors f = ldl_decompose(a);
  const Eigen::MatrixXcd inv = ldl_inverse(f);

  // Reference: the exact inverse of the same double matrix, in 50 digits.
  const mp_matrix reference = test::mp_inverse(test::to_mp(a));
  const double err = test::relative_error(inv, reference);
  // Derived bound: LDL^H without pivoting on a positive definite matrix is backward stable
  // (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., Thm 10.3 for Cholesky (from
  // memory)); the triangular solves add O(n eps) each, so the forward error of the inverse is at most
  // a small multiple of n cond(A) eps. We allow 8 n cond eps.
  const double eps = std::numeric_limits<double>::epsilon();
  const double cond = condition_number(a);
  const double bound = 8.0 * c.num_users * cond * eps;
  EXPECT_LT(err, bound) << c.name << ": cond " << cond << ", seed " << c.seed;
  if (c.num_ant >= 2 * c.num_users) {
    // Well-conditioned Rayleigh Gram matrices (cond < 40 for M >= 2K): the 1e-12.
    EXPECT_LT(err, 1e-12) << c.name << ", seed " << c.seed;
  }

  // Factors: L D L^H must reproduce A; checked in 50 digits.
  const auto n = static_cast<std::size_t>(c.num_users);
  mp_matrix rebuilt(n);
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t j = 0; j < n; ++j) {
      mp_complex sum(0);
      for (std::size_t k = 0; k <= std::min(i, j); ++k) {
        const auto lik = f.unit_lower(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(k));
        const auto ljk = f.unit_lower(static_cast<Eigen::Index>(j), static_cast<Eigen::Index>(k));
        sum += mp_complex(lik.real(), lik.imag()) * mp_complex(ljk.real(), -ljk.imag()) *
               mp_complex(f.diag(static_cast<Eigen::Index>(k)));
      }
      rebuilt(i, j) = sum;
    }
  }
  // Backward error of the factorisation: ||L D L^H - A|| <= c n eps ||A|| (Higham, same theorem).
  EXPECT_LT(test::relative_error(a, rebuilt), 8.0 * c.num_users * eps) << c.name;
  for (Eigen::Index i = 0; i < a.rows(); ++i) {
    EXPECT_EQ(f.unit_lower(i, i), std::complex<double>(1.0, 0.0));
    for (Eigen::Index j = i + 1; j < a.rows(); ++j) {
      EXPECT_EQ(f.unit_lower(i, j), std::complex<double>(0.0, 0.0));
    }
  }
}

INSTANTIATE_TEST_SUITE_P(boost_multiprecision_50_digits, ldl_against_multiprecision,
                         ::testing::ValuesIn(test::gram_cases()),
                         [](const ::testing::TestParamInfo<gram_case>& param_info) { return param_info.param.name; });

TEST(ldl, diagonal_matrix_inverts_entry_by_entry) {
  Eigen::MatrixXcd a = Eigen::MatrixXcd::Zero(5, 5);
  for (int i = 0; i < 5; ++i) {
    a(i, i) = 1.0 + i;
  }
  const ldl_factors f = ldl_decompose(a);
  const Eigen::MatrixXcd inv = ldl_inverse(f);
  for (int i = 0; i < 5; ++i) {
    EXPECT_EQ(f.diag(i), 1.0 + i);
    EXPECT_NEAR(inv(i, i).real(), 1.0 / (1.0 + i), 1e-16);
  }
  EXPECT_EQ((inv - inv.diagonal().asDiagonal().toDenseMatrix()).norm(), 0.0);
}

TEST(ldl, singular_input_gives_non_finite_values_not_an_exception) {
  const Eigen::MatrixXcd a = Eigen::MatrixXcd::Ones(3, 3);  // rank 1: d_1 = d_2 = 0
  const ldl_factors f = ldl_decompose(a);
  EXPECT_EQ(f.diag(1), 0.0);
  EXPECT_FALSE(ldl_inverse(f).allFinite());
}

}  // namespace
}  // namespace fxmimo::golden
