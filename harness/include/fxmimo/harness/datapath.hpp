#pragma once
/// The bit-true datapath of one trial: every node of nodes.hpp computed in integers with the
/// fixedpoint core, from the golden model's inputs of the same trial (the received pilot block
/// before the ADC, the pilot sequences, the estimator scales, the QAM symbols). The order of
/// every accumulation and each requantisation is documented in the README, section
/// "How it computes"; this file is that text in code.

#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/golden/trial.hpp"
#include "fxmimo/harness/nodes.hpp"
#include "fxmimo/harness/word_matrix.hpp"

#include <Eigen/Dense>

#include <array>

namespace fxmimo::harness {

/// Words and counters of every node in one trial (inactive nodes stay empty).
struct fixed_trial {
  std::array<word_matrix, num_nodes> words;
  std::array<fixedpoint::counters, num_nodes> counters;
  Eigen::MatrixXcd dac_value;  ///< the dac words as values (M x N), for evaluation
};

/// Runs the fixed-point datapath of cell 0's base station for one golden trial.
fixed_trial run_fixed_datapath(const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial);

/// The golden (double) value of every active node, shaped like the node's words (real nodes
/// as complex matrices with zero imaginary part), for per-node error measurement.
std::array<Eigen::MatrixXcd, num_nodes> golden_node_values(const golden::scenario& scen,
                                                           const golden::trial_data& trial);

/// Words as values: raw * 2^-frac_bits.
Eigen::MatrixXcd to_values(const word_matrix& words, int frac_bits);

}  // namespace fxmimo::harness
