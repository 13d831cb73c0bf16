#pragma once
/// The named registers of the reference datapath (README "How it computes"), each with its own
/// format, rounding and overflow mode, and how a scenario file sets them.

#include "fxmimo/fixedpoint/requantize.hpp"
#include "fxmimo/golden/scenario.hpp"

#include <array>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace fxmimo::harness {

/// Datapath nodes in datapath order.
enum class node_id {
  adc,             ///< received pilot block after the AGC (M x tau_p)
  pilot_rom,       ///< stored pilot sequences (tau_p x K)
  pilot_acc,       ///< correlator accumulator sum_t adc[m,t] conj(pilot[t,k]) (M x K)
  est_scale,       ///< per-user estimator scale, LS or MMSE (K)
  chan_est,        ///< channel estimate H_hat = pilot_acc * est_scale (M x K)
  gram,            ///< G = H_hat^H H_hat (+ regulariser), summed over antennas (K x K)
  ldl_acc,         ///< LDL^H accumulator: d_j on the diagonal, l_ij d_j below (K x K)
  inv_diag_recip,  ///< 1 / d_j (LDL) or 1 / G_jj (Neumann) (K)
  inv_factor,      ///< L, strictly lower part (K x K)
  inv_fwd,         ///< forward substitution L y = e_c, all columns: L^-1 (K x K)
  inv_iter,        ///< Neumann iteration matrix B = I - D^-1 G (K x K)
  inv_term,        ///< Neumann terms B^n D^-1, n = 1..T-1, side by side (K x K(T-1))
  inv_out,         ///< G^-1 (K x K)
  precoder,        ///< W before scaling: conj(H_hat) (MF) or conj(H_hat G^-1) (M x K)
  power_acc,       ///< sum |W|^2, total (1) or per antenna (M)
  norm,            ///< 1 / sqrt(power_acc) (1 or M)
  tx_gain,         ///< constant sqrt(P_dig) (total) or sqrt(P_dig / M) (per antenna)
  weights,         ///< W * norm * tx_gain (M x K)
  symbols,         ///< QAM symbols (K x N)
  tx_acc,          ///< precoding accumulator sum_k weights[m,k] symbols[k,n] (M x N)
  dac,             ///< transmitted samples (M x N)
};
inline constexpr std::size_t num_nodes = 21;

inline constexpr std::array<node_id, num_nodes> all_nodes{
    node_id::adc,       node_id::pilot_rom, node_id::pilot_acc,      node_id::est_scale, node_id::chan_est,
    node_id::gram,      node_id::ldl_acc,   node_id::inv_diag_recip, node_id::inv_factor, node_id::inv_fwd,
    node_id::inv_iter,  node_id::inv_term,  node_id::inv_out,        node_id::precoder,  node_id::power_acc,
    node_id::norm,      node_id::tx_gain,   node_id::weights,        node_id::symbols,   node_id::tx_acc,
    node_id::dac};

constexpr std::size_t index_of(node_id id) { return static_cast<std::size_t>(id); }
std::string_view node_name(node_id id);
std::optional<node_id> parse_node_name(std::string_view name);
/// "adc, pilot_rom, ..." for messages and help.
std::string list_node_names();

/// False for the real-valued nodes (est_scale, inv_diag_recip, power_acc, norm, tx_gain).
bool node_is_complex(node_id id);

/// Nodes the scenario's algorithm uses (MF skips the Gram and inverse nodes; LDL and Neumann
/// use different inverse nodes; Neumann with one term has no inv_term).
std::vector<node_id> active_nodes(const golden::scenario& scen);

/// One node's requantisation target and whether it came from the documented default.
struct node_setting {
  fixedpoint::target spec;
  bool is_default = true;
};

/// The datapath configuration: one setting per node.
struct datapath_config {
  std::array<node_setting, num_nodes> nodes;
  [[nodiscard]] const node_setting& operator[](node_id id) const { return nodes[index_of(id)]; }
  node_setting& operator[](node_id id) { return nodes[index_of(id)]; }
};

/// The wide default for a node without a table: Q20.43 (64 bits), half_even, saturate.
fixedpoint::target default_target();
/// Largest word a datapath node may hold (words are 64-bit integers in the datapath model).
inline constexpr int max_node_word_bits = 64;

/// Reads the `[nodes.NAME]` tables of a scenario (keys: format, rounding, overflow; format in
/// Q notation or W,F). Unknown nodes or keys, bad formats, W > 64 are errors that name the
/// file, line and key (golden::scenario_error). Nodes without a table keep the default.
datapath_config parse_datapath_config(std::string_view toml_text, const std::string& source_name);

/// The `[nodes]` section of a scenario as TOML text, for writing a scenario back.
std::string to_toml(const datapath_config& config);

}  // namespace fxmimo::harness
