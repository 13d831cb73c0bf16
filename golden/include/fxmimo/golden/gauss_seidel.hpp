// Gauss-Seidel iterative inverse of a Hermitian positive definite matrix, started from the
// inverse of its diagonal.
#pragma once

#include <Eigen/Dense>
#include <vector>

namespace fxmimo::golden {

/// X_0 = D^-1 (D = diag(A)), then `num_sweeps` Gauss-Seidel sweeps on A X = I (Golub & Van Loan,
/// Matrix Computations, 4th ed., Sec. 11.2; Saad, Iterative Methods for Sparse Linear Systems,
/// 2nd ed., Sec. 4.1 (both from memory)). The update order is the definition: each sweep takes
/// the columns c = 0..K-1 and in each column the rows i = 0..K-1, overwriting in place
///   x_ic <- r_i delta_ic + sum_{j != i, j rising} b_ij x_jc,   r_i = 1/a_ii, b_ij = -r_i a_ij,
/// so rows j < i already hold this sweep's values and rows j > i the previous sweep's. B = I - D^-1 A
/// off its diagonal is the Neumann series' iteration matrix (neumann.hpp). Returns the iterates
/// X_1 .. X_S (the last one is the inverse).
std::vector<Eigen::MatrixXcd> gauss_seidel_sweeps(const Eigen::MatrixXcd& a, int num_sweeps);

/// The last of gauss_seidel_sweeps: the approximate inverse after `num_sweeps` sweeps.
Eigen::MatrixXcd gauss_seidel_inverse(const Eigen::MatrixXcd& a, int num_sweeps);

/// ||I - A X||_F / sqrt(K): the RMS entry of the residual of an approximate inverse X, the size
/// of the inter-user leakage a precoder built from X leaves (0 for the exact inverse).
double inverse_residual(const Eigen::MatrixXcd& a, const Eigen::MatrixXcd& x);

/// The residual above which the golden trial flags a Gauss-Seidel inverse as not converged
/// (README "Downlink precoding"): a leakage of 0.01 per entry is an interference floor about
/// 40 dB below the signal.
inline constexpr double gauss_seidel_residual_limit = 1e-2;

/// True when |a_ii| > sum_{j != i} |a_ij| for every row (strict diagonal dominance: a sufficient,
/// not necessary, condition for Jacobi and Gauss-Seidel to converge).
bool strictly_diagonally_dominant(const Eigen::MatrixXcd& a);

}  // namespace fxmimo::golden
