// The Gram matrix: gram[i,j] (j <= i) = sum over antennas m (index order, or the node's
// accumulation order) of Q(conj(H[m,i]) H[m,j]); with RZF the diagonal gets the loading
// OV(gram + Q(reg)); the upper triangle mirrors: G[j,i] = conj(G[i,j]). With block floating
// point on the estimate the sum runs over its mantissas and the loading of user k is
// Q(reg 2^-2e_k) (G carries the law {1, 1}). The uplink's own Gram (ul_gram) is the same stage
// with its MMSE loading 1/rho_ul.
#include <cmath>

#include "../stage_support.hpp"
#include "fxmimo/datapath/block_float.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class gram_stage final : public stage {
 public:
  gram_stage(const inverter_nodes& nodes, std::optional<double> loading, std::optional<int> block_top)
      : stage(std::string(nodes.gram_stage),
              {{nodes.gram, block_top ? std::vector<node_id>{node_id::chan_est, node_id::est_exp}
                                      : std::vector<node_id>{node_id::chan_est}}}),
        nodes_(nodes),
        loading_(loading),
        block_top_(block_top) {}
  /// G' = D^-1 G D^-1 for H = H' D, D = diag(2^e_k).
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id) const override { return exponent_law{1, 1}; }
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 0))}, bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 4 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 0));
  }
  /// Complex product parts + 2 (see the correlator), log2(M) for the sum over antennas.
  [[nodiscard]] std::optional<growth_rule> growth(node_id, const datapath_config& c,
                                                  const dimension_sizes& dims) const override {
    return growth_rule{2 * int_bits_of(c, source(0, 0)) + 2 + ceil_log2(dims.antenna),
                       "2 " + std::string(node_name(source(0, 0))) + " + 2 + log2(M)"};
  }
  void compute(fixed_context& ctx) const override {
    const node_state est = state(ctx, source(0, 0));
    node_state g = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& h = *est.words;
      const int num_ant = h.rows, num_users = h.cols;
      *g.words = word_matrix(num_users, num_users, true);
      const fp::requantizer<P> q(g.spec);
      const fp::requantizer<word> q_acc(g.spec);
      fp::complex_accumulator<P> tree(q, g.order);
      const std::vector<cw> hs = interleaved(h);
      const auto stride = static_cast<std::size_t>(num_users), n = static_cast<std::size_t>(num_ant);
      const fp::lane_operand column_j{hs.data(), stride, fp::lane_spread::column, est.bits(), est.frac()};
      for (int i_user = 0; i_user < num_users; ++i_user) {
        if (g.sequential()) {
          // Row i of the lower triangle at once (the vector kernel's lanes are the users j <= i):
          // H[m,j] (row-major) a column over j, H[m,i] shared.
          const fp::lane_operand shared_i{&hs[h.at(0, i_user)], stride, fp::lane_spread::shared, est.bits(),
                                          est.frac()};
          sequential_row<fp::product_form::conj_second>(column_j, shared_i, n, q_acc, g, i_user, 0, i_user + 1);
          continue;
        }
        for (int j_user = 0; j_user <= i_user; ++j_user) {
          put(*g.words, i_user, j_user,
              dot_in_order<fp::product_form::conj_second>(&hs[h.at(0, j_user)], stride, &hs[h.at(0, i_user)], stride, n,
                                                          est.bits(), est.bits(), 2 * est.frac(), q_acc, tree, g));
        }
      }
      if (loading_) {
        const word reg = block_top_ ? 0 : fp::from_double(*loading_, q_acc, *g.counters);
        const Eigen::VectorXi e =
            block_top_ ? fixed_user_exponents(*block_top_, ctx.config, ctx.words) : Eigen::VectorXi();
        for (int i_user = 0; i_user < num_users; ++i_user) {
          const word reg_k =
              block_top_ ? fp::from_double(std::ldexp(*loading_, -2 * e(i_user)), q_acc, *g.counters) : reg;
          cw d = get(*g.words, i_user, i_user);
          d.re = fp::convert_int<word>(q.overflow(P(fp::convert_int<P>(d.re) + reg_k), *g.counters));
          ++g.counters->requantized;  // the loading adder is a requantisation point
          put(*g.words, i_user, i_user, d);
        }
      }
      for (int i_user = 0; i_user < num_users; ++i_user) {
        for (int j_user = 0; j_user < i_user; ++j_user) {
          const cw v = get(*g.words, i_user, j_user);
          put(*g.words, j_user, i_user,
              {v.re, fp::convert_int<word>(q.overflow(P(-fp::convert_int<P>(v.im)), *g.counters))});
          ++g.counters->requantized;  // so is the mirror's negation (-(-2^(W-1)) overflows)
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), nodes_.golden_gram(ctx.trial)); }

 private:
  inverter_nodes nodes_;
  std::optional<double> loading_;
  std::optional<int> block_top_;
};

}  // namespace

std::shared_ptr<stage> make_gram(const inverter_nodes& nodes, std::optional<double> loading,
                                 std::optional<int> block_top) {
  return std::make_shared<gram_stage>(nodes, loading, block_top);
}

}  // namespace fxmimo::datapath::detail
