// The precoder before scaling: MF W[m,k] = Q(conj(H[m,k])); ZF/RZF W[m,k] = sum over j (index
// order, or the node's accumulation order) of Q(conj(H[m,j] A[j,k])), which is conj(H A). With
// block floating point on the estimate the precoder undoes the exponents: H = H' 2^E and
// A = 2^-E A' 2^-E give H A = H' A' 2^-E, so column k's products are read at e_k more fraction
// bits (ZF, RZF) and the MF estimate's at e_k fewer: the precoder's words are values again.
#include "../stage_support.hpp"
#include "fxmimo/datapath/block_float.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class precoder_stage final : public stage {
 public:
  precoder_stage(bool uses_inverse, std::optional<int> block_top)
      : stage("precoder", {{node_id::precoder, sources_for(uses_inverse, block_top.has_value())}}),
        uses_inverse_(uses_inverse),
        block_top_(block_top) {}
  /// The exponents end here (see the file comment).
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id) const override { return exponent_law{}; }
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int est = bits_of(c, source(0, 0)), pre = bits_of(c, output(0));
    return uses_inverse_ ? product_bits({est, bits_of(c, source(0, 1))}, pre) : std::max(est, pre) + 2;
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return uses_inverse_ ? 4 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1)) : 0.0;
  }
  void compute(fixed_context& ctx) const override {
    const node_state est = state(ctx, source(0, 0));
    node_state pre = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& h = *est.words;
      *pre.words = word_matrix(h.rows, h.cols, true);
      const fp::requantizer<P> q(pre.spec);
      // Column k's exponent, 0 without block floating point.
      const Eigen::VectorXi e =
          block_top_ ? fixed_block_exponents(*block_top_, ctx.config, ctx.words) : Eigen::VectorXi::Zero(h.cols);
      if (!uses_inverse_) {
        for (int i_ant = 0; i_ant < h.rows; ++i_ant) {
          for (int i_user = 0; i_user < h.cols; ++i_user) {
            const cw v = get(h, i_ant, i_user);
            const fp::cword<P> conj_v{fp::convert_int<P>(v.re), P(-fp::convert_int<P>(v.im))};
            put(*pre.words, i_ant, i_user, narrow(fp::requantize(conj_v, est.frac() - e(i_user), q, *pre.counters)));
          }
        }
        return;
      }
      const node_state inverse = state(ctx, source(0, 1));
      const word_matrix& a = *inverse.words;
      const fp::requantizer<word> q_acc(pre.spec);
      fp::complex_accumulator<P> tree(q, pre.order);
      const std::vector<cw> hs = interleaved(h), as = interleaved(a);
      const auto stride = static_cast<std::size_t>(a.cols), n = static_cast<std::size_t>(h.cols);
      if (pre.sequential() && !block_top_) {
        // Per antenna, one sequential MAC per user, all users at once (the vector kernel's lanes
        // are users): H[m,j] is shared, row j of A (row-major) a column over the users.
        const fp::lane_operand inverse_rows{as.data(), stride, fp::lane_spread::column, inverse.bits(), inverse.frac()};
        for (int i_ant = 0; i_ant < h.rows; ++i_ant) {
          const fp::lane_operand channel{&hs[h.at(i_ant, 0)], 1, fp::lane_spread::shared, est.bits(), est.frac()};
          sequential_row<fp::product_form::conj_both>(channel, inverse_rows, n, q_acc, pre, i_ant, 0, h.cols);
        }
        return;
      }
      for (int i_ant = 0; i_ant < h.rows; ++i_ant) {
        for (int i_user = 0; i_user < h.cols; ++i_user) {
          put(*pre.words, i_ant, i_user,
              dot_in_order<fp::product_form::conj_both>(&hs[h.at(i_ant, 0)], 1, &as[a.at(0, i_user)], stride, n,
                                                        est.bits(), inverse.bits(),
                                                        est.frac() + inverse.frac() + e(i_user), q_acc, tree, pre));
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.trial.precoder); }

 private:
  static std::vector<node_id> sources_for(bool uses_inverse, bool block_float) {
    std::vector<node_id> out{node_id::chan_est};
    if (uses_inverse) out.push_back(node_id::inv_out);
    if (block_float) out.push_back(node_id::est_exp);
    return out;
  }

  bool uses_inverse_;
  std::optional<int> block_top_;
};

}  // namespace

std::shared_ptr<stage> make_precoder(bool uses_inverse, std::optional<int> block_top) {
  return std::make_shared<precoder_stage>(uses_inverse, block_top);
}

}  // namespace fxmimo::datapath::detail
