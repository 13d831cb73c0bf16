#pragma once
// The iteration matrix B = I - D^-1 G shared by the Neumann and Gauss-Seidel stages:
//   B_ij = Q(delta_ij - r_i G_ij)   [inv_iter]
// with r_i the inv_diag_recip word, the 1 of I exact at r G's fraction bits.
#include "../stage_support.hpp"

namespace fxmimo::datapath::detail {

template <class P>
void iteration_matrix(const node_state& g, const node_state& recip, node_state& iter) {
  const word_matrix& gm = *g.words;
  const int num_users = gm.rows;
  *iter.words = word_matrix(num_users, num_users, true);
  const fp::requantizer<P> q_iter(iter.spec);
  const int rg_frac = recip.frac() + g.frac();
  for (int i = 0; i < num_users; ++i) {
    const word ri = recip.words->re[static_cast<std::size_t>(i)];
    for (int j = 0; j < num_users; ++j) {
      fp::cword<P> v = negate(scale<P>(get(gm, i, j), ri));
      if (i == j) v.re = P(v.re + fp::pow2<P>(rg_frac));
      put(*iter.words, i, j, narrow(fp::requantize(v, rg_frac, q_iter, *iter.counters)));
    }
  }
}

/// Bits B's computation needs: r G products and the exact 1 of I at r G's fraction bits.
inline int iteration_matrix_bits(const datapath_config& c) {
  return std::max(
      product_bits({bits_of(c, node_id::inv_diag_recip), bits_of(c, node_id::gram)}, bits_of(c, node_id::inv_iter)),
      c[node_id::inv_diag_recip].spec.fmt.frac_bits + c[node_id::gram].spec.fmt.frac_bits + 2);
}

/// B's golden value I - D^-1 G and D^-1's (r_i = 1 / G_ii).
inline Eigen::VectorXd golden_diag_recip(const Eigen::MatrixXcd& gram) { return gram.diagonal().real().cwiseInverse(); }
inline Eigen::MatrixXcd golden_iteration_matrix(const Eigen::MatrixXcd& gram) {
  const auto n = gram.rows();
  return Eigen::MatrixXcd::Identity(n, n) - golden_diag_recip(gram).cast<std::complex<double>>().asDiagonal() * gram;
}

}  // namespace fxmimo::datapath::detail
