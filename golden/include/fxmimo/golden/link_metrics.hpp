// Downlink link metrics of cell 0's users (README "The channel and scenario model", Evaluation).
#pragma once

#include <Eigen/Dense>
#include <complex>
#include <vector>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

struct trial_data;

/// Per-user metrics of one block, then their averages over the users.
struct link_metrics {
  std::vector<std::complex<double>> gain;  ///< g_k = mean(r_k conj(s_k)) / mean|s_k|^2
  std::vector<double> sinr;                ///< |g_k|^2 E|s|^2 / (mean|r_k - g_k s_k|^2 + 1), linear
  std::vector<double> sinr_db;             ///< 10 log10 sinr
  std::vector<double> evm_pct;             ///< 100 sqrt(mean|r_k - g_k s_k|^2 / (|g_k|^2 E|s|^2)), noise excluded
  std::vector<double> evm_db;              ///< 20 log10(evm_pct / 100)
  std::vector<double> rate;                ///< log2(1 + sinr), bit/s/Hz
  double mean_sinr_db = 0.0;               ///< mean over users of sinr_db
  double mean_evm_pct = 0.0;               ///< mean over users of evm_pct
  double sum_rate = 0.0;                   ///< sum over users of rate
};

/// Metrics from noise-free received samples r (K x N) and the sent symbols s (K x N) with the
/// analytic noise power `noise_power` (1 in the golden model): single-tap equalisation by the
/// least-squares gain g_k, E|s|^2 = 1 (unit-power constellations). EVM excludes the noise, so it
/// is the transmit-side error seen at user k (precoder leakage, inter-cell interference,
/// quantisation), after the ideal one-tap equaliser.
link_metrics measure_link(const Eigen::MatrixXcd& received, const Eigen::MatrixXcd& symbols, double noise_power);

/// Noise-free received samples of cell 0's users (K x N):
/// r_k = sqrt(rho_d / P_dig) (h^0_{0k}^T tx_cell0 + sum_{l>0} h^l_{0k}^T tx_l), the other cells
/// transmitting their golden blocks from `trial`; their sum is the trial's
/// interference_to_cell0, added to cell 0's part as one matrix. Throws std::invalid_argument unless tx_cell0 is
/// M x N like trial.tx.
Eigen::MatrixXcd received_downlink(const scenario& scen, const trial_data& trial, const Eigen::MatrixXcd& tx_cell0);

/// measure_link(received_downlink(...), trial.symbols, 1): evaluates any M x N block transmitted
/// by cell 0 (e.g. the fixed-point DAC output converted to double) through the true channels.
link_metrics evaluate_downlink(const scenario& scen, const trial_data& trial, const Eigen::MatrixXcd& tx_cell0);

/// Implementation EVM at the DAC after a least-squares complex gain alignment, as an EVM
/// measurement removes gain and phase (3GPP TS 38.104 Annex B, equalisation before the error):
/// min over a of ||a x_fixed - x_golden||_F / ||x_golden||_F, a = <x_fixed, x_golden> / ||x_fixed||^2.
/// A pure scaling of the block (e.g. a rounded gain constant) is therefore no error.
double implementation_evm(const Eigen::MatrixXcd& x_fixed, const Eigen::MatrixXcd& x_golden);

}  // namespace fxmimo::golden
