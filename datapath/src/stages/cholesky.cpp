// Cholesky factor of G = L L^H with square roots, column by column (Golub & Van Loan, Matrix
// Computations, Alg. 4.2.1, complex form), each sum in chol_acc's accumulation order with G's
// entry as its first term; the diagonal's root is taken as its reciprocal, so that the factor
// and the solves only multiply:
//   r_j  = Q(... Q(Q(G_jj) - Q(|l_j0|^2)) ... - Q(|l_j,j-1|^2))                [chol_acc]
//   s_j  = Q(1 / sqrt(r_j))  (or the table + Newton unit of [units.chol_diag_rsqrt])  [chol_diag_rsqrt]
//   n_ij = Q(... Q(Q(G_ij) - Q(l_i0 conj(l_j0))) ...), i > j                  [chol_acc]
//   l_ij = Q(n_ij s_j)                                                       [chol_factor]
// l_jj = sqrt(r_j) itself is never formed: the solves (cholesky_solves.cpp) use s_j.
#include "fxmimo/golden/cholesky.hpp"

#include "../stage_support.hpp"
#include "stages.hpp"
#include "units.hpp"

namespace fxmimo::datapath::detail {

namespace {

class cholesky_stage final : public stage {
 public:
  explicit cholesky_stage(const golden::unit_choice& rsqrt_unit)
      : stage("cholesky", cholesky_ports(divide_root_unit(fp::newton_function::rsqrt, rsqrt_unit, chol_rsqrt_nodes))),
        unit_(fp::newton_function::rsqrt, rsqrt_unit, chol_rsqrt_nodes) {}
  /// Terms |l|^2 and l conj(l) (complex products), n_ij s_j, and G's entry with two headroom bits.
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int factor = bits_of(c, node_id::chol_factor), acc = bits_of(c, node_id::chol_acc);
    return std::max({product_bits({factor, factor}, acc),
                     product_bits({acc, bits_of(c, node_id::chol_diag_rsqrt)}, factor), bits_of(c, node_id::gram) + 2});
  }
  /// One complex multiplier l conj(l) and one complex-by-real multiplier n s, plus the unit.
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    const double factor = word_bits_of(c, node_id::chol_factor);
    return 4 * factor * factor + 2 * word_bits_of(c, node_id::chol_acc) * word_bits_of(c, node_id::chol_diag_rsqrt) +
           unit_.multiplier_cost(c, node_id::chol_acc);
  }
  void compute(fixed_context& ctx) const override {
    const node_state g = state(ctx, node_id::gram);
    node_state acc_node = state(ctx, node_id::chol_acc), rsqrt = state(ctx, node_id::chol_diag_rsqrt),
               factor = state(ctx, node_id::chol_factor);
    divide_root_unit::session session = unit_.start(ctx, g.words->rows);
    with_width(work_bits(ctx.config), [&](auto tag) {
      run<decltype(tag)>(g, acc_node, rsqrt, factor,
                         [&](int j, word r, int r_frac) { return unit_.evaluate(session, j, r, r_frac, rsqrt); });
    });
    unit_.finish(session);
  }
  void golden_view(golden_context& ctx) const override {
    const golden::cholesky_factors f = golden::cholesky_decompose(ctx.trial.gram);
    const auto num_users = static_cast<int>(f.diag_rsqrt.size());
    Eigen::MatrixXcd acc = Eigen::MatrixXcd::Zero(num_users, num_users);
    Eigen::MatrixXcd strict = Eigen::MatrixXcd::Zero(num_users, num_users);
    Eigen::VectorXd residual(num_users);
    for (int j = 0; j < num_users; ++j) {
      const double l_jj = f.lower(j, j).real();
      residual(j) = l_jj * l_jj;
      acc(j, j) = residual(j);
      for (int i = j + 1; i < num_users; ++i) {
        acc(i, j) = f.lower(i, j) * l_jj;
        strict(i, j) = f.lower(i, j);
      }
    }
    ctx.set(node_id::chol_acc, acc);
    unit_.golden_view(ctx, residual);
    ctx.set(node_id::chol_diag_rsqrt, f.diag_rsqrt.cast<std::complex<double>>());
    ctx.set(node_id::chol_factor, strict);
  }

 private:
  static std::vector<port> cholesky_ports(const divide_root_unit& unit) {
    std::vector<port> p{{node_id::chol_acc, {node_id::gram, node_id::chol_factor}}};
    for (port& q : unit.ports(node_id::chol_acc)) p.push_back(std::move(q));
    p.push_back({node_id::chol_factor, {node_id::chol_acc, node_id::chol_diag_rsqrt}});
    return p;
  }

  /// `rsqrt(j, r_j, frac)`: the unit's word s_j.
  template <class P, class Rsqrt>
  static void run(const node_state& g, node_state& acc_node, node_state& rsqrt_node, node_state& factor,
                  Rsqrt&& rsqrt) {
    const word_matrix& gm = *g.words;
    const int num_users = gm.rows;
    *acc_node.words = word_matrix(num_users, num_users, true);
    *rsqrt_node.words = word_matrix(num_users, 1, false);
    *factor.words = word_matrix(num_users, num_users, true);
    word_matrix& l = *factor.words;
    const fp::requantizer<P> q_acc(acc_node.spec);
    const fp::requantizer<P> q_factor(factor.spec);
    const int term_frac = 2 * factor.frac();
    fp::complex_accumulator<P> acc(q_acc, acc_node.order);
    for (int j = 0; j < num_users; ++j) {
      acc.reset();
      acc.add(widen<P>(get(gm, j, j)), g.frac(), *acc_node.counters);
      for (int k = 0; k < j; ++k) {
        const cw ljk = get(l, j, k);
        const P mag2 = P(fp::convert_int<P>(ljk.re) * ljk.re + fp::convert_int<P>(ljk.im) * ljk.im);
        acc.add(fp::cword<P>{P(-mag2), P(0)}, term_frac, *acc_node.counters);
      }
      const word r = fp::convert_int<word>(acc.result(*acc_node.counters).re);
      put(*acc_node.words, j, j, {r, 0});
      const word s = rsqrt(j, r, acc_node.frac());
      rsqrt_node.words->re[static_cast<std::size_t>(j)] = s;
      for (int i = j + 1; i < num_users; ++i) {
        acc.reset();
        acc.add(widen<P>(get(gm, i, j)), g.frac(), *acc_node.counters);
        for (int k = 0; k < j; ++k)
          acc.add(negate(fp::cmul_conj<P>(widen<P>(get(l, i, k)), widen<P>(get(l, j, k)))), term_frac,
                  *acc_node.counters);
        const cw n_ij = narrow(acc.result(*acc_node.counters));
        put(*acc_node.words, i, j, n_ij);
        put(l, i, j,
            narrow(fp::requantize(scale<P>(n_ij, s), acc_node.frac() + rsqrt_node.frac(), q_factor, *factor.counters)));
      }
    }
  }

  divide_root_unit unit_;
};

}  // namespace

std::shared_ptr<stage> make_cholesky(const golden::unit_choice& rsqrt_unit) {
  return std::make_shared<cholesky_stage>(rsqrt_unit);
}

}  // namespace fxmimo::datapath::detail
