// Block floating point on the estimate: exponents of fixed words and of golden values, and the
// exponent laws applied to a node's values. The fixed rule itself is the estimate stage's
// (stages/estimate.cpp).
#include "fxmimo/datapath/block_float.hpp"

#include <algorithm>
#include <cmath>

namespace fxmimo::datapath {

bool has_block_float(const datapath_plan& plan) { return !plan.laws.empty(); }

Eigen::VectorXi fixed_block_exponents(int top, const datapath_config& config, const std::vector<word_matrix>& words) {
  const word_matrix& u = words.at(index_of(node_id::est_exp));
  const int frac = config[node_id::est_exp].spec.fmt.frac_bits;
  Eigen::VectorXi e(static_cast<Eigen::Index>(u.rows));
  for (int k = 0; k < u.rows; ++k) {
    // The stage writes u << frac with u >= 0 (a whole number), so the shift back is exact.
    const auto word = u.re[u.at(k, 0)];
    e(k) = top - static_cast<int>(frac >= 0 ? word >> frac : word << -frac);
  }
  return e;
}

Eigen::VectorXi golden_block_exponents(const Eigen::MatrixXcd& chan_est, int top) {
  Eigen::VectorXi e(chan_est.cols());
  for (Eigen::Index k = 0; k < chan_est.cols(); ++k) {
    double largest = 0.0;
    for (Eigen::Index m = 0; m < chan_est.rows(); ++m)
      largest = std::max({largest, std::abs(chan_est(m, k).real()), std::abs(chan_est(m, k).imag())});
    int exponent = top - max_exponent_span;
    if (largest > 0.0) std::frexp(largest, &exponent);  // largest in [2^(exponent-1), 2^exponent)
    e(k) = std::clamp(exponent, top - max_exponent_span, top);
  }
  return e;
}

namespace {

bool is_user_dimension(dim d) { return d == dim::user || d == dim::term_user || d == dim::sweep_user; }

}  // namespace

void apply_exponent_law(const datapath_plan& plan, node_id id, Eigen::MatrixXcd& values, const Eigen::VectorXi& e,
                        int sign) {
  const exponent_law law = plan.law_of(id);
  if (!law.carries() || values.size() == 0) return;
  const std::array<dim, 2> d = dims_of(id);
  const auto num_users = static_cast<Eigen::Index>(e.size());
  const bool row_users = is_user_dimension(d[0]) && law.row != 0;
  const bool col_users = is_user_dimension(d[1]) && law.col != 0;
  for (Eigen::Index r = 0; r < values.rows(); ++r) {
    for (Eigen::Index c = 0; c < values.cols(); ++c) {
      const int shift = (row_users ? law.row * e(r % num_users) : 0) + (col_users ? law.col * e(c % num_users) : 0);
      values(r, c) *= std::ldexp(1.0, sign * shift);
    }
  }
}

Eigen::MatrixXcd inverter_gram(const datapath_plan& plan, const std::vector<Eigen::MatrixXcd>& values) {
  Eigen::MatrixXcd gram = values.at(index_of(node_id::gram));
  if (has_block_float(plan)) {
    apply_exponent_law(plan, node_id::gram, gram,
                       golden_block_exponents(values.at(index_of(node_id::chan_est)), plan.block_top), -1);
  }
  return gram;
}

void golden_to_word_scale(const datapath_plan& plan, std::vector<Eigen::MatrixXcd>& values) {
  if (!has_block_float(plan)) return;
  const Eigen::VectorXi e = golden_block_exponents(values.at(index_of(node_id::chan_est)), plan.block_top);
  for (node_id id : plan.nodes()) apply_exponent_law(plan, id, values[index_of(id)], e, -1);
}

}  // namespace fxmimo::datapath
