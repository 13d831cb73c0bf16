#pragma once
// A divide or root node of a stage, built as the scenario's [units.NODE] says: the exact unit
// (fixedpoint/divide.hpp, the result rounded once) or a table + Newton-Raphson unit
// (fixedpoint/newton.hpp) whose intermediates are nodes of their own. The stages that compute
// inv_diag_recip (ldl, neumann, gauss_seidel), chol_diag_rsqrt (cholesky) and norm (power) hold
// one; it is the one home of the unit's nodes, ports, words, golden view and cost.
#include <vector>

#include "../stage_support.hpp"
#include "fxmimo/fixedpoint/newton.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::datapath::detail {

/// The nodes of one unit: its output and its intermediates (`square` only for rsqrt). The
/// entry and step dimensions are those of the rom's and prod's node-table rows.
struct unit_nodes {
  node_id output, rom, mant, square, prod, iter;
};
/// inv_diag_recip: 1 / d_j (LDL^H) or 1 / G_jj (Neumann, Gauss-Seidel), the recip_* nodes.
inline constexpr unit_nodes diag_recip_nodes{node_id::inv_diag_recip, node_id::recip_rom,  node_id::recip_mant,
                                             node_id::recip_prod,     node_id::recip_prod, node_id::recip_iter};
/// norm: 1 / sqrt(power_acc), the rsqrt_* nodes.
inline constexpr unit_nodes norm_nodes{node_id::norm,     node_id::rsqrt_rom,  node_id::rsqrt_mant,
                                       node_id::rsqrt_sq, node_id::rsqrt_prod, node_id::rsqrt_iter};
/// chol_diag_rsqrt: 1 / sqrt(r_j) of the Cholesky diagonal, the chol_rsqrt_* nodes.
inline constexpr unit_nodes chol_rsqrt_nodes{node_id::chol_diag_rsqrt, node_id::chol_rsqrt_rom,
                                             node_id::chol_rsqrt_mant, node_id::chol_rsqrt_sq,
                                             node_id::chol_rsqrt_prod, node_id::chol_rsqrt_iter};

class divide_root_unit {
 public:
  /// `function`: reciprocal or rsqrt; `nodes`: the output and intermediate nodes it computes.
  divide_root_unit(fp::newton_function function, const golden::unit_choice& choice, const unit_nodes& nodes);

  [[nodiscard]] bool newton() const { return choice_.newton; }
  [[nodiscard]] node_id output() const;
  /// The unit's own nodes' ports, in datapath order, then the output's port: `input` is the
  /// node whose words the unit inverts, `output_sources` the output's other sources.
  [[nodiscard]] std::vector<port> ports(node_id input) const;
  /// Sizes of the unit's dimensions.
  void set_dims(dimension_sizes& dims) const;

  /// One evaluation context per compute: the ROM words written, the intermediate nodes sized
  /// for `num_values` inputs.
  struct session {
    fp::newton_unit unit;
    std::vector<std::int64_t> rom;
    fp::newton_counters counts;
    node_state mant, square, prod, iter;
  };
  session start(fixed_context& ctx, int num_values) const;
  /// The output word of input i: x (x_frac fraction bits) through the unit into `out`.
  word evaluate(session& s, int i, word x, int x_frac, node_state& out) const;
  /// Adds the session's intermediate counts to their nodes' counters.
  void finish(session& s) const;

  /// The golden values of the unit's nodes for these golden inputs (the output's is set by the
  /// stage): the ROM's exact entries, each input's mantissa (frexp, made even for rsqrt), every
  /// product at its fixed point 1, every iterate and square at its limit.
  void golden_view(golden_context& ctx, const Eigen::VectorXd& inputs) const;
  /// Multipliers of the unit, unrolled over its steps and time-shared over its inputs as the
  /// stages' other multipliers are (tune's area model): per step m x and x (2 - p), or x^2, m s
  /// and x (3 - p), operand widths multiplied. The exact unit (the input node `input`) counts as
  /// a digit-recurrence array of W_out x W_in cells, like a multiplier of those widths (twice
  /// that for the reciprocal root: a root recurrence, then a division; common practice, e.g.
  /// Ercegovac & Lang, Digital Arithmetic, 2004, ch. 5 and 6, from memory).
  [[nodiscard]] double multiplier_cost(const datapath_config& c, node_id input) const;

 private:
  fp::newton_function function_;
  golden::unit_choice choice_;
  node_id output_, rom_, mant_, square_, prod_, iter_;
};

}  // namespace fxmimo::datapath::detail
