// Uplink channel estimation at one base station: AGC, pilot correlation, LS / MMSE scaling.
// Received pilots at BS j: Y_j = sum_l sum_k sqrt(rho_p) h^j_{lk} phi_{lk}^T + N (M x tau_p,
// N i.i.d. CN(0,1)); adc = g_agc Y_j.
#pragma once

#include <Eigen/Dense>
#include <vector>

#include "fxmimo/golden/large_scale.hpp"
#include "fxmimo/golden/rng.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// AGC gain of BS j from large-scale statistics only:
/// g_agc = 10^(-agc_backoff_db/20) / sqrt(rho_p sum_{l,k} beta^j_{lk} + 1),
/// so the expected RMS of one adc sample (per complex sample) sits agc_backoff_db below 1.0.
double agc_gain(const scenario& scen, const large_scale& gains, int i_bs);
/// The same rule for a phase whose users send at `snr` (linear) per unit gain: the pilots
/// (rho_p, agc_gain) or the uplink data (rho_ul).
double agc_gain_at(const scenario& scen, const large_scale& gains, int i_bs, double snr);

/// Received pilot block Y_j (before the AGC) from the channels of every cell's users at BS j
/// (`channels[l]` = M x K matrix h^j_{l.}) and `pilots[l]` (tau_p x K), plus unit CN noise drawn
/// from `rng` antenna-major (antenna 0 for t = 0..tau_p-1, then antenna 1, ...).
Eigen::MatrixXcd received_pilots(const scenario& scen, const std::vector<Eigen::MatrixXcd>& channels,
                                 const std::vector<Eigen::MatrixXcd>& pilots, random_stream& rng);

/// pilot_acc[m,k] = sum_{t=0}^{tau_p-1} adc[m,t] conj(phi_k[t]), accumulated in index order of t.
Eigen::MatrixXcd correlate_pilots(const Eigen::MatrixXcd& adc, const Eigen::MatrixXcd& pilots);

/// psi^j_k = 1 / (tau_p rho_p sum_{l sharing k's pilot with cell j} beta^j_{lk} + 1), the inverse of
/// the normalised correlator variance (Björnson, Hoydis & Sanguinetti, Massive MIMO Networks, 2017,
/// Chapter 3 (from memory) with uncorrelated fading; contaminating users of the same pilot group included).
double mmse_psi(const scenario& scen, const large_scale& gains, int i_bs, int i_user);

/// Real per-user estimation scale so that chan_est = pilot_acc * est_scale[k]:
/// ls      1 / (g_agc tau_p sqrt(rho_p))
/// mmse    sqrt(rho_p) beta^j_{jk} psi^j_k / g_agc (element-wise LMMSE from large-scale statistics;
///         exact MMSE for uncorrelated Rayleigh)
/// perfect the LS scale (the estimate itself is replaced by the true channel).
Eigen::VectorXd estimation_scales(const scenario& scen, const large_scale& gains, int i_bs, double agc);

}  // namespace fxmimo::golden
