// The stored weights: weights[m,k] = Q(W[m,k] norm tx_gain), the triple product exact.
#include "../stage_support.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class weights_stage final : public stage {
 public:
  weights_stage() : stage("weights", {{node_id::weights, {node_id::precoder, node_id::norm, node_id::tx_gain}}}) {}
  /// W' norm' = 2^-f W 2^f norm: the precoder's exponent cancels here.
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id) const override { return exponent_law{}; }
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1)), bits_of(c, source(0, 2))},
                        bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 2 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));
  }
  void compute(fixed_context& ctx) const override {
    const node_state pre = state(ctx, source(0, 0)), norm = state(ctx, source(0, 1)), gain = state(ctx, source(0, 2));
    node_state wts = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& w = *pre.words;
      *wts.words = word_matrix(w.rows, w.cols, true);
      const fp::requantizer<P> q(wts.spec);
      const int product_frac = pre.frac() + norm.frac() + gain.frac();
      const P g = fp::convert_int<P>(gain.words->re[0]);
      for (int i_ant = 0; i_ant < w.rows; ++i_ant) {
        const std::size_t i_norm = norm.words->size() == 1 ? 0 : static_cast<std::size_t>(i_ant);
        const P ng = P(fp::convert_int<P>(norm.words->re[i_norm]) * g);
        for (int i_user = 0; i_user < w.cols; ++i_user) {
          const cw v = get(w, i_ant, i_user);
          const fp::cword<P> p{P(fp::convert_int<P>(v.re) * ng), P(fp::convert_int<P>(v.im) * ng)};
          put(*wts.words, i_ant, i_user, narrow(fp::requantize(p, product_frac, q, *wts.counters)));
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.trial.weights); }
};

}  // namespace

std::shared_ptr<stage> make_weights() { return std::make_shared<weights_stage>(); }

}  // namespace fxmimo::datapath::detail
