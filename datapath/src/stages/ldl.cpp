// LDL^H of G, column by column (Golub & Van Loan, Matrix Computations, Alg. 4.1.2, complex
// form), each sum in ldl_acc's accumulation order with G's entry as its first term:
//   d_j  = Q(... Q(Q(G_jj) - Q(|l_j0|^2 d_0)) ... - Q(|l_j,j-1|^2 d_{j-1}))    [ldl_acc]
//   r_j  = Q(1 / d_j)  (or the table + Newton unit of [units.inv_diag_recip])  [inv_diag_recip]
//   n_ij = Q(... Q(Q(G_ij) - Q(l_i0 conj(l_j0) d_0)) ...), i > j              [ldl_acc]
//   l_ij = Q(n_ij r_j)                                                     [inv_factor]
// The uplink's own inverter (ul_ldl_acc, ul_inv_recip, ul_inv_factor) is the same stage on ul_gram.
#include "fxmimo/golden/ldl.hpp"

#include "../stage_support.hpp"
#include "fxmimo/fixedpoint/divide.hpp"
#include "stages.hpp"
#include "units.hpp"

namespace fxmimo::datapath::detail {

namespace {

/// The reciprocal unit's nodes: the downlink's recip_* set with the inverter's output (only the
/// downlink's unit may be a Newton one, whose intermediates those are).
unit_nodes recip_nodes_of(const inverter_nodes& n) {
  unit_nodes u = diag_recip_nodes;
  u.output = n.recip;
  return u;
}

class ldl_stage final : public stage {
 public:
  ldl_stage(const inverter_nodes& nodes, const golden::unit_choice& recip_unit)
      : stage(std::string(nodes.ldl_stage),
              ldl_ports(nodes, divide_root_unit(fp::newton_function::reciprocal, recip_unit, recip_nodes_of(nodes)))),
        n_(nodes),
        unit_(fp::newton_function::reciprocal, recip_unit, recip_nodes_of(nodes)) {}
  /// For G' = D^-1 G D^-1 (D = diag(2^e_k)): L' = D^-1 L D and d' = D^-2 d, so ldl_acc (l_ij d_j)
  /// carries {1, 1}, the reciprocal {-2, 0} and L {1, -1}; the unit's mantissa, ROM and iterates
  /// are those of d (an even shift leaves a normalised mantissa as it is).
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id id) const override {
    if (id == n_.acc) return exponent_law{1, 1};
    if (id == n_.recip) return exponent_law{-2, 0};
    if (id == n_.factor) return exponent_law{1, -1};
    return exponent_law{};
  }
  /// Terms |l|^2 d and l conj(l) d (three factors), n_ij r_j, and G's entry with two headroom bits.
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int factor = bits_of(c, n_.factor), acc = bits_of(c, n_.acc);
    return std::max({product_bits({factor, factor, acc}, acc), product_bits({acc, bits_of(c, n_.recip)}, factor),
                     bits_of(c, source(0, 0)) + 2});
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 4 * word_bits_of(c, n_.factor) * word_bits_of(c, n_.factor) + unit_.multiplier_cost(c, n_.acc);
  }
  void compute(fixed_context& ctx) const override {
    const node_state g = state(ctx, source(0, 0));
    node_state acc_node = state(ctx, n_.acc), recip = state(ctx, n_.recip), factor = state(ctx, n_.factor);
    divide_root_unit::session session = unit_.start(ctx, g.words->rows);
    with_width(work_bits(ctx.config), [&](auto tag) {
      run<decltype(tag)>(g, acc_node, recip, factor,
                         [&](int j, word d, int d_frac) { return unit_.evaluate(session, j, d, d_frac, recip); });
    });
    unit_.finish(session);
  }
  void golden_view(golden_context& ctx) const override {
    const std::optional<golden::ldl_factors>& kept = n_.golden_ldl(ctx.trial);
    const golden::ldl_factors f = kept ? *kept : golden::ldl_decompose(n_.golden_gram(ctx.trial));
    const auto num_users = static_cast<int>(f.diag.size());
    Eigen::MatrixXcd acc = Eigen::MatrixXcd::Zero(num_users, num_users);
    Eigen::MatrixXcd strict = Eigen::MatrixXcd::Zero(num_users, num_users);
    for (int j = 0; j < num_users; ++j) {
      acc(j, j) = f.diag(j);
      for (int i = j + 1; i < num_users; ++i) {
        acc(i, j) = f.unit_lower(i, j) * f.diag(j);
        strict(i, j) = f.unit_lower(i, j);
      }
    }
    ctx.set(n_.acc, acc);
    ctx.set(n_.recip, f.diag.cwiseInverse().cast<std::complex<double>>());
    unit_.golden_view(ctx, f.diag);
    ctx.set(n_.factor, strict);
  }

 private:
  static std::vector<port> ldl_ports(const inverter_nodes& n, const divide_root_unit& unit) {
    std::vector<port> p{{n.acc, {n.gram, n.factor}}};
    for (port& q : unit.ports(n.acc)) p.push_back(std::move(q));
    p.push_back({n.factor, {n.acc, n.recip}});
    return p;
  }

  /// `reciprocal(j, d_j, frac)`: the unit's word r_j.
  template <class P, class Reciprocal>
  static void run(const node_state& g, node_state& acc_node, node_state& recip, node_state& factor,
                  Reciprocal&& reciprocal) {
    const word_matrix& gm = *g.words;
    const int num_users = gm.rows;
    *acc_node.words = word_matrix(num_users, num_users, true);
    *recip.words = word_matrix(num_users, 1, false);
    *factor.words = word_matrix(num_users, num_users, true);
    word_matrix& l = *factor.words;
    const fp::requantizer<P> q_acc(acc_node.spec);
    const fp::requantizer<P> q_factor(factor.spec);
    const int term_frac = 2 * factor.frac() + acc_node.frac();
    fp::complex_accumulator<P> acc(q_acc, acc_node.order);
    std::vector<word> d(static_cast<std::size_t>(num_users));
    for (int j = 0; j < num_users; ++j) {
      acc.reset();
      acc.add(widen<P>(get(gm, j, j)), g.frac(), *acc_node.counters);
      for (int k = 0; k < j; ++k) {
        const cw ljk = get(l, j, k);
        const P mag2 = P(fp::convert_int<P>(ljk.re) * ljk.re + fp::convert_int<P>(ljk.im) * ljk.im);
        acc.add(fp::cword<P>{P(-(mag2 * fp::convert_int<P>(d[static_cast<std::size_t>(k)]))), P(0)}, term_frac,
                *acc_node.counters);
      }
      d[static_cast<std::size_t>(j)] = fp::convert_int<word>(acc.result(*acc_node.counters).re);
      put(*acc_node.words, j, j, {d[static_cast<std::size_t>(j)], 0});
      const word r = reciprocal(j, d[static_cast<std::size_t>(j)], acc_node.frac());
      recip.words->re[static_cast<std::size_t>(j)] = r;
      for (int i = j + 1; i < num_users; ++i) {
        acc.reset();
        acc.add(widen<P>(get(gm, i, j)), g.frac(), *acc_node.counters);
        for (int k = 0; k < j; ++k) {
          const fp::cword<P> lik_conj_ljk = fp::cmul_conj<P>(widen<P>(get(l, i, k)), widen<P>(get(l, j, k)));
          const P dk = fp::convert_int<P>(d[static_cast<std::size_t>(k)]);
          acc.add(fp::cword<P>{P(-(lik_conj_ljk.re * dk)), P(-(lik_conj_ljk.im * dk))}, term_frac, *acc_node.counters);
        }
        const cw n_ij = narrow(acc.result(*acc_node.counters));
        put(*acc_node.words, i, j, n_ij);
        put(l, i, j,
            narrow(fp::requantize(scale<P>(n_ij, r), acc_node.frac() + recip.frac(), q_factor, *factor.counters)));
      }
    }
  }

  inverter_nodes n_;
  divide_root_unit unit_;
};

}  // namespace

std::shared_ptr<stage> make_ldl(const inverter_nodes& nodes, const golden::unit_choice& recip_unit) {
  return std::make_shared<ldl_stage>(nodes, recip_unit);
}

}  // namespace fxmimo::datapath::detail
