// One Monte-Carlo trial of the golden model: every base station estimates its users' channels
// from contaminated pilots, precodes and transmits; cell 0's datapath nodes are kept.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <optional>
#include <vector>

#include "fxmimo/golden/large_scale.hpp"
#include "fxmimo/golden/ldl.hpp"
#include "fxmimo/golden/link_metrics.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// Matrix of QAM labels (bits of each symbol, MSB first), K x N.
using label_matrix = Eigen::Matrix<std::uint32_t, Eigen::Dynamic, Eigen::Dynamic>;

/// All golden values of one trial at cell 0's base station (the datapath nodes of README "How it computes", in double),
/// the true channels, the other cells' transmissions and the golden metrics.
struct trial_data {
  std::uint64_t trial_index = 0;
  std::uint64_t seed = 0;  ///< generator seed, trial_seed(scenario seed, trial_index)
  large_scale gains;       ///< beta^j_{lk} and arrival angles of this trial

  // Uplink at BS 0.
  Eigen::MatrixXcd adc;        ///< g_agc Y_0 (M x tau_p)
  Eigen::MatrixXcd pilots;     ///< cell 0's pilot sequences (tau_p x K)
  double agc_gain = 0.0;       ///< g_agc of BS 0
  Eigen::MatrixXcd pilot_acc;  ///< adc * conj(pilots) (M x K)
  Eigen::VectorXd est_scale;   ///< per-user real scale (K)
  Eigen::MatrixXcd chan_est;   ///< H_hat = pilot_acc diag(est_scale), or the true channel (perfect CSI)

  // Downlink at BS 0.
  Eigen::MatrixXcd gram;           ///< K x K (with the RZF loading); empty for MF
  std::optional<ldl_factors> ldl;  ///< when inversion = ldl
  Eigen::MatrixXcd inverse;        ///< K x K; empty for MF
  double neumann_radius = 0.0;     ///< spectral radius of I - D^-1 G (inversion = neumann), else 0
  Eigen::MatrixXcd precoder;       ///< M x K before scaling
  Eigen::VectorXd norm;            ///< size 1 (total) or M (per antenna)
  Eigen::MatrixXcd weights;        ///< M x K
  Eigen::MatrixXcd symbols;        ///< K x N unit-power QAM
  label_matrix symbol_bits;        ///< K x N labels of `symbols`
  Eigen::MatrixXcd tx;             ///< weights * symbols (M x N): golden tx_acc and dac (Eigen product)
  double digital_power = 0.0;      ///< P_dig = M 10^(-dac_backoff_db/10)

  // Evaluation.
  std::vector<Eigen::MatrixXcd> channel_to_cell0;  ///< [l]: M x K channel h^l_{0k} from BS l to cell 0's users
  std::vector<Eigen::MatrixXcd> cell_precoder;     ///< [l]: BS l's unscaled precoder (index 0 = precoder)
  std::vector<Eigen::MatrixXcd> cell_tx;           ///< [l]: BS l's golden tx (index 0 = tx)
  /// K x N: the other cells' signal at cell 0's users before the amplitude, sum over l = 1 ..
  /// L-1 of (h^l_{0k})^T x_l, added in cell order; empty with one cell. Computed once per trial:
  /// it does not depend on cell 0's block, so every evaluation of a fixed block reuses it.
  Eigen::MatrixXcd interference_to_cell0;
  link_metrics metrics;  ///< evaluate_downlink(scenario, *this, tx)
};

/// Runs trial `trial_index`. All random numbers come from one xoshiro256** stream seeded with
/// trial_seed(scen.seed, trial_index), drawn in a fixed order (large-scale state; then per BS j:
/// channels to every cell's users, pilot noise, and BS j's data labels), so the trial is
/// reproducible alone, in any order and on any thread.
trial_data run_trial(const scenario& scen, std::uint64_t trial_index);

}  // namespace fxmimo::golden
