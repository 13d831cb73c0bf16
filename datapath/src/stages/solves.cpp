// G^-1 from the LDL^H factors, column c of the identity at a time, each sum in its node's
// accumulation order:
//   forward  y_c = Q(1); y_i = Q(... Q(0 - Q(l_ic y_c)) ... - Q(l_i,i-1 y_{i-1})), i > c   [inv_fwd]
//   backward x_i = Q(... Q(Q(y_i r_i) - Q(conj(l_{i+1,i}) x_{i+1})) ... ), i = K-1 .. 0, k rising  [inv_out]
// The uplink's own inverter (ul_inv_fwd, ul_inv_out) is the same stage on its factors.
#include "../stage_support.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class ldl_solves final : public stage {
 public:
  explicit ldl_solves(const inverter_nodes& nodes)
      : stage(std::string(nodes.solves_stage),
              {{nodes.fwd, {nodes.factor}}, {nodes.out, {nodes.recip, nodes.factor, nodes.fwd}}}),
        n_(nodes) {}
  /// With L = D L' D^-1 (D = diag(2^e_k), ldl.cpp): L^-1 = D L'^-1 D^-1 ({1, -1}) and
  /// G^-1 = D^-1 G'^-1 D^-1 ({-1, -1}).
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id id) const override {
    return id == n_.fwd ? exponent_law{1, -1} : exponent_law{-1, -1};
  }
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int factor = bits_of(c, n_.factor), fwd = bits_of(c, n_.fwd), out = bits_of(c, n_.out);
    return std::max({product_bits({factor, fwd}, fwd), product_bits({fwd, bits_of(c, n_.recip)}, out),
                     product_bits({out, factor}, out)});
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 4 * word_bits_of(c, n_.factor) * word_bits_of(c, n_.fwd);
  }
  void compute(fixed_context& ctx) const override {
    const node_state factor = state(ctx, n_.factor), recip = state(ctx, n_.recip);
    node_state fwd = state(ctx, n_.fwd), out = state(ctx, n_.out);
    with_width(work_bits(ctx.config), [&](auto tag) { run<decltype(tag)>(factor, recip, fwd, out); });
  }
  /// L^-1 from the golden strict factor (L = I + strict), and the golden inverse.
  void golden_view(golden_context& ctx) const override {
    const Eigen::MatrixXcd& strict = ctx.value_of(n_.factor);
    const Eigen::MatrixXcd identity = Eigen::MatrixXcd::Identity(strict.rows(), strict.cols());
    ctx.set(n_.fwd, strict.triangularView<Eigen::UnitLower>().solve(identity));
    ctx.set(n_.out, n_.golden_inverse(ctx.trial));
  }

 private:
  inverter_nodes n_;

  template <class P>
  static void run(const node_state& factor, const node_state& recip, node_state& fwd, node_state& out) {
    const word_matrix& l = *factor.words;
    const int num_users = l.rows;
    *fwd.words = word_matrix(num_users, num_users, true);
    *out.words = word_matrix(num_users, num_users, true);
    const fp::requantizer<P> q_fwd(fwd.spec);
    const fp::requantizer<P> q_out(out.spec);
    fp::complex_accumulator<P> acc_fwd(q_fwd, fwd.order);
    fp::complex_accumulator<P> acc_out(q_out, out.order);
    for (int c = 0; c < num_users; ++c) {
      acc_fwd.reset();
      acc_fwd.add(fp::cword<P>{P(1), P(0)}, 0, *fwd.counters);
      put(*fwd.words, c, c, narrow(acc_fwd.result(*fwd.counters)));
      for (int i = c + 1; i < num_users; ++i) {
        acc_fwd.reset();
        for (int k = c; k < i; ++k) {
          acc_fwd.add(negate(fp::cmul<P>(widen<P>(get(l, i, k)), widen<P>(get(*fwd.words, k, c)))),
                      factor.frac() + fwd.frac(), *fwd.counters);
        }
        put(*fwd.words, i, c, narrow(acc_fwd.result(*fwd.counters)));
      }
      for (int i = num_users - 1; i >= 0; --i) {
        acc_out.reset();
        acc_out.add(scale<P>(get(*fwd.words, i, c), recip.words->re[static_cast<std::size_t>(i)]),
                    fwd.frac() + recip.frac(), *out.counters);
        for (int k = i + 1; k < num_users; ++k) {
          acc_out.add(negate(fp::cmul_conj<P>(widen<P>(get(*out.words, k, c)), widen<P>(get(l, k, i)))),
                      out.frac() + factor.frac(), *out.counters);
        }
        put(*out.words, i, c, narrow(acc_out.result(*out.counters)));
      }
    }
  }
};

}  // namespace

std::shared_ptr<stage> make_ldl_solves(const inverter_nodes& nodes) { return std::make_shared<ldl_solves>(nodes); }

}  // namespace fxmimo::datapath::detail
