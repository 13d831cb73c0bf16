#pragma once
// A divide or root node of a stage, built as the scenario's [units.NODE] says: the exact unit
// (fixedpoint/divide.hpp, the result rounded once) or a table + Newton-Raphson unit
// (fixedpoint/newton.hpp) whose intermediates are nodes of their own. The stages that compute
// inv_diag_recip (ldl, neumann) and norm (power) hold one; it is the one home of the unit's
// nodes, ports, words, golden view and cost.
#include <vector>

#include "../stage_support.hpp"
#include "fxmimo/fixedpoint/newton.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::datapath::detail {

class divide_root_unit {
 public:
  /// `function`: reciprocal (output inv_diag_recip) or rsqrt (output norm).
  divide_root_unit(fp::newton_function function, const golden::unit_choice& choice);

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
  /// and x (3 - p), operand widths multiplied; 0 for the exact unit (not modelled).
  [[nodiscard]] double multiplier_cost(const datapath_config& c) const;

 private:
  fp::newton_function function_;
  golden::unit_choice choice_;
  node_id rom_, mant_, square_, prod_, iter_;
};

}  // namespace fxmimo::datapath::detail
