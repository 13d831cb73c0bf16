// The precoder before scaling: MF W[m,k] = Q(conj(H[m,k])); ZF/RZF W[m,k] = sum over j (index
// order, or the node's accumulation order) of Q(conj(H[m,j] A[j,k])), which is conj(H A). With
// block floating point on the estimate the precoder undoes the exponents: H = H' 2^E and
// A = 2^-E A' 2^-E give H A = H' A' 2^-E, so column k's products are read at e_k more fraction
// bits (ZF, RZF) and the MF estimate's at e_k fewer: the precoder's words are values again.
// With block floating point on the precoder itself (one exponent f for all of W) the sums are
// exact (a wide accumulator ahead of the normaliser, whatever the node's order or term format),
// then W[m,k] = Q(sum 2^-f), pre_exp = u = top - f, f the smallest exponent in [top - u_max, top]
// at which every rounded part lies in [-1, 1). The power normalisation cancels f.
#include "block_exponent.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class precoder_stage final : public stage {
 public:
  precoder_stage(bool uses_inverse, std::optional<int> block_top, std::optional<int> whole_top, int num_users)
      : stage("precoder", ports_for(uses_inverse, block_top.has_value(), whole_top.has_value())),
        uses_inverse_(uses_inverse),
        block_top_(block_top),
        whole_top_(whole_top),
        num_users_(num_users) {}
  /// The estimate's exponents end here (see the file comment); the precoder's own is f.
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id id) const override {
    return exponent_law{0, 0, whole_top_ && id == node_id::precoder ? 1 : 0};
  }
  /// A block mantissa lies in [-1, 1).
  [[nodiscard]] std::optional<growth_rule> growth(node_id id, const datapath_config&,
                                                  const dimension_sizes&) const override {
    if (!whole_top_ || id != node_id::precoder) return std::nullopt;
    return growth_rule{0, "block mantissa in [-1, 1)"};
  }
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int est = bits_of(c, source(0, 0)), pre = bits_of(c, output(0));
    // The exact sums of the block-scaled precoder: K complex products, each two real ones.
    if (whole_top_ && uses_inverse_)
      return std::max(est + bits_of(c, source(0, 1)) + 2 + ceil_log2(num_users_), pre + 1);
    return uses_inverse_ ? product_bits({est, bits_of(c, source(0, 1))}, pre) : std::max(est, pre) + 2;
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return uses_inverse_ ? 4 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1)) : 0.0;
  }
  void compute(fixed_context& ctx) const override {
    if (whole_top_) {
      compute_block(ctx);
      return;
    }
    const node_state est = state(ctx, source(0, 0));
    node_state pre = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& h = *est.words;
      *pre.words = word_matrix(h.rows, h.cols, true);
      const fp::requantizer<P> q(pre.spec);
      // Column k's exponent, 0 without block floating point.
      const Eigen::VectorXi e =
          block_top_ ? fixed_user_exponents(*block_top_, ctx.config, ctx.words) : Eigen::VectorXi::Zero(h.cols);
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
  void golden_view(golden_context& ctx) const override {
    ctx.set(output(0), ctx.trial.precoder);
    if (!whole_top_) return;
    const int f = golden_column_exponents(ctx.trial.precoder, *whole_top_).maxCoeff();
    ctx.set(node_id::pre_exp, Eigen::MatrixXcd::Constant(1, 1, static_cast<double>(*whole_top_ - f)));
  }

 private:
  static std::vector<port> ports_for(bool uses_inverse, bool user_exponents, bool whole_exponent) {
    std::vector<node_id> sources{node_id::chan_est};
    if (uses_inverse) sources.push_back(node_id::inv_out);
    if (user_exponents) sources.push_back(node_id::est_exp);
    std::vector<port> out{{node_id::precoder, sources}};
    if (whole_exponent) out.push_back({node_id::pre_exp, sources});
    return out;
  }

  /// The block-scaled precoder (see the file comment).
  void compute_block(fixed_context& ctx) const {
    const node_state est = state(ctx, source(0, 0));
    node_state pre = state(ctx, output(0)), exp = state(ctx, node_id::pre_exp);
    const word_matrix& h = *est.words;
    const Eigen::VectorXi e =
        block_top_ ? fixed_user_exponents(*block_top_, ctx.config, ctx.words) : Eigen::VectorXi::Zero(h.cols);
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      // The exact sums and the fraction bits of column k (the estimate's exponent undone).
      std::vector<fp::cword<P>> sums(static_cast<std::size_t>(h.rows) * static_cast<std::size_t>(h.cols));
      std::vector<int> frac(static_cast<std::size_t>(h.cols));
      const auto at = [&](int m, int k) {
        return static_cast<std::size_t>(m) * static_cast<std::size_t>(h.cols) + static_cast<std::size_t>(k);
      };
      if (!uses_inverse_) {
        for (int k = 0; k < h.cols; ++k) frac[static_cast<std::size_t>(k)] = est.frac() - e(k);
        for (int m = 0; m < h.rows; ++m)
          for (int k = 0; k < h.cols; ++k) {
            const cw v = get(h, m, k);
            sums[at(m, k)] = {fp::convert_int<P>(v.re), P(-fp::convert_int<P>(v.im))};
          }
      } else {
        const node_state inverse = state(ctx, source(0, 1));
        const word_matrix& a = *inverse.words;
        for (int k = 0; k < h.cols; ++k) frac[static_cast<std::size_t>(k)] = est.frac() + inverse.frac() + e(k);
        for (int m = 0; m < h.rows; ++m)
          for (int k = 0; k < h.cols; ++k) {
            fp::cword<P> s{P(0), P(0)};
            for (int j = 0; j < h.cols; ++j) {
              const fp::cword<P> p = fp::form_product<fp::product_form::conj_both, P>(get(h, m, j), get(a, j, k));
              s = {P(s.re + p.re), P(s.im + p.im)};
            }
            sums[at(m, k)] = s;
          }
      }
      // One exponent for the block: the largest of the columns' own.
      const int top = *whole_top_, lowest = top - largest_whole(exp.spec.fmt);
      int f = lowest;
      for (int k = 0; k < h.cols; ++k) {
        P hi = 0, lo = 0;
        for (int m = 0; m < h.rows; ++m) {
          hi = std::max({hi, sums[at(m, k)].re, sums[at(m, k)].im});
          lo = std::min({lo, sums[at(m, k)].re, sums[at(m, k)].im});
        }
        f = std::max(f, block_exponent<P>(hi, lo, frac[static_cast<std::size_t>(k)], pre, lowest, top));
      }
      *pre.words = word_matrix(h.rows, h.cols, true);
      const fp::requantizer<P> q(pre.spec);
      for (int m = 0; m < h.rows; ++m)
        for (int k = 0; k < h.cols; ++k)
          put(*pre.words, m, k,
              narrow(fp::requantize(sums[at(m, k)], frac[static_cast<std::size_t>(k)] + f, q, *pre.counters)));
      *exp.words = word_matrix(1, 1, false);
      exp.words->re[0] = fp::convert_int<word>(fp::requantizer<P>(exp.spec)(P(top - f), 0, *exp.counters));
    });
  }

  bool uses_inverse_;
  std::optional<int> block_top_, whole_top_;
  int num_users_;
};

}  // namespace

std::shared_ptr<stage> make_precoder(bool uses_inverse, std::optional<int> block_top, std::optional<int> whole_top,
                                     int num_users) {
  return std::make_shared<precoder_stage>(uses_inverse, block_top, whole_top, num_users);
}

}  // namespace fxmimo::datapath::detail
