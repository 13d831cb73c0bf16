// LDL^H factorisation and inversion of a Hermitian matrix without square roots, the form a
// hardware inverter uses (one reciprocal per diagonal entry, then multiplications only).
#pragma once

#include <Eigen/Dense>

namespace fxmimo::golden {

/// A = L D L^H with L unit lower triangular and D real diagonal.
struct ldl_factors {
  Eigen::MatrixXcd unit_lower;  ///< L (ones on the diagonal, zeros above)
  Eigen::VectorXd diag;         ///< d_i
};

/// Factorises a Hermitian matrix without pivoting (Golub & Van Loan, Matrix Computations, 4th ed.,
/// Sec. 4.1 (from memory), complex form), column by column:
/// d_j = a_jj - sum_{k<j} |l_jk|^2 d_k;  l_ij = (a_ij - sum_{k<j} l_ik conj(l_jk) d_k) * (1/d_j), i > j.
/// Only the lower triangle of `a` is read. A zero or negative d_j (singular or indefinite input)
/// yields infinities or NaNs, never an exception.
ldl_factors ldl_decompose(const Eigen::MatrixXcd& a);

/// A^-1 from the factors, column by column on the identity: forward substitution L y = e_i,
/// scaling z = y * (1/d) with the reciprocals computed once, back substitution L^H x = z.
Eigen::MatrixXcd ldl_inverse(const ldl_factors& factors);

}  // namespace fxmimo::golden
