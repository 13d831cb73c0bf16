// Truncated Neumann-series inverse with the diagonal preconditioner D = diag(A).
#pragma once

#include <Eigen/Dense>

namespace fxmimo::golden {

/// X_T = sum_{n=0}^{T-1} (I - D^-1 A)^n D^-1, D = diag(A), T = num_terms >= 1, computed as
/// term_0 = D^-1, term_n = (I - D^-1 A) term_{n-1}, X = sum of the terms. Its error is exactly
/// A^-1 - X_T = (I - D^-1 A)^T A^-1 (the series tail), which vanishes as T grows if and only if
/// the spectral radius of I - D^-1 A is below 1 (Wu et al., "Large-scale MIMO detection for 3GPP
/// LTE: algorithms and FPGA implementations", IEEE JSTSP 2014 (from memory), uses the same series).
Eigen::MatrixXcd neumann_inverse(const Eigen::MatrixXcd& a, int num_terms);

/// Spectral radius of I - D^-1 A for Hermitian A with positive diagonal, from the eigenvalues of
/// the similar Hermitian matrix I - D^-1/2 A D^-1/2.
double neumann_spectral_radius(const Eigen::MatrixXcd& a);

/// True when the series converges: neumann_spectral_radius(a) < 1.
bool neumann_converges(const Eigen::MatrixXcd& a);

}  // namespace fxmimo::golden
