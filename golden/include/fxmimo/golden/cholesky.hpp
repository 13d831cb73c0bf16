// Cholesky factorisation G = L L^H with square roots, and the inverse from it, in the form a
// hardware inverter uses: one reciprocal square root per diagonal entry (the datapath's
// chol_diag_rsqrt), then multiplications only.
#pragma once

#include <Eigen/Dense>

namespace fxmimo::golden {

/// A = L L^H with L lower triangular and a positive real diagonal.
struct cholesky_factors {
  Eigen::MatrixXcd lower;      ///< L (zeros above the diagonal)
  Eigen::VectorXd diag_rsqrt;  ///< 1 / l_jj = 1 / sqrt(r_j)
};

/// Factorises a Hermitian matrix without pivoting, column by column (Golub & Van Loan, Matrix
/// Computations, 4th ed., Alg. 4.2.1 (from memory), complex form):
///   r_j = a_jj - sum_{k<j} |l_jk|^2,  1/l_jj = 1/sqrt(r_j),  l_jj = r_j (1/l_jj),
///   l_ij = (a_ij - sum_{k<j} l_ik conj(l_jk)) (1/l_jj), i > j.
/// Only the lower triangle of `a` is read. A residual r_j <= 0 (a singular or indefinite input)
/// yields infinities or NaNs, never an exception.
cholesky_factors cholesky_decompose(const Eigen::MatrixXcd& a);

/// A^-1 = L^-H L^-1 from the factors, column c of the identity at a time:
/// forward  y_i = (delta_ic - sum_{k=c}^{i-1} l_ik y_k) (1/l_ii), i = c..K-1;
/// backward x_i = (y_i - sum_{k=i+1}^{K-1} conj(l_ki) x_k) (1/l_ii), i = K-1 down to 0.
Eigen::MatrixXcd cholesky_inverse(const cholesky_factors& factors);

/// L^-1 (the forward solves alone, the columns of the identity).
Eigen::MatrixXcd cholesky_forward(const cholesky_factors& factors);

}  // namespace fxmimo::golden
