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
#include "fxmimo/golden/rng.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// Matrix of QAM labels (bits of each symbol, MSB first), K x N.
using label_matrix = Eigen::Matrix<std::uint32_t, Eigen::Dynamic, Eigen::Dynamic>;

/// Symbols per block of the data phase. The data phase (labels, symbols, transmitted samples,
/// their evaluation) is generated and consumed block by block, so its memory does not grow with
/// the number of symbols N; the golden products are taken per block of this many symbols (the
/// last block holds the rest), a constant of the model so that every path computes the same.
inline constexpr int symbol_block_size = 256;

/// Where one base station's data labels come from: the trial's generator at the start of each
/// user's row of N labels (the labels are drawn user by user, N per user).
struct label_rows {
  std::vector<random_stream> rows;  ///< [k]
};

/// Figures of cell 0's uplink after combining and equalisation (README "The uplink",
/// Evaluation), per user then over the users.
struct uplink_metrics {
  std::vector<double> sinr;               ///< |g_k|^2 E|s|^2 / mean|r_k - g_k s_k|^2 (receiver noise included), linear
  std::vector<double> sinr_db;            ///< 10 log10 sinr
  std::vector<double> evm_pct;            ///< 100 sqrt(mean|r_k - g_k s_k|^2 / (|g_k|^2 E|s|^2)), after the one-tap fit
  std::vector<std::uint64_t> bit_errors;  ///< hard decisions of r_k (nearest point) against the sent labels
  std::uint64_t bits = 0;                 ///< bits sent per user
  double mean_sinr_db = 0.0;
  double mean_evm_pct = 0.0;
  std::uint64_t total_bit_errors = 0;
  [[nodiscard]] double ber() const;  ///< total_bit_errors / (bits K)
};

/// Cell 0's uplink data phase in one trial: what its base station receives and computes, in
/// double (README "The uplink"). Kept whole (K x N_ul and M x N_ul), N_ul <= 4096.
struct uplink_data {
  label_matrix labels;       ///< K x N_ul labels of cell 0's users
  Eigen::MatrixXcd symbols;  ///< K x N_ul unit-power QAM symbols of cell 0's users
  double agc_gain = 0.0;     ///< g_ul: the AGC rule at rho_ul
  Eigen::MatrixXcd adc;      ///< g_ul Y_ul (M x N_ul)
  Eigen::MatrixXcd match;    ///< H_hat^H adc (K x N_ul)
  // With an inverse of its own (inverse = "own"): G_ul = H_hat^H H_hat + delta I (delta = 1 /
  // rho_ul for mmse, else 0), its LDL^H factors and G_ul^-1 from them; else empty.
  Eigen::MatrixXcd gram;
  std::optional<ldl_factors> ldl;
  Eigen::MatrixXcd inverse;
  Eigen::MatrixXcd combined;   ///< (own or downlink) inverse * match (K x N_ul; zf and mmse), else empty
  Eigen::VectorXd scale;       ///< per-user real gain c_k onto the odd-integer grid (K)
  Eigen::MatrixXcd equalised;  ///< diag(scale) (combined or match) (K x N_ul), on the grid
  Eigen::MatrixXd distances;   ///< max-log distance differences, K x (b N_ul), column n b + t
  uplink_metrics metrics;      ///< of equalised, golden
};

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
  Eigen::MatrixXcd gram;               ///< K x K (with the RZF loading); empty for MF
  std::optional<ldl_factors> ldl;      ///< when inversion = ldl
  Eigen::MatrixXcd inverse;            ///< K x K; empty for MF
  double neumann_radius = 0.0;         ///< spectral radius of I - D^-1 G (inversion = neumann), else 0
  double gauss_seidel_residual = 0.0;  ///< ||I - G X||_F / sqrt(K) (inversion = gauss_seidel), else 0
  Eigen::MatrixXcd precoder;           ///< M x K before scaling
  Eigen::VectorXd norm;                ///< size 1 (total) or M (per antenna)
  Eigen::MatrixXcd weights;            ///< M x K
  double digital_power = 0.0;          ///< P_dig = M 10^(-dac_backoff_db/10)

  // Data phase: generated block by block (data_stream).
  std::vector<label_rows> cell_labels;  ///< [l]: where BS l's labels start

  // Evaluation.
  std::vector<Eigen::MatrixXcd> channel_to_cell0;  ///< [l]: M x K channel h^l_{0k} from BS l to cell 0's users
  std::vector<Eigen::MatrixXcd> cell_precoder;     ///< [l]: BS l's unscaled precoder (index 0 = precoder)
  /// [l]: K x K gain from BS l's symbols to cell 0's users, (h^l_{0k})^T W_l (W_l BS l's
  /// weights); index 0 empty. The other cells' signal at cell 0's users is sum over l >= 1 of
  /// cross_gain[l] s_l (cell order), one K x K product per cell instead of two M x K ones.
  std::vector<Eigen::MatrixXcd> cross_gain;
  double amplitude = 0.0;             ///< sqrt(rho_d / P_dig): received samples r = amplitude (h^T x + others)
  link_metrics metrics;               ///< the golden data phase's link figures (link_sums of its blocks, scale 1)
  std::optional<uplink_data> uplink;  ///< with an [uplink] table
};

/// One block of the data phase: symbols first .. first + B - 1 of every cell.
struct data_block {
  int first = 0;                  ///< index of the block's first symbol
  label_matrix labels;            ///< K x B labels of cell 0 (bits of each symbol, MSB first)
  Eigen::MatrixXcd symbols;       ///< K x B unit-power QAM symbols of cell 0
  Eigen::MatrixXcd tx;            ///< weights * symbols (M x B): golden tx_acc and dac (Eigen product)
  Eigen::MatrixXcd interference;  ///< K x B: sum over l >= 1 of cross_gain[l] s_l; empty with one cell
  [[nodiscard]] int size() const { return static_cast<int>(symbols.cols()); }
};

/// A trial's data blocks in order, each of symbol_block_size symbols (the last: the rest),
/// regenerated from the trial's label_rows; any number of streams may read the same trial.
class data_stream {
 public:
  /// Keeps references to both arguments: they must outlive the stream. Without
  /// `golden_products` the blocks hold labels and symbols only (tx and interference stay empty):
  /// what the fixed-point datapath alone reads.
  data_stream(const scenario& scen, const trial_data& trial, bool golden_products = true);
  /// Fills `out` with the next block; false (and `out` untouched) after the last.
  bool next(data_block& out);

 private:
  const scenario& scen_;
  const trial_data& trial_;
  std::vector<label_rows> cells_;  // copies of the trial's, advanced block by block
  bool golden_products_;
  int next_first_ = 0;
};

/// The whole data phase as one block (the stream's blocks side by side): for vector files and
/// checks that need all N symbols at once. Its memory grows with N. `golden_products` as for
/// data_stream.
data_block whole_data(const scenario& scen, const trial_data& trial, bool golden_products = true);

/// The noise-free received samples of cell 0's users for a block that cell 0 transmits as
/// `tx_cell0` (M x B; the golden block or the DAC's values), the other cells transmitting their
/// golden blocks, are r = amplitude (own + block.interference); this is own = h^T tx_cell0 (K x B,
/// h the M x K channel from BS 0 to its users). Throws std::invalid_argument unless tx_cell0 is
/// M x B.
Eigen::MatrixXcd own_received(const trial_data& trial, const data_block& block, const Eigen::MatrixXcd& tx_cell0);

/// Runs trial `trial_index`. All random numbers come from one xoshiro256** stream seeded with
/// trial_seed(scen.seed, trial_index), drawn in a fixed order (large-scale state; then per BS j:
/// channels to every cell's users, pilot noise, and BS j's data labels, user by user), so the
/// trial is reproducible alone, in any order and on any thread. The data phase is not kept: the
/// trial records where its labels start, and data_stream regenerates it block by block.
trial_data run_trial(const scenario& scen, std::uint64_t trial_index);

}  // namespace fxmimo::golden
