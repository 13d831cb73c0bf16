// Neumann series of T terms with D = diag(G), each sum in its node's accumulation order:
//   r_i = Q(1 / G_ii)  (or the table + Newton unit of [units.inv_diag_recip])  [inv_diag_recip]
//   B_ij = Q(delta_ij - r_i G_ij)          [inv_iter]
//   T_1 = B diag(r), T_n = B T_{n-1}: T_n[i,c] = sum over j (index order) of Q(B_ij T_{n-1}[j,c])  [inv_term]
//   X[i,c] = Q(... Q(Q(diag(r)[i,c]) + Q(T_1[i,c])) ... + Q(T_{T-1}[i,c]))   [inv_out]
#include "../stage_support.hpp"
#include "fxmimo/fixedpoint/divide.hpp"
#include "iteration.hpp"
#include "stages.hpp"
#include "units.hpp"

namespace fxmimo::datapath::detail {

namespace {

std::vector<port> neumann_ports(int num_terms, const divide_root_unit& unit) {
  std::vector<port> p = unit.ports(node_id::gram);
  p.push_back({node_id::inv_iter, {node_id::gram, node_id::inv_diag_recip}});
  if (num_terms > 1) p.push_back({node_id::inv_term, {node_id::inv_iter, node_id::inv_diag_recip}});
  p.push_back({node_id::inv_out, num_terms > 1 ? std::vector<node_id>{node_id::inv_diag_recip, node_id::inv_term}
                                               : std::vector<node_id>{node_id::inv_diag_recip}});
  return p;
}

class neumann_stage final : public stage {
 public:
  neumann_stage(int num_terms, const golden::unit_choice& recip_unit)
      : stage("neumann", neumann_ports(num_terms, divide_root_unit(fp::newton_function::reciprocal, recip_unit,
                                                                   diag_recip_nodes))),
        num_terms_(num_terms),
        unit_(fp::newton_function::reciprocal, recip_unit, diag_recip_nodes) {}
  /// For G' = D^-1 G D^-1 (D = diag(2^e_k)): 1/G'_jj = 2^2e_j / G_jj ({-2, 0}),
  /// B' = I - D^2 R D^-1 G D^-1 = D B D^-1 ({-1, 1}), B'^n R' = D B^n R D ({-1, -1}), and so
  /// G'^-1 = D G^-1 D ({-1, -1}); the unit's mantissa, ROM and iterates are those of G_jj.
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id id) const override {
    if (id == node_id::inv_diag_recip) return exponent_law{-2, 0};
    if (id == node_id::inv_iter) return exponent_law{-1, 1};
    if (id == node_id::inv_term || id == node_id::inv_out) return exponent_law{-1, -1};
    return exponent_law{};
  }
  /// r G products, B T products, the sum of T terms with two headroom bits, and the exact 1 of
  /// I at r G's fraction bits.
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int recip = bits_of(c, node_id::inv_diag_recip), g = bits_of(c, node_id::gram),
              iter = bits_of(c, node_id::inv_iter), term = bits_of(c, node_id::inv_term),
              out = bits_of(c, node_id::inv_out);
    return std::max({product_bits({recip, g}, iter), product_bits({iter, std::max(term, recip)}, term),
                     std::max({out, term, recip}) + 2,
                     c[node_id::inv_diag_recip].spec.fmt.frac_bits + c[node_id::gram].spec.fmt.frac_bits + 2});
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 4 * word_bits_of(c, node_id::inv_iter) * word_bits_of(c, node_id::inv_term) +
           unit_.multiplier_cost(c, node_id::gram);
  }
  /// Only the current term is stored (K x K), whatever T.
  [[nodiscard]] double storage_words(node_id id, const dimension_sizes& dims) const override {
    if (id == node_id::inv_term) return 2.0 * dims.user * dims.user;
    return stage::storage_words(id, dims);
  }
  void compute(fixed_context& ctx) const override {
    const node_state g = state(ctx, node_id::gram);
    node_state recip = state(ctx, node_id::inv_diag_recip), iter = state(ctx, node_id::inv_iter),
               term = state(ctx, node_id::inv_term), out = state(ctx, node_id::inv_out);
    const word_matrix& gm = *g.words;
    *recip.words = word_matrix(gm.rows, 1, false);
    divide_root_unit::session session = unit_.start(ctx, gm.rows);
    for (int i = 0; i < gm.rows; ++i)
      recip.words->re[static_cast<std::size_t>(i)] = unit_.evaluate(session, i, get(gm, i, i).re, g.frac(), recip);
    unit_.finish(session);
    with_width(work_bits(ctx.config), [&](auto tag) { run<decltype(tag)>(g, recip, iter, term, out); });
  }
  void golden_view(golden_context& ctx) const override {
    const Eigen::MatrixXcd& gram = ctx.trial.gram;
    const auto num_users = static_cast<int>(gram.rows());
    const Eigen::MatrixXcd identity = Eigen::MatrixXcd::Identity(num_users, num_users);
    const Eigen::VectorXd recip = gram.diagonal().real().cwiseInverse();
    ctx.set(node_id::inv_diag_recip, recip.cast<std::complex<double>>());
    unit_.golden_view(ctx, gram.diagonal().real());
    const Eigen::MatrixXcd b = identity - recip.cast<std::complex<double>>().asDiagonal() * gram;
    ctx.set(node_id::inv_iter, b);
    const int num_extra = num_terms_ - 1;
    if (num_extra > 0) {
      Eigen::MatrixXcd terms(num_users, num_users * num_extra);
      Eigen::MatrixXcd t = recip.cast<std::complex<double>>().asDiagonal();
      for (int n = 1; n <= num_extra; ++n) {
        t = b * t;
        terms.middleCols((n - 1) * num_users, num_users) = t;
      }
      ctx.set(node_id::inv_term, terms);
    }
    ctx.set(node_id::inv_out, ctx.trial.inverse);
  }

 private:
  template <class P>
  void run(const node_state& g, const node_state& recip, node_state& iter, node_state& term_node,
           node_state& out) const {
    const int num_users = g.words->rows;
    iteration_matrix<P>(g, recip, iter);
    *out.words = word_matrix(num_users, num_users, true);
    // Terms: term 0 is diag(r) at the reciprocal's fraction bits.
    const int num_extra = num_terms_ - 1;
    if (num_extra > 0) *term_node.words = word_matrix(num_users, num_users * num_extra, true);
    const fp::requantizer<P> q_term(term_node.spec);
    fp::complex_accumulator<P> acc_term(q_term, term_node.order);
    const auto k = static_cast<std::size_t>(num_users);
    for (int n = 1; n <= num_extra; ++n) {
      if (n > 1 && term_node.sequential()) {
        // Row i of T_n at once (the vector kernel's lanes are the columns c): B[i,j] is shared,
        // row j of T_{n-1} (the block of the terms so far) a column over c.
        const word_matrix& terms = *term_node.words;
        const std::vector<cw> bs = interleaved(*iter.words), ts = interleaved(terms);
        const fp::requantizer<word> q_seq(term_node.spec);
        const fp::lane_operand previous{&ts[terms.at(0, (n - 2) * num_users)], static_cast<std::size_t>(terms.cols),
                                        fp::lane_spread::column, term_node.bits(), term_node.frac()};
        for (int i = 0; i < num_users; ++i) {
          const fp::lane_operand iter_row{&bs[iter.words->at(i, 0)], 1, fp::lane_spread::shared, iter.bits(),
                                          iter.frac()};
          sequential_row<fp::product_form::plain>(iter_row, previous, k, q_seq, term_node, i, (n - 1) * num_users,
                                                  num_users);
        }
        continue;
      }
      for (int i = 0; i < num_users; ++i) {
        for (int c = 0; c < num_users; ++c) {
          acc_term.reset();
          for (int j = 0; j < num_users; ++j) {
            if (n == 1) {
              if (j != c) continue;  // diag(r): only j = c is non-zero
              acc_term.add(scale<P>(get(*iter.words, i, j), recip.words->re[static_cast<std::size_t>(c)]),
                           iter.frac() + recip.frac(), *term_node.counters);
            } else {
              acc_term.add(fp::cmul<P>(widen<P>(get(*iter.words, i, j)),
                                       widen<P>(get(*term_node.words, j, (n - 2) * num_users + c))),
                           iter.frac() + term_node.frac(), *term_node.counters);
            }
          }
          put(*term_node.words, i, (n - 1) * num_users + c, narrow(acc_term.result(*term_node.counters)));
        }
      }
    }
    const fp::requantizer<P> q_out(out.spec);
    fp::complex_accumulator<P> acc_out(q_out, out.order);
    for (int i = 0; i < num_users; ++i) {
      for (int c = 0; c < num_users; ++c) {
        acc_out.reset();
        if (i == c)
          acc_out.add({fp::convert_int<P>(recip.words->re[static_cast<std::size_t>(i)]), P(0)}, recip.frac(),
                      *out.counters);
        for (int n = 1; n <= num_extra; ++n) {
          acc_out.add(widen<P>(get(*term_node.words, i, (n - 1) * num_users + c)), term_node.frac(), *out.counters);
        }
        put(*out.words, i, c, narrow(acc_out.result(*out.counters)));
      }
    }
  }

  int num_terms_;
  divide_root_unit unit_;
};

}  // namespace

std::shared_ptr<stage> make_neumann(int num_terms, const golden::unit_choice& recip_unit) {
  return std::make_shared<neumann_stage>(num_terms, recip_unit);
}

}  // namespace fxmimo::datapath::detail
