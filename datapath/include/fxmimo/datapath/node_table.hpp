#pragma once
/// The node table: every named register of the datapath (README "How it computes"), one row
/// each, in datapath order. A row is the only home of a node's name, its real or complex words,
/// its named dimensions, its role and what it holds; everything that lists nodes iterates over
/// the table or over the stages that compute them (stage.hpp). A program of its own can add
/// rows (register_node) for stages of its own.

#include <array>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace fxmimo::datapath {

/// Identifies a node: the reference nodes by name; a node registered by a program of its own
/// takes the next free value (num_reference_nodes, num_reference_nodes + 1, ...).
enum class node_id : std::uint16_t {
  adc,              ///< received pilot block after the AGC (M x tau_p)
  pilot_rom,        ///< stored pilot sequences (tau_p x K)
  pilot_acc,        ///< correlator accumulator sum_t adc[m,t] conj(pilot[t,k]) (M x K)
  est_scale,        ///< per-user estimator scale, LS or MMSE (K)
  chan_est,         ///< channel estimate H_hat = pilot_acc * est_scale (M x K)
  est_exp,          ///< block exponent word u_k of the estimate's column k (block floating point) (K)
  gram,             ///< G = H_hat^H H_hat (+ regulariser), summed over antennas (K x K)
  ldl_acc,          ///< LDL^H accumulator: d_j on the diagonal, l_ij d_j below (K x K)
  recip_rom,        ///< seed ROM of a table + Newton reciprocal unit (2^a)
  recip_mant,       ///< its normalised input mantissa m in [1/2, 1] (K)
  recip_prod,       ///< its products p_k = m x_k, steps side by side (K x n)
  recip_iter,       ///< its iterates x_k+1 = x_k (2 - p_k), steps side by side (K x n)
  inv_diag_recip,   ///< 1 / d_j (LDL) or 1 / G_jj (Neumann, Gauss-Seidel) (K)
  inv_factor,       ///< L, strictly lower part (K x K)
  inv_fwd,          ///< forward substitution L y = e_c, all columns: L^-1 (K x K)
  chol_acc,         ///< Cholesky accumulator: residual r_j on the diagonal, numerators below (K x K)
  chol_rsqrt_rom,   ///< seed ROM of the Cholesky diagonal's table + Newton rsqrt unit (2^a)
  chol_rsqrt_mant,  ///< its normalised input mantissa m in [1/4, 1] (K)
  chol_rsqrt_sq,    ///< its squares s_k = x_k^2, steps side by side (K x n)
  chol_rsqrt_prod,  ///< its products p_k = m s_k (K x n)
  chol_rsqrt_iter,  ///< its iterates x_k+1 = x_k (3 - p_k) / 2 (K x n)
  chol_diag_rsqrt,  ///< 1 / l_jj = 1 / sqrt(r_j) (K)
  chol_factor,      ///< Cholesky factor L, strictly lower part (K x K)
  chol_fwd,         ///< forward substitution L y = e_c with the reciprocal roots: L^-1 (K x K)
  inv_iter,         ///< iteration matrix B = I - D^-1 G, Neumann and Gauss-Seidel (K x K)
  inv_term,         ///< Neumann terms B^n D^-1, n = 1..T-1, side by side (K x K(T-1))
  gs_sweep,         ///< Gauss-Seidel iterates X_s, s = 1..S-1, side by side (K x K(S-1))
  inv_out,          ///< G^-1 (K x K)
  precoder,         ///< W before scaling: conj(H_hat) (MF) or conj(H_hat G^-1) (M x K)
  pre_exp,          ///< block exponent word u of the whole precoder (block floating point) (1)
  power_acc,        ///< sum |W|^2, total (1) or per antenna (M)
  rsqrt_rom,        ///< seed ROM of a table + Newton reciprocal square root unit (2^a)
  rsqrt_mant,       ///< its normalised input mantissa m in [1/4, 1] (1 or M)
  rsqrt_sq,         ///< its squares s_k = x_k^2, steps side by side (1 or M x n)
  rsqrt_prod,       ///< its products p_k = m s_k (1 or M x n)
  rsqrt_iter,       ///< its iterates x_k+1 = x_k (3 - p_k) / 2 (1 or M x n)
  norm,             ///< 1 / sqrt(power_acc) (1 or M)
  tx_gain,          ///< constant sqrt(P_dig) (total) or sqrt(P_dig / M) (per antenna)
  weights,          ///< W * norm * tx_gain (M x K)
  symbols,          ///< QAM symbols (K x N)
  tx_acc,           ///< precoding accumulator sum_k weights[m,k] symbols[k,n] (M x N)
  dac,              ///< transmitted samples (M x N)
  ul_adc,           ///< uplink data block after the AGC, through the adc's format (M x N_ul)
  ul_match,         ///< matched-filter accumulator H_hat^H ul_adc, summed over antennas (K x N_ul)
  ul_gram,          ///< the uplink's own Gram H_hat^H H_hat (+ 1/rho_ul for MMSE), inverse = "own" (K x K)
  ul_ldl_acc,       ///< its LDL^H accumulator, as ldl_acc (K x K)
  ul_inv_recip,     ///< its 1 / d_j, an exact reciprocal (K)
  ul_inv_factor,    ///< its L, strictly lower part (K x K)
  ul_inv_fwd,       ///< its L^-1 (K x K)
  ul_inv_out,       ///< the uplink's own inverse ul_gram^-1 (K x K)
  ul_comb,          ///< ZF / MMSE combiner accumulator (ul_)inv_out ul_match, summed over users (K x N_ul)
  ul_scale,         ///< per-user real gain onto the constellation's odd-integer grid, from the golden estimate (K)
  ul_eq,            ///< equalised symbols ul_scale (ul_comb or ul_match), on the grid (K x N_ul)
  ul_llr,           ///< max-log distance differences of every bit, K x (b N_ul)
};

/// A named dimension of a node's words. Its size comes from the scenario through the plan
/// (plan.hpp: dimension_sizes).
enum class dim : std::uint8_t {
  antenna,           ///< M
  user,              ///< K
  pilot_symbol,      ///< tau_p
  symbol,            ///< N
  term_user,         ///< K (T - 1): Neumann terms n = 1..T-1 side by side, column (n-1) K + c
  power_group,       ///< M with per-antenna power normalisation, else 1 (named antenna or one)
  recip_entry,       ///< 2^a: entries of the reciprocal unit's seed ROM
  recip_step,        ///< n: the reciprocal unit's Newton steps
  rsqrt_entry,       ///< 2^a: entries of the reciprocal square root unit's seed ROM
  rsqrt_step,        ///< n: its Newton steps
  chol_rsqrt_entry,  ///< 2^a: entries of the Cholesky diagonal's rsqrt unit's seed ROM
  chol_rsqrt_step,   ///< n: its Newton steps
  sweep_user,        ///< K (S - 1): Gauss-Seidel sweeps s = 1..S-1 side by side, column (s-1) K + c
  ul_symbol,         ///< N_ul: the uplink data symbols of a block
  ul_bit,            ///< b N_ul: the uplink bits, column n b + t (bit t, MSB first, of symbol n)
  one,               ///< 1: a column vector's second dimension, left out of vector files
};

/// What a node is in hardware.
enum class node_role : std::uint8_t {
  converter,    ///< an ADC/DAC or a conversion of golden values into words
  rom,          ///< a stored constant table
  accumulator,  ///< a sum of terms: takes an accumulation order (fixedpoint/accumulator.hpp)
  register_,    ///< the requantised result of one operation
};

/// One row of the node table.
struct node_row {
  node_id id;
  std::string_view name;
  bool is_complex;
  std::array<dim, 2> dims;  ///< rows, columns of the words (row-major)
  node_role role;
  std::string_view holds;  ///< what it holds, one line (the README node table says the same)
};

/// The reference datapath's rows, in datapath order.
inline constexpr std::array reference_node_table{
    node_row{node_id::adc,
             "adc",
             true,
             {dim::antenna, dim::pilot_symbol},
             node_role::converter,
             "received pilot block after the AGC"},
    node_row{node_id::pilot_rom,
             "pilot_rom",
             true,
             {dim::pilot_symbol, dim::user},
             node_role::rom,
             "stored pilot sequences"},
    node_row{node_id::pilot_acc,
             "pilot_acc",
             true,
             {dim::antenna, dim::user},
             node_role::accumulator,
             "correlator accumulator sum_t adc[m,t] conj(pilot_rom[t,k])"},
    node_row{node_id::est_scale,
             "est_scale",
             false,
             {dim::user, dim::one},
             node_role::rom,
             "per-user estimator scale (LS or MMSE)"},
    node_row{node_id::chan_est,
             "chan_est",
             true,
             {dim::antenna, dim::user},
             node_role::register_,
             "channel estimate H_hat = pilot_acc est_scale"},
    node_row{node_id::est_exp,
             "est_exp",
             false,
             {dim::user, dim::one},
             node_role::register_,
             "block floating point: column k of chan_est holds mantissas of H_hat[:,k] 2^-(top - est_exp[k])"},
    node_row{node_id::gram,
             "gram",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "G = H_hat^H H_hat (+ RZF loading), summed over antennas"},
    node_row{node_id::ldl_acc,
             "ldl_acc",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "LDL^H accumulator: d_j on the diagonal, l_ij d_j below"},
    node_row{node_id::recip_rom,
             "recip_rom",
             false,
             {dim::recip_entry, dim::one},
             node_role::rom,
             "seed ROM of the reciprocal unit: 1 / (midpoint of entry i's mantissa interval)"},
    node_row{node_id::recip_mant,
             "recip_mant",
             false,
             {dim::user, dim::one},
             node_role::register_,
             "reciprocal unit: input magnitude normalised by its leading-one position, in [1/2, 1]"},
    node_row{node_id::recip_prod,
             "recip_prod",
             false,
             {dim::user, dim::recip_step},
             node_role::register_,
             "reciprocal unit: p_k = recip_mant x_k, Newton steps side by side"},
    node_row{node_id::recip_iter,
             "recip_iter",
             false,
             {dim::user, dim::recip_step},
             node_role::register_,
             "reciprocal unit: x_k+1 = x_k (2 - p_k), Newton steps side by side"},
    node_row{node_id::inv_diag_recip,
             "inv_diag_recip",
             false,
             {dim::user, dim::one},
             node_role::register_,
             "1 / d_j (LDL^H) or 1 / G_jj (Neumann, Gauss-Seidel)"},
    node_row{node_id::inv_factor,
             "inv_factor",
             true,
             {dim::user, dim::user},
             node_role::register_,
             "L, strictly lower part"},
    node_row{node_id::inv_fwd,
             "inv_fwd",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "forward substitution L y = e_c for every column: L^-1"},
    node_row{node_id::chol_acc,
             "chol_acc",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "Cholesky accumulator: residual r_j on the diagonal, numerators l_ij l_jj below"},
    node_row{node_id::chol_rsqrt_rom,
             "chol_rsqrt_rom",
             false,
             {dim::chol_rsqrt_entry, dim::one},
             node_role::rom,
             "seed ROM of the Cholesky diagonal's rsqrt unit: 1 / sqrt(midpoint of entry i's interval)"},
    node_row{node_id::chol_rsqrt_mant,
             "chol_rsqrt_mant",
             false,
             {dim::user, dim::one},
             node_role::register_,
             "Cholesky rsqrt unit: input normalised by an even shift, in [1/4, 1]"},
    node_row{node_id::chol_rsqrt_sq,
             "chol_rsqrt_sq",
             false,
             {dim::user, dim::chol_rsqrt_step},
             node_role::register_,
             "Cholesky rsqrt unit: s_k = x_k^2, Newton steps side by side"},
    node_row{node_id::chol_rsqrt_prod,
             "chol_rsqrt_prod",
             false,
             {dim::user, dim::chol_rsqrt_step},
             node_role::register_,
             "Cholesky rsqrt unit: p_k = chol_rsqrt_mant s_k, Newton steps side by side"},
    node_row{node_id::chol_rsqrt_iter,
             "chol_rsqrt_iter",
             false,
             {dim::user, dim::chol_rsqrt_step},
             node_role::register_,
             "Cholesky rsqrt unit: x_k+1 = x_k (3 - p_k) / 2, Newton steps side by side"},
    node_row{node_id::chol_diag_rsqrt,
             "chol_diag_rsqrt",
             false,
             {dim::user, dim::one},
             node_role::register_,
             "1 / l_jj = 1 / sqrt(r_j), the Cholesky diagonal's reciprocal root"},
    node_row{node_id::chol_factor,
             "chol_factor",
             true,
             {dim::user, dim::user},
             node_role::register_,
             "Cholesky factor L, strictly lower part"},
    node_row{node_id::chol_fwd,
             "chol_fwd",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "forward substitution L y = e_c for every column with the reciprocal roots: L^-1"},
    node_row{node_id::inv_iter,
             "inv_iter",
             true,
             {dim::user, dim::user},
             node_role::register_,
             "iteration matrix B = I - D^-1 G (Neumann, Gauss-Seidel)"},
    node_row{node_id::inv_term,
             "inv_term",
             true,
             {dim::user, dim::term_user},
             node_role::accumulator,
             "Neumann terms B^n D^-1, n = 1..T-1, side by side"},
    node_row{node_id::gs_sweep,
             "gs_sweep",
             true,
             {dim::user, dim::sweep_user},
             node_role::accumulator,
             "Gauss-Seidel iterates X_s, s = 1..S-1, side by side"},
    node_row{node_id::inv_out, "inv_out", true, {dim::user, dim::user}, node_role::accumulator, "G^-1"},
    node_row{node_id::precoder,
             "precoder",
             true,
             {dim::antenna, dim::user},
             node_role::accumulator,
             "W before scaling: conj(H_hat) (MF) or conj(H_hat G^-1)"},
    node_row{node_id::pre_exp,
             "pre_exp",
             false,
             {dim::one, dim::one},
             node_role::register_,
             "block floating point: precoder holds mantissas of W 2^-(top - pre_exp)"},
    node_row{node_id::power_acc,
             "power_acc",
             false,
             {dim::power_group, dim::one},
             node_role::accumulator,
             "sum |W|^2, total or per antenna"},
    node_row{node_id::rsqrt_rom,
             "rsqrt_rom",
             false,
             {dim::rsqrt_entry, dim::one},
             node_role::rom,
             "seed ROM of the reciprocal square root unit: 1 / sqrt(midpoint of entry i's interval)"},
    node_row{node_id::rsqrt_mant,
             "rsqrt_mant",
             false,
             {dim::power_group, dim::one},
             node_role::register_,
             "rsqrt unit: input normalised by an even shift, in [1/4, 1]"},
    node_row{node_id::rsqrt_sq,
             "rsqrt_sq",
             false,
             {dim::power_group, dim::rsqrt_step},
             node_role::register_,
             "rsqrt unit: s_k = x_k^2, Newton steps side by side"},
    node_row{node_id::rsqrt_prod,
             "rsqrt_prod",
             false,
             {dim::power_group, dim::rsqrt_step},
             node_role::register_,
             "rsqrt unit: p_k = rsqrt_mant s_k, Newton steps side by side"},
    node_row{node_id::rsqrt_iter,
             "rsqrt_iter",
             false,
             {dim::power_group, dim::rsqrt_step},
             node_role::register_,
             "rsqrt unit: x_k+1 = x_k (3 - p_k) / 2, Newton steps side by side"},
    node_row{node_id::norm, "norm", false, {dim::power_group, dim::one}, node_role::register_, "1 / sqrt(power_acc)"},
    node_row{node_id::tx_gain,
             "tx_gain",
             false,
             {dim::one, dim::one},
             node_role::rom,
             "sqrt(P_dig) (total) or sqrt(P_dig / M) (per antenna)"},
    node_row{node_id::weights, "weights", true, {dim::antenna, dim::user}, node_role::register_, "W norm tx_gain"},
    node_row{node_id::symbols, "symbols", true, {dim::user, dim::symbol}, node_role::rom, "QAM symbols"},
    node_row{node_id::tx_acc,
             "tx_acc",
             true,
             {dim::antenna, dim::symbol},
             node_role::accumulator,
             "precoding accumulator sum_k weights[m,k] symbols[k,n]"},
    node_row{node_id::dac, "dac", true, {dim::antenna, dim::symbol}, node_role::converter, "transmitted samples"},
    node_row{node_id::ul_adc,
             "ul_adc",
             true,
             {dim::antenna, dim::ul_symbol},
             node_role::converter,
             "uplink data block after the AGC, through the one ADC (adc's setting)"},
    node_row{node_id::ul_match,
             "ul_match",
             true,
             {dim::user, dim::ul_symbol},
             node_role::accumulator,
             "matched filter sum_m conj(chan_est[m,k]) ul_adc[m,n]"},
    node_row{node_id::ul_gram,
             "ul_gram",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "the uplink's own Gram sum_m conj(chan_est[m,i]) chan_est[m,j] (+ 1/rho_ul for MMSE)"},
    node_row{node_id::ul_ldl_acc,
             "ul_ldl_acc",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "LDL^H accumulator of ul_gram: d_j on the diagonal, l_ij d_j below"},
    node_row{node_id::ul_inv_recip,
             "ul_inv_recip",
             false,
             {dim::user, dim::one},
             node_role::register_,
             "1 / d_j of ul_gram's LDL^H (exact reciprocal)"},
    node_row{node_id::ul_inv_factor,
             "ul_inv_factor",
             true,
             {dim::user, dim::user},
             node_role::register_,
             "L of ul_gram's LDL^H, strictly lower part"},
    node_row{node_id::ul_inv_fwd,
             "ul_inv_fwd",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "forward substitution of ul_inv_factor: L^-1"},
    node_row{node_id::ul_inv_out,
             "ul_inv_out",
             true,
             {dim::user, dim::user},
             node_role::accumulator,
             "the uplink's own inverse ul_gram^-1"},
    node_row{node_id::ul_comb,
             "ul_comb",
             true,
             {dim::user, dim::ul_symbol},
             node_role::accumulator,
             "ZF / MMSE combiner sum_j inv_out[k,j] ul_match[j,n] (ul_inv_out with inverse = \"own\")"},
    node_row{node_id::ul_scale,
             "ul_scale",
             false,
             {dim::user, dim::one},
             node_role::converter,
             "per-user gain onto the constellation's odd-integer grid (from the golden estimate, converted)"},
    node_row{node_id::ul_eq,
             "ul_eq",
             true,
             {dim::user, dim::ul_symbol},
             node_role::register_,
             "equalised symbols ul_scale[k] (ul_comb or ul_match)[k,n]"},
    node_row{node_id::ul_llr,
             "ul_llr",
             false,
             {dim::user, dim::ul_bit},
             node_role::register_,
             "max-log distance difference of each bit of ul_eq (positive favours 0)"},
};
inline constexpr std::size_t num_reference_nodes = reference_node_table.size();

namespace detail {
constexpr bool rows_in_enum_order() {
  for (std::size_t i = 0; i < reference_node_table.size(); ++i)
    if (static_cast<std::size_t>(reference_node_table[i].id) != i) return false;
  return true;
}
}  // namespace detail
// A row missing, repeated or out of order does not compile. The last enumerator is the last row.
static_assert(detail::rows_in_enum_order(), "node table rows must follow node_id order");
static_assert(static_cast<std::size_t>(node_id::ul_llr) + 1 == num_reference_nodes,
              "every node_id needs its row in reference_node_table");

constexpr std::size_t index_of(node_id id) { return static_cast<std::size_t>(id); }

/// The node whose setting (format, rounding, overflow) a node uses: itself, except a node that
/// is a second use of one piece of hardware (ul_adc is the adc converter at another time). A
/// configuration reads and writes such a node's setting at its home's (config.hpp).
constexpr node_id setting_home(node_id id) { return id == node_id::ul_adc ? node_id::adc : id; }

/// A row of a node added by a program of its own (owns its strings).
struct custom_node {
  std::string name;
  bool is_complex = true;
  std::array<dim, 2> dims{dim::one, dim::one};
  node_role role = node_role::register_;
  std::string holds;
};

/// Adds a node row after the reference rows and returns its id. Call before running anything
/// (not thread-safe against concurrent runs). Throws std::invalid_argument for a name already
/// taken or not a lower-case identifier.
node_id register_node(const custom_node& row);

/// Rows known now: the reference rows, then registered ones.
std::size_t node_count();
/// Every known node in table order.
std::vector<node_id> all_nodes();
std::string_view node_name(node_id id);
bool node_is_complex(node_id id);
node_role role_of(node_id id);
std::array<dim, 2> dims_of(node_id id);
std::optional<node_id> parse_node_name(std::string_view name);
/// "adc, pilot_rom, ..." for messages and help.
std::string list_node_names();

}  // namespace fxmimo::datapath
