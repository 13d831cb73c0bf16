// The precoding accumulator: tx_acc[m,n] = sum over users k (index order, or the node's
// accumulation order) of Q(weights[m,k] symbols[k,n]).
#include "../stage_support.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class transmit_stage final : public stage {
 public:
  transmit_stage() : stage("transmit", {{node_id::tx_acc, {node_id::weights, node_id::symbols}}}) {}
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1))}, bits_of(c, output(0)));
  }
  /// One complex multiplier per antenna lane.
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes& dims) const override {
    return 4 * dims.antenna * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));
  }
  /// One accumulator register pair per antenna lane: the samples stream out.
  [[nodiscard]] double storage_words(node_id, const dimension_sizes& dims) const override { return 2.0 * dims.antenna; }
  /// Complex product parts + 2 (see the correlator), log2(K) for the sum over users.
  [[nodiscard]] std::optional<growth_rule> growth(node_id, const datapath_config& c,
                                                  const dimension_sizes& dims) const override {
    return growth_rule{
        int_bits_of(c, source(0, 0)) + int_bits_of(c, source(0, 1)) + 2 + ceil_log2(dims.user),
        std::string(node_name(source(0, 0))) + " + " + std::string(node_name(source(0, 1))) + " + 2 + log2(K)"};
  }
  void compute(fixed_context& ctx) const override {
    const node_state wts = state(ctx, source(0, 0)), sym = state(ctx, source(0, 1));
    node_state tx = state(ctx, output(0));
    const word_matrix& w = *wts.words;
    const word_matrix& s = *sym.words;
    const int num_ant = w.rows, num_users = w.cols, num_sym = s.cols;
    *tx.words = word_matrix(num_ant, num_sym, true);
    const std::vector<cw> ws = interleaved(w), ss = interleaved(s);
    const auto sum = [&](auto&& dot) {
      for (int i_ant = 0; i_ant < num_ant; ++i_ant)
        for (int i_sym = 0; i_sym < num_sym; ++i_sym)
          put(*tx.words, i_ant, i_sym, dot(&ws[w.at(i_ant, 0)], &ss[s.at(0, i_sym)]));
    };
    const auto stride = static_cast<std::size_t>(num_sym), n = static_cast<std::size_t>(num_users);
    const int product_frac = wts.frac() + sym.frac();
    if (tx.sequential()) {
      // The hot loop: per antenna, one sequential MAC per symbol, all symbols at once (the
      // vector kernel's lanes are symbols): weights[m,k] is shared, symbol row k a column.
      const fp::requantizer<word> q_tx(tx.spec);
      const fp::lane_operand symbols{ss.data(), stride, fp::lane_spread::column, sym.bits(), sym.frac()};
      for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
        const fp::lane_operand weights{&ws[w.at(i_ant, 0)], 1, fp::lane_spread::shared, wts.bits(), wts.frac()};
        sequential_row<fp::product_form::plain>(weights, symbols, n, q_tx, tx, i_ant, 0, num_sym);
      }
      return;
    }
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const fp::requantizer<word> q_tx(tx.spec);
      const fp::requantizer<P> q_tree(tx.spec);
      fp::complex_accumulator<P> tree(q_tree, tx.order);
      sum([&](const cw* a, const cw* b) {
        return dot_in_order<fp::product_form::plain>(a, 1, b, stride, n, wts.bits(), sym.bits(), product_frac, q_tx,
                                                     tree, tx);
      });
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.data().tx); }
};

}  // namespace

std::shared_ptr<stage> make_transmit() { return std::make_shared<transmit_stage>(); }

}  // namespace fxmimo::datapath::detail
