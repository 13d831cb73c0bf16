#pragma once
/// Block floating point on the channel estimate (README "Block floating point"): the estimate's
/// user column k holds mantissas in [-1, 1) and shares the exponent e_k = top - u_k, u_k the
/// word of node est_exp. The nodes downstream of the estimate up to the precoder hold words
/// scaled by powers of e (their exponent laws, stage.hpp); the precoder undoes them. These
/// functions turn such words into values and golden values into such words' scale.

#include <Eigen/Dense>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/datapath/word_matrix.hpp"

namespace fxmimo::datapath {

/// Whether the plan has a block-scaled node.
[[nodiscard]] bool has_block_float(const datapath_plan& plan);

/// One trial's exponents: e_k of the estimate's columns (empty without), f of the precoder (0
/// without).
struct block_exponents {
  Eigen::VectorXi user;
  int whole = 0;
};

/// The estimate's exponents e_k = top - u_k from a trial's fixed words (node est_exp at its
/// fraction bits): what the stages that read them use.
[[nodiscard]] Eigen::VectorXi fixed_user_exponents(int top, const datapath_config& config,
                                                   const std::vector<word_matrix>& words);
/// Every exponent of a trial's fixed words (est_exp, pre_exp).
[[nodiscard]] block_exponents fixed_block_exponents(const datapath_plan& plan, const datapath_config& config,
                                                    const std::vector<word_matrix>& words);

/// The golden model's exponent of each column of `values` by the same rule without rounding:
/// the smallest e <= top at which every real and imaginary part of the column times 2^-e lies in
/// [-1, 1) (floor(log2 max|part|) + 1, at least top - max_exponent_span for an all-zero column).
[[nodiscard]] Eigen::VectorXi golden_column_exponents(const Eigen::MatrixXcd& values, int top);
/// The golden exponents of a trial from its golden node values (values[chan_est] by column,
/// values[precoder] as one block).
[[nodiscard]] block_exponents golden_block_exponents(const datapath_plan& plan,
                                                     const std::vector<Eigen::MatrixXcd>& values);
/// The lowest golden exponent is top - max_exponent_span.
inline constexpr int max_exponent_span = 255;

/// values(i, j) *= 2^(sign (law.row e_r(i) + law.col e_c(j) + law.whole f)) for node `id`
/// (exponent_law): sign +1 turns a node's fixed words (as values) into its value, -1 a golden
/// value into the scale of its words. Nothing happens for a node without a law.
void apply_exponent_law(const datapath_plan& plan, node_id id, Eigen::MatrixXcd& values, const block_exponents& e,
                        int sign);

/// The Gram the inverter works on: the golden `gram` value (values[gram], golden_block_values),
/// as D^-1 G D^-1 with the golden exponents under block floating point on the estimate (what the
/// inverse's words span), else as it is.
[[nodiscard]] Eigen::MatrixXcd inverter_gram(const datapath_plan& plan, const std::vector<Eigen::MatrixXcd>& values);

/// A trial's golden node values (golden_block_values) brought to their words' scale with the
/// golden exponents (what range profiles); nothing without block floating point.
void golden_to_word_scale(const datapath_plan& plan, std::vector<Eigen::MatrixXcd>& values);

}  // namespace fxmimo::datapath
