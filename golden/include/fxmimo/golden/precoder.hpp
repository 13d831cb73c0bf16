// Downlink linear precoding at one base station: Gram matrix, inverse, precoder, power
// normalisation. Convention: user k receives r_k = h_k^T x, so the precoder is built from
// conj(H_hat) and H^T * precoder = I for zero forcing with perfect CSI.
#pragma once

#include <Eigen/Dense>
#include <optional>

#include "fxmimo/golden/ldl.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// The precoding nodes of one base station (README "How it computes", the node table).
struct precoder_output {
  Eigen::MatrixXcd gram;               ///< G = H_hat^H H_hat (+ lambda I for RZF), K x K; empty for MF
  std::optional<ldl_factors> ldl;      ///< factors when inversion = ldl
  Eigen::MatrixXcd inverse;            ///< G^-1 (or its Neumann approximation), K x K; empty for MF
  double neumann_radius = 0.0;         ///< spectral radius of I - D^-1 G when inversion = neumann, else 0
  double gauss_seidel_residual = 0.0;  ///< ||I - G X||_F / sqrt(K) when inversion = gauss_seidel, else 0
  Eigen::MatrixXcd precoder;           ///< W (M x K) before scaling
  Eigen::VectorXd norm;                ///< size 1 (total) or M (per antenna)
  Eigen::MatrixXcd weights;            ///< diag(norm) W, or norm * W
};

/// G[i,j] = sum_m conj(H[m,i]) H[m,j], summed over antennas in index order.
Eigen::MatrixXcd gram_matrix(const Eigen::MatrixXcd& chan_est);
/// Condition number lambda_max / lambda_min of a Hermitian positive semi-definite matrix (its
/// eigenvalues, Eigen's SelfAdjointEigenSolver); +inf when lambda_min <= 0.
double condition_number(const Eigen::MatrixXcd& hermitian);

/// Digital transmit power P_dig = M 10^(-dac_backoff_db/10): per-antenna RMS 10^(-backoff/20) of
/// full scale 1.0 for unit-power symbols. The physical signal is sqrt(rho_d / P_dig) * tx.
double digital_power(const scenario& scen);

/// Normalisation: total       norm = sqrt(P_dig) / ||W||_F (one value);
///                per_antenna norm_m = sqrt(P_dig / M) / ||W[m,:]|| (one value per antenna).
Eigen::VectorXd power_normalization_factors(const Eigen::MatrixXcd& precoder, power_normalization mode, double p_dig);

/// Runs the whole precoding chain of the scenario on one estimate H_hat (M x K):
/// mf   W = conj(H_hat)
/// zf   W = conj(H_hat G^-1), G = H_hat^H H_hat
/// rzf  W = conj(H_hat (G + lambda I)^-1), lambda = scenario::rzf_regularizer() (default K / rho_d,
///      the regularised-inversion choice of Peel, Hochwald & Swindlehurst, IEEE TCOM 53(1), 2005 (from memory))
/// with G^-1 by LDL^H, a Neumann series of T terms, or Eigen's pivoted LDL^T (reference).
precoder_output compute_precoder(const scenario& scen, const Eigen::MatrixXcd& chan_est);

}  // namespace fxmimo::golden
