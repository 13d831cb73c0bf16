// Gauss-Seidel inverse of G in S sweeps from X_0 = D^-1 (D = diag(G); Golub & Van Loan, Matrix
// Computations, Sec. 11.2), each sum in its node's accumulation order:
//   r_i  = Q(1 / G_ii)  (or the table + Newton unit of [units.inv_diag_recip])  [inv_diag_recip]
//   B_ij = Q(delta_ij - r_i G_ij)                                        [inv_iter]
//   sweep s = 1..S, column c = 0..K-1, row i = 0..K-1 (the update order is the definition):
//   x_ic = Q(... Q(Q(r_i delta_ic) + Q(B_i0 x_0c)) ... + Q(B_i,K-1 x_K-1,c)), j rising, j != i,
//   x_jc this sweep's word for j < i, the previous sweep's for j > i; X_0's zeros are no terms.
//   Sweeps 1..S-1 are gs_sweep (side by side), sweep S is inv_out.
#include "fxmimo/golden/gauss_seidel.hpp"

#include "../stage_support.hpp"
#include "iteration.hpp"
#include "stages.hpp"
#include "units.hpp"

namespace fxmimo::datapath::detail {

namespace {

std::vector<port> gauss_seidel_ports(int num_sweeps, const divide_root_unit& unit) {
  std::vector<port> p = unit.ports(node_id::gram);
  p.push_back({node_id::inv_iter, {node_id::gram, node_id::inv_diag_recip}});
  if (num_sweeps > 1) p.push_back({node_id::gs_sweep, {node_id::inv_iter, node_id::inv_diag_recip}});
  p.push_back({node_id::inv_out,
               num_sweeps > 1 ? std::vector<node_id>{node_id::inv_iter, node_id::inv_diag_recip, node_id::gs_sweep}
                              : std::vector<node_id>{node_id::inv_iter, node_id::inv_diag_recip}});
  return p;
}

class gauss_seidel_stage final : public stage {
 public:
  gauss_seidel_stage(int num_sweeps, const golden::unit_choice& recip_unit)
      : stage("gauss_seidel", gauss_seidel_ports(num_sweeps, divide_root_unit(fp::newton_function::reciprocal,
                                                                              recip_unit, diag_recip_nodes))),
        num_sweeps_(num_sweeps),
        unit_(fp::newton_function::reciprocal, recip_unit, diag_recip_nodes) {}
  /// B's computation, the products B x (x a sweep's, inv_out's or a reciprocal's word), and a
  /// first term r_i with two headroom bits.
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int recip = bits_of(c, node_id::inv_diag_recip), iter = bits_of(c, node_id::inv_iter),
              sweep = bits_of(c, node_id::gs_sweep), out = bits_of(c, node_id::inv_out);
    return std::max({iteration_matrix_bits(c),
                     product_bits({iter, std::max({sweep, out, recip})}, std::max(sweep, out)),
                     std::max({out, sweep, recip}) + 2});
  }
  /// r G products for B and one complex multiplier B x, plus the unit.
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    const double iter = word_bits_of(c, node_id::inv_iter);
    return 4 * iter * std::max(word_bits_of(c, node_id::gs_sweep), word_bits_of(c, node_id::inv_out)) +
           unit_.multiplier_cost(c, node_id::gram);
  }
  /// The sweeps overwrite one K x K matrix in place: only one is stored, whatever S.
  [[nodiscard]] double storage_words(node_id id, const dimension_sizes& dims) const override {
    if (id == node_id::gs_sweep) return 2.0 * dims.user * dims.user;
    return stage::storage_words(id, dims);
  }
  void compute(fixed_context& ctx) const override {
    const node_state g = state(ctx, node_id::gram);
    node_state recip = state(ctx, node_id::inv_diag_recip), iter = state(ctx, node_id::inv_iter),
               sweep = state(ctx, node_id::gs_sweep), out = state(ctx, node_id::inv_out);
    const word_matrix& gm = *g.words;
    *recip.words = word_matrix(gm.rows, 1, false);
    divide_root_unit::session session = unit_.start(ctx, gm.rows);
    for (int i = 0; i < gm.rows; ++i)
      recip.words->re[static_cast<std::size_t>(i)] = unit_.evaluate(session, i, get(gm, i, i).re, g.frac(), recip);
    unit_.finish(session);
    with_width(work_bits(ctx.config), [&](auto tag) {
      iteration_matrix<decltype(tag)>(g, recip, iter);
      run<decltype(tag)>(recip, iter, sweep, out);
    });
  }
  void golden_view(golden_context& ctx) const override {
    const Eigen::MatrixXcd& gram = ctx.trial.gram;
    const auto num_users = static_cast<int>(gram.rows());
    ctx.set(node_id::inv_diag_recip, golden_diag_recip(gram).cast<std::complex<double>>());
    unit_.golden_view(ctx, gram.diagonal().real());
    ctx.set(node_id::inv_iter, golden_iteration_matrix(gram));
    if (num_sweeps_ > 1) {
      const std::vector<Eigen::MatrixXcd> x = golden::gauss_seidel_sweeps(gram, num_sweeps_ - 1);
      Eigen::MatrixXcd side(num_users, num_users * (num_sweeps_ - 1));
      for (int s = 0; s < num_sweeps_ - 1; ++s)
        side.middleCols(s * num_users, num_users) = x[static_cast<std::size_t>(s)];
      ctx.set(node_id::gs_sweep, side);
    }
    ctx.set(node_id::inv_out, ctx.trial.inverse);
  }

 private:
  /// Where a sweep's words live: its node, and its first column there.
  struct sweep_words {
    const node_state* node;
    int first_col;
  };

  template <class P>
  void run(const node_state& recip, const node_state& iter, node_state& sweep, node_state& out) const {
    const int num_users = iter.words->rows;
    *out.words = word_matrix(num_users, num_users, true);
    if (num_sweeps_ > 1) *sweep.words = word_matrix(num_users, num_users * (num_sweeps_ - 1), true);
    const auto r = [&](int i) { return recip.words->re[static_cast<std::size_t>(i)]; };
    for (int s = 1; s <= num_sweeps_; ++s) {
      node_state& now = s == num_sweeps_ ? out : sweep;
      const sweep_words cur{&now, s == num_sweeps_ ? 0 : (s - 1) * num_users};
      const sweep_words before{&sweep, (s - 2) * num_users};  // s >= 2
      const fp::requantizer<P> q(now.spec);
      fp::complex_accumulator<P> acc(q, now.order);
      for (int c = 0; c < num_users; ++c) {
        for (int i = 0; i < num_users; ++i) {
          acc.reset();
          if (i == c) acc.add(fp::cword<P>{fp::convert_int<P>(r(i)), P(0)}, recip.frac(), *now.counters);
          for (int j = 0; j < num_users; ++j) {
            if (j == i) continue;
            const cw b = get(*iter.words, i, j);
            if (j < i) {
              acc.add(fp::cmul<P>(widen<P>(b), widen<P>(get(*cur.node->words, j, cur.first_col + c))),
                      iter.frac() + cur.node->frac(), *now.counters);
            } else if (s == 1) {
              if (j != c) continue;  // X_0 = D^-1: only x_cc = r_c is non-zero
              acc.add(scale<P>(b, r(c)), iter.frac() + recip.frac(), *now.counters);
            } else {
              acc.add(fp::cmul<P>(widen<P>(b), widen<P>(get(*before.node->words, j, before.first_col + c))),
                      iter.frac() + before.node->frac(), *now.counters);
            }
          }
          put(*now.words, i, cur.first_col + c, narrow(acc.result(*now.counters)));
        }
      }
    }
  }

  int num_sweeps_;
  divide_root_unit unit_;
};

}  // namespace

std::shared_ptr<stage> make_gauss_seidel(int num_sweeps, const golden::unit_choice& recip_unit) {
  return std::make_shared<gauss_seidel_stage>(num_sweeps, recip_unit);
}

}  // namespace fxmimo::datapath::detail
