// The LS / MMSE channel estimate: chan_est[m,k] = Q(pilot_acc[m,k] est_scale[k]).
#include "../stage_support.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class estimate final : public stage {
 public:
  estimate() : stage("estimate", {{node_id::chan_est, {node_id::pilot_acc, node_id::est_scale}}}) {}
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1))}, bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 2 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));  // complex times real
  }
  /// Product of a part and a real scale: |a b| < 2^(ma + mb), + 1 for the most negative words.
  [[nodiscard]] std::optional<growth_rule> growth(node_id, const datapath_config& c,
                                                  const dimension_sizes&) const override {
    return growth_rule{int_bits_of(c, source(0, 0)) + int_bits_of(c, source(0, 1)) + 1,
                       std::string(node_name(source(0, 0))) + " + " + std::string(node_name(source(0, 1))) + " + 1"};
  }
  void compute(fixed_context& ctx) const override {
    const node_state pacc = state(ctx, source(0, 0)), scale_node = state(ctx, source(0, 1));
    node_state est = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& a = *pacc.words;
      *est.words = word_matrix(a.rows, a.cols, true);
      const fp::requantizer<P> q(est.spec);
      const int product_frac = pacc.frac() + scale_node.frac();
      for (int i_ant = 0; i_ant < a.rows; ++i_ant) {
        for (int i_user = 0; i_user < a.cols; ++i_user) {
          const fp::cword<P> p =
              scale<P>(get(a, i_ant, i_user), scale_node.words->re[static_cast<std::size_t>(i_user)]);
          put(*est.words, i_ant, i_user, narrow(fp::requantize(p, product_frac, q, *est.counters)));
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.trial.chan_est); }
};

}  // namespace

std::shared_ptr<stage> make_estimate() { return std::make_shared<estimate>(); }

}  // namespace fxmimo::datapath::detail
