// The uplink data phase at cell 0's base station (README "The uplink"): every user of every
// cell l sends N_ul QAM symbols at rho_ul through the channels of its pilots in the same block,
// Y_ul = sqrt(rho_ul) sum_l H^0_l S_l + N (M x N_ul, N i.i.d. CN(0, 1)); the base station
// converts g_ul Y_ul, combines with its estimate (and, for ZF and MMSE, the downlink's inverse),
// scales each user onto the odd-integer grid of its constellation and demaps.
#pragma once

#include <Eigen/Dense>
#include <vector>

#include "fxmimo/golden/scenario.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::golden {

/// The per-user real gain c_k that puts user k's combined output on the odd-integer grid:
/// c_k = 1 / (g_ul sqrt(rho_ul) a_k qam_step), a_k user k's own gain through the combiner A as
/// the estimate sees it, a_k = [A H_hat^H H_hat]_kk: ||h_hat_k||^2 for mrc (unbiased for an
/// MMSE estimate, whose error is uncorrelated with it), 1 for zf, 1 - delta [inverse]_kk for
/// mmse (inverse = (H_hat^H H_hat + delta I)^-1, delta = 1 / rho_ul, the combiner's inverse:
/// the downlink's or the uplink's own).
Eigen::VectorXd uplink_scales(const scenario& scen, const Eigen::MatrixXcd& chan_est, const Eigen::MatrixXcd& inverse,
                              double agc_ul);

/// The inverse the zf or mmse combiner applies: the uplink's own (uplink_data::inverse) or the
/// downlink's (trial_data::inverse).
const Eigen::MatrixXcd& combiner_inverse(const scenario& scen, const trial_data& trial, const uplink_data& ul);

/// Figures of equalised outputs on the grid (K x N) against the sent symbols and labels.
uplink_metrics measure_uplink(modulation mod, const Eigen::MatrixXcd& equalised_grid, const Eigen::MatrixXcd& symbols,
                              const label_matrix& labels);

/// Max-log distance differences of every output: K x (b N), column n b + t (maxlog_distances).
Eigen::MatrixXd uplink_distances(modulation mod, const Eigen::MatrixXcd& equalised_grid);

/// The uplink of one trial from its own random stream (seeded from the trial's seed, so the
/// downlink's draws are untouched): labels cell by cell, user by user, N_ul each; then the noise,
/// symbol by symbol, antenna by antenna. `channels_bs0[l]` is H^0_l (M x K), `trial` holds the
/// estimate, the inverse and the gains.
uplink_data run_uplink(const scenario& scen, const trial_data& trial,
                       const std::vector<Eigen::MatrixXcd>& channels_bs0);

}  // namespace fxmimo::golden
