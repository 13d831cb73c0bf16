// Block floating point on the estimate: exponents of fixed words and of golden values, and the
// exponent laws applied to a node's values. The fixed rule itself is the estimate stage's
// (stages/estimate.cpp).
#include "fxmimo/datapath/block_float.hpp"

#include <algorithm>
#include <cmath>

namespace fxmimo::datapath {

bool has_block_float(const datapath_plan& plan) { return !plan.laws.empty(); }

namespace {

/// top - u for the whole number u a real node's word holds at its fraction bits (the stages
/// write u << frac with u >= 0, so the shift back is exact).
int exponent_of(int top, std::int64_t word, int frac) {
  return top - static_cast<int>(frac >= 0 ? word >> frac : word << -frac);
}

bool is_user_dimension(dim d) { return d == dim::user || d == dim::term_user || d == dim::sweep_user; }

}  // namespace

Eigen::VectorXi fixed_user_exponents(int top, const datapath_config& config, const std::vector<word_matrix>& words) {
  const word_matrix& u = words.at(index_of(node_id::est_exp));
  const int frac = config[node_id::est_exp].spec.fmt.frac_bits;
  Eigen::VectorXi e(static_cast<Eigen::Index>(u.rows));
  for (int k = 0; k < u.rows; ++k) e(k) = exponent_of(top, u.re[u.at(k, 0)], frac);
  return e;
}

block_exponents fixed_block_exponents(const datapath_plan& plan, const datapath_config& config,
                                      const std::vector<word_matrix>& words) {
  block_exponents out;
  if (plan.user_top) out.user = fixed_user_exponents(*plan.user_top, config, words);
  if (plan.whole_top) {
    out.whole = exponent_of(*plan.whole_top, words.at(index_of(node_id::pre_exp)).re.at(0),
                            config[node_id::pre_exp].spec.fmt.frac_bits);
  }
  return out;
}

Eigen::VectorXi golden_column_exponents(const Eigen::MatrixXcd& values, int top) {
  Eigen::VectorXi e(values.cols());
  for (Eigen::Index k = 0; k < values.cols(); ++k) {
    double largest = 0.0;
    for (Eigen::Index m = 0; m < values.rows(); ++m)
      largest = std::max({largest, std::abs(values(m, k).real()), std::abs(values(m, k).imag())});
    int exponent = top - max_exponent_span;
    if (largest > 0.0) std::frexp(largest, &exponent);  // largest in [2^(exponent-1), 2^exponent)
    e(k) = std::clamp(exponent, top - max_exponent_span, top);
  }
  return e;
}

block_exponents golden_block_exponents(const datapath_plan& plan, const std::vector<Eigen::MatrixXcd>& values) {
  block_exponents out;
  if (plan.user_top) out.user = golden_column_exponents(values.at(index_of(node_id::chan_est)), *plan.user_top);
  if (plan.whole_top) {
    const Eigen::MatrixXcd& w = values.at(index_of(node_id::precoder));
    out.whole = w.size() == 0 ? *plan.whole_top : golden_column_exponents(w, *plan.whole_top).maxCoeff();
  }
  return out;
}

void apply_exponent_law(const datapath_plan& plan, node_id id, Eigen::MatrixXcd& values, const block_exponents& e,
                        int sign) {
  const exponent_law law = plan.law_of(id);
  if (!law.carries() || values.size() == 0) return;
  const std::array<dim, 2> d = dims_of(id);
  const auto num_users = static_cast<Eigen::Index>(e.user.size());
  const bool row_users = is_user_dimension(d[0]) && law.row != 0 && num_users > 0;
  const bool col_users = is_user_dimension(d[1]) && law.col != 0 && num_users > 0;
  for (Eigen::Index r = 0; r < values.rows(); ++r) {
    for (Eigen::Index c = 0; c < values.cols(); ++c) {
      const int shift = (row_users ? law.row * e.user(r % num_users) : 0) +
                        (col_users ? law.col * e.user(c % num_users) : 0) + law.whole * e.whole;
      values(r, c) *= std::ldexp(1.0, sign * shift);
    }
  }
}

Eigen::MatrixXcd inverter_gram(const datapath_plan& plan, const std::vector<Eigen::MatrixXcd>& values) {
  Eigen::MatrixXcd gram = values.at(index_of(node_id::gram));
  if (plan.user_top) apply_exponent_law(plan, node_id::gram, gram, golden_block_exponents(plan, values), -1);
  return gram;
}

void golden_to_word_scale(const datapath_plan& plan, std::vector<Eigen::MatrixXcd>& values) {
  if (!has_block_float(plan)) return;
  const block_exponents e = golden_block_exponents(plan, values);
  for (node_id id : plan.nodes()) apply_exponent_law(plan, id, values[index_of(id)], e, -1);
}

}  // namespace fxmimo::datapath
