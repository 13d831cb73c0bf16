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
/// plan stay empty). After run_block_stages the data nodes are empty; run_data_stages sets them
/// to one symbol block's words and adds to their counters.
struct fixed_trial {
  std::vector<word_matrix> words;
  std::vector<fixedpoint::counters> counters;
};

/// The stages outside the data phase (datapath_plan::data_stages) of cell 0's base station for
/// one golden trial, in plan order; the data nodes stay empty with zero counters.
fixed_trial run_block_stages(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                             const golden::trial_data& trial);
/// The data stages for one symbol block, after run_block_stages of the same trial: the data
/// nodes' words become the block's, their counters grow by the block's counts. Run over a
/// trial's blocks in order (golden::data_stream), the counters are the whole data phase's. With
/// `only` (per stage of the plan), only the data stages it marks run; the others' words must
/// already hold the block (an earlier evaluation's, for incremental runs).
void run_data_stages(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                     const golden::trial_data& trial, const golden::data_block& block, fixed_trial& fixed,
                     const std::vector<bool>* only = nullptr);

/// The whole datapath with the data phase as one block of all N symbols (golden::whole_data):
/// every node's words of the trial, for vector files and checks. A data-phase word depends on
/// its own symbol's column only, so these words are the blocks' words side by side.
fixed_trial run_fixed_datapath(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial);
/// The same with stages_for(scen).
fixed_trial run_fixed_datapath(const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial);

/// The nodes of the plan whose settings differ between two configurations in anything that
/// changes their words (format, rounding, overflow, accumulation order), in datapath order.
std::vector<node_id> changed_nodes(const datapath_plan& plan, const datapath_config& a, const datapath_config& b);

/// run_block_stages for `config`, reusing `earlier`, the same plan and trial run with
/// `earlier_config`: the words and counters of stages upstream of every changed node are
/// copied, only the stages downstream of one (datapath_plan::stages_downstream_of) run again.
/// Bit for bit and counter for counter the same as run_block_stages. When `recomputed` is
/// given, it is set per node (indexed by index_of) to whether the node's words were computed
/// again, or, for a data node, are to be computed again by run_data_stages (the data stages
/// downstream of a change; their counters are zeroed, the others' kept). The data nodes' words
/// are left empty.
fixed_trial rerun_block_stages(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial, const fixed_trial& earlier,
                               const datapath_config& earlier_config, std::vector<bool>* recomputed = nullptr);

/// The golden (double) value of every node outside the data phase, shaped like the node's words
/// (real nodes as complex matrices with zero imaginary part); data nodes stay empty.
/// With `extents`, also the register extents the stages record (golden_context::set_extent),
/// resized to the node table (empty where a stage records none).
std::vector<Eigen::MatrixXcd> golden_block_values(const datapath_plan& plan, const golden::scenario& scen,
                                                  const golden::trial_data& trial,
                                                  std::vector<Eigen::MatrixXcd>* extents = nullptr);
/// The golden values of the data nodes over one symbol block into `values` (resized to the node
/// table; every other node empty), reading the other nodes' from `block_values`.
void golden_data_values(const datapath_plan& plan, const golden::scenario& scen, const golden::trial_data& trial,
                        const golden::data_block& block, const std::vector<Eigen::MatrixXcd>& block_values,
                        std::vector<Eigen::MatrixXcd>& values);
/// Every node's golden value with the data phase as one block of all N symbols.
std::vector<Eigen::MatrixXcd> golden_node_values(const datapath_plan& plan, const golden::scenario& scen,
                                                 const golden::trial_data& trial);
std::vector<Eigen::MatrixXcd> golden_node_values(const golden::scenario& scen, const golden::trial_data& trial);

/// Words as values: raw * 2^-frac_bits.
Eigen::MatrixXcd to_values(const word_matrix& words, int frac_bits);

}  // namespace fxmimo::datapath
