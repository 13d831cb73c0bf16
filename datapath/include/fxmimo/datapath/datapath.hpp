#pragma once
/// The bit-true datapath of one trial: the plan's stages run in order, each computing its nodes
/// in integers with the fixedpoint core from the golden model's inputs of the same trial (the
/// received pilot block before the ADC, the pilot sequences, the estimator scales, the QAM
/// symbols). The order of every accumulation and each requantisation is documented in the
/// README, section "How it computes"; the stage files are that text in code.

#include <Eigen/Dense>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/datapath/word_matrix.hpp"
#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::datapath {

/// Words and counters of every known node in one trial, indexed by index_of (nodes outside the
/// plan stay empty).
struct fixed_trial {
  std::vector<word_matrix> words;
  std::vector<fixedpoint::counters> counters;
  Eigen::MatrixXcd dac_value;  ///< the dac words as values (M x N), for evaluation
};

/// Runs the fixed-point datapath of cell 0's base station for one golden trial.
fixed_trial run_fixed_datapath(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial);
/// The same with stages_for(scen).
fixed_trial run_fixed_datapath(const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial);

/// The nodes of the plan whose settings differ between two configurations in anything that
/// changes their words (format, rounding, overflow, accumulation order), in datapath order.
std::vector<node_id> changed_nodes(const datapath_plan& plan, const datapath_config& a, const datapath_config& b);

/// run_fixed_datapath for `config`, reusing `earlier`, the same plan and trial run with
/// `earlier_config`: the words and counters of stages upstream of every changed node are
/// copied, only the stages downstream of one (datapath_plan::stages_downstream_of) run again.
/// Bit for bit and counter for counter the same as a full run. When `recomputed` is given, it
/// is set per node (indexed by index_of) to whether the node's words were computed again.
fixed_trial rerun_fixed_datapath(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                                 const golden::trial_data& trial, const fixed_trial& earlier,
                                 const datapath_config& earlier_config, std::vector<bool>* recomputed = nullptr);

/// The golden (double) value of every node of the plan, shaped like the node's words (real
/// nodes as complex matrices with zero imaginary part), for per-node error measurement.
std::vector<Eigen::MatrixXcd> golden_node_values(const datapath_plan& plan, const golden::scenario& scen,
                                                 const golden::trial_data& trial);
std::vector<Eigen::MatrixXcd> golden_node_values(const golden::scenario& scen, const golden::trial_data& trial);

/// Words as values: raw * 2^-frac_bits.
Eigen::MatrixXcd to_values(const word_matrix& words, int frac_bits);

}  // namespace fxmimo::datapath
