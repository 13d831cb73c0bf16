// The pilot correlator: pilot_acc[m,k] = sum over pilot symbols t of Q(adc[m,t] conj(pilot_rom[t,k])),
// in index order (or the node's accumulation order).
#include "../stage_support.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class correlator final : public stage {
 public:
  correlator() : stage("correlator", {{node_id::pilot_acc, {node_id::adc, node_id::pilot_rom}}}) {}
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1))}, bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 4 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));  // one complex multiplier
  }
  /// A part of a complex product, re(a) re(b) -/+ im(a) im(b), reaches 2^(ma + mb + 1) when every
  /// part is the most negative word, and a signed Qm.n holds only |v| < 2^m: hence + 2, then
  /// log2(tau_p) for the sum (common practice).
  [[nodiscard]] std::optional<growth_rule> growth(node_id, const datapath_config& c,
                                                  const dimension_sizes& dims) const override {
    return growth_rule{int_bits_of(c, source(0, 0)) + int_bits_of(c, source(0, 1)) + 2 + ceil_log2(dims.pilot_symbol),
                       fmt_rule()};
  }
  void compute(fixed_context& ctx) const override {
    const node_state adc = state(ctx, source(0, 0)), pilot = state(ctx, source(0, 1));
    node_state acc_node = state(ctx, output(0));
    const word_matrix& y = *adc.words;
    const word_matrix& phi = *pilot.words;
    const int num_ant = y.rows, num_pilot = y.cols, num_users = phi.cols;
    *acc_node.words = word_matrix(num_ant, num_users, true);
    const fp::requantizer<word> q(acc_node.spec);
    const std::vector<cw> ys = interleaved(y), phis = interleaved(phi);
    const auto stride = static_cast<std::size_t>(num_users), n = static_cast<std::size_t>(num_pilot);
    if (acc_node.sequential()) {
      // Per antenna, one sequential MAC per user, all users at once (the vector kernel's lanes
      // are users): adc[m,t] is shared, pilot_rom row t (row-major) a column over the users.
      const fp::lane_operand pilots{phis.data(), stride, fp::lane_spread::column, pilot.bits(), pilot.frac()};
      for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
        const fp::lane_operand samples{&ys[y.at(i_ant, 0)], 1, fp::lane_spread::shared, adc.bits(), adc.frac()};
        sequential_row<fp::product_form::conj_second>(samples, pilots, n, q, acc_node, i_ant, 0, num_users);
      }
      return;
    }
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const fp::requantizer<P> q_tree(acc_node.spec);
      fp::complex_accumulator<P> tree(q_tree, acc_node.order);
      for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
        for (int i_user = 0; i_user < num_users; ++i_user) {
          put(*acc_node.words, i_ant, i_user,
              dot_in_order<fp::product_form::conj_second>(&ys[y.at(i_ant, 0)], 1, &phis[phi.at(0, i_user)], stride, n,
                                                          adc.bits(), pilot.bits(), adc.frac() + pilot.frac(), q, tree,
                                                          acc_node));
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.trial.pilot_acc); }

 private:
  [[nodiscard]] std::string fmt_rule() const {
    return std::string(node_name(source(0, 0))) + " + " + std::string(node_name(source(0, 1))) + " + 2 + log2(tau_p)";
  }
};

}  // namespace

std::shared_ptr<stage> make_correlator() { return std::make_shared<correlator>(); }

}  // namespace fxmimo::datapath::detail
