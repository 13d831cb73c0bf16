// G^-1 = L^-H L^-1 from the Cholesky factor, column c of the identity at a time, each sum in its
// node's accumulation order. L's diagonal enters only through its reciprocal roots s_i, which
// scale every term of row i (exact triple products, one rounding per term):
//   forward  y_c = Q(s_c); y_i = Q(... Q(0 - Q(l_ic y_c s_i)) ... - Q(l_i,i-1 y_{i-1} s_i)), i > c  [chol_fwd]
//   backward x_i = Q(... Q(Q(y_i s_i) - Q(conj(l_{i+1,i}) x_{i+1} s_i)) ... ), i = K-1 .. 0, k rising  [inv_out]
#include "../stage_support.hpp"
#include "fxmimo/golden/cholesky.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

/// A complex product times a real word, exactly.
template <class P>
fp::cword<P> scale_wide(const fp::cword<P>& v, word s) {
  const P sp = fp::convert_int<P>(s);
  return {P(v.re * sp), P(v.im * sp)};
}

class cholesky_solves final : public stage {
 public:
  cholesky_solves()
      : stage("cholesky_solves",
              {{node_id::chol_fwd, {node_id::chol_factor, node_id::chol_diag_rsqrt}},
               {node_id::inv_out, {node_id::chol_diag_rsqrt, node_id::chol_factor, node_id::chol_fwd}}}) {}
  /// Triple products l y s and conj(l) x s, and y s.
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int factor = bits_of(c, node_id::chol_factor), fwd = bits_of(c, node_id::chol_fwd),
              out = bits_of(c, node_id::inv_out), rsqrt = bits_of(c, node_id::chol_diag_rsqrt);
    return std::max({product_bits({factor, fwd, rsqrt}, fwd), product_bits({fwd, rsqrt}, out),
                     product_bits({out, factor, rsqrt}, out)});
  }
  /// One complex multiplier l y and one complex-by-real multiplier by s.
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    const double factor = word_bits_of(c, node_id::chol_factor), fwd = word_bits_of(c, node_id::chol_fwd);
    return 4 * factor * fwd + 2 * (factor + fwd) * word_bits_of(c, node_id::chol_diag_rsqrt);
  }
  void compute(fixed_context& ctx) const override {
    const node_state factor = state(ctx, node_id::chol_factor), rsqrt = state(ctx, node_id::chol_diag_rsqrt);
    node_state fwd = state(ctx, node_id::chol_fwd), out = state(ctx, node_id::inv_out);
    with_width(work_bits(ctx.config), [&](auto tag) { run<decltype(tag)>(factor, rsqrt, fwd, out); });
  }
  /// L^-1 and the golden inverse (the trial's, which is L^-H L^-1 with inversion = "cholesky").
  void golden_view(golden_context& ctx) const override {
    ctx.set(node_id::chol_fwd, golden::cholesky_forward(golden::cholesky_decompose(ctx.trial.gram)));
    ctx.set(node_id::inv_out, ctx.trial.inverse);
  }

 private:
  template <class P>
  static void run(const node_state& factor, const node_state& rsqrt, node_state& fwd, node_state& out) {
    const word_matrix& l = *factor.words;
    const int num_users = l.rows;
    *fwd.words = word_matrix(num_users, num_users, true);
    *out.words = word_matrix(num_users, num_users, true);
    const fp::requantizer<P> q_fwd(fwd.spec);
    const fp::requantizer<P> q_out(out.spec);
    fp::complex_accumulator<P> acc_fwd(q_fwd, fwd.order);
    fp::complex_accumulator<P> acc_out(q_out, out.order);
    const auto s = [&](int i) { return rsqrt.words->re[static_cast<std::size_t>(i)]; };
    for (int c = 0; c < num_users; ++c) {
      acc_fwd.reset();
      acc_fwd.add(fp::cword<P>{fp::convert_int<P>(s(c)), P(0)}, rsqrt.frac(), *fwd.counters);
      put(*fwd.words, c, c, narrow(acc_fwd.result(*fwd.counters)));
      for (int i = c + 1; i < num_users; ++i) {
        acc_fwd.reset();
        for (int k = c; k < i; ++k) {
          acc_fwd.add(negate(scale_wide<P>(fp::cmul<P>(widen<P>(get(l, i, k)), widen<P>(get(*fwd.words, k, c))), s(i))),
                      factor.frac() + fwd.frac() + rsqrt.frac(), *fwd.counters);
        }
        put(*fwd.words, i, c, narrow(acc_fwd.result(*fwd.counters)));
      }
      for (int i = num_users - 1; i >= 0; --i) {
        acc_out.reset();
        acc_out.add(scale<P>(get(*fwd.words, i, c), s(i)), fwd.frac() + rsqrt.frac(), *out.counters);
        for (int k = i + 1; k < num_users; ++k) {
          acc_out.add(
              negate(scale_wide<P>(fp::cmul_conj<P>(widen<P>(get(*out.words, k, c)), widen<P>(get(l, k, i))), s(i))),
              out.frac() + factor.frac() + rsqrt.frac(), *out.counters);
        }
        put(*out.words, i, c, narrow(acc_out.result(*out.counters)));
      }
    }
  }
};

}  // namespace

std::shared_ptr<stage> make_cholesky_solves() { return std::make_shared<cholesky_solves>(); }

}  // namespace fxmimo::datapath::detail
