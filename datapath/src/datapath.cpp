// Runs the plan's stages in order; their golden views in the same order.
#include "fxmimo/datapath/datapath.hpp"

#include <fmt/core.h>

#include <cmath>
#include <stdexcept>

namespace fxmimo::datapath {

namespace {

void check_config_size(const datapath_config& config) {
  if (config.nodes.size() != node_count()) {
    throw std::logic_error(
        fmt::format("datapath_config holds {} nodes, the node table {}: build the configuration after "
                    "registering nodes",
                    config.nodes.size(), node_count()));
  }
}

}  // namespace

fixed_trial run_block_stages(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                             const golden::trial_data& trial) {
  check_config_size(config);
  const std::vector<bool> data = plan.data_stages();
  fixed_trial out;
  out.words.resize(node_count());
  out.counters.resize(node_count());
  fixed_context ctx{scen, trial, config, out.words, out.counters};
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage)
    if (!data[i_stage]) plan.stages[i_stage]->compute(ctx);
  return out;
}

void run_data_stages(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                     const golden::trial_data& trial, const golden::data_block& block, fixed_trial& fixed,
                     const std::vector<bool>* only) {
  check_config_size(config);
  const std::vector<bool> data = plan.data_stages();
  fixed_context ctx{scen, trial, config, fixed.words, fixed.counters, &block};
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage)
    if (data[i_stage] && (only == nullptr || (*only)[i_stage])) plan.stages[i_stage]->compute(ctx);
}

fixed_trial run_fixed_datapath(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial) {
  fixed_trial out = run_block_stages(plan, scen, config, trial);
  run_data_stages(plan, scen, config, trial, golden::whole_data(scen, trial, false), out);
  return out;
}

fixed_trial run_fixed_datapath(const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial) {
  return run_fixed_datapath(stages_for(scen), scen, config, trial);
}

std::vector<node_id> changed_nodes(const datapath_plan& plan, const datapath_config& a, const datapath_config& b) {
  std::vector<node_id> out;
  for (node_id id : plan.nodes()) {
    const node_setting &x = a[id], &y = b[id];
    if (!(x.spec == y.spec) || !(x.order == y.order)) out.push_back(id);
  }
  return out;
}

fixed_trial rerun_block_stages(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial, const fixed_trial& earlier,
                               const datapath_config& earlier_config, std::vector<bool>* recomputed) {
  check_config_size(config);
  check_config_size(earlier_config);
  if (earlier.words.size() != node_count() || earlier.counters.size() != node_count())
    throw std::logic_error("rerun_block_stages: the earlier trial is not a run of this node table");
  const std::vector<bool> dirty = plan.stages_downstream_of(changed_nodes(plan, config, earlier_config));
  const std::vector<bool> data = plan.data_stages();
  fixed_trial out;
  out.words = earlier.words;
  out.counters = earlier.counters;
  if (recomputed != nullptr) recomputed->assign(node_count(), false);
  fixed_context ctx{scen, trial, config, out.words, out.counters};
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage) {
    const stage& s = *plan.stages[i_stage];
    // The data nodes are left empty for run_data_stages, as run_block_stages leaves them.
    if (data[i_stage])
      for (const port& p : s.ports()) out.words[index_of(p.node)] = word_matrix();
    if (!dirty[i_stage]) continue;
    // A stage counts into its outputs' counters from zero, as in a full run.
    for (const port& p : s.ports()) {
      out.counters[index_of(p.node)] = {};
      if (recomputed != nullptr) (*recomputed)[index_of(p.node)] = true;
    }
    if (!data[i_stage]) s.compute(ctx);
  }
  return out;
}

std::vector<Eigen::MatrixXcd> golden_block_values(const datapath_plan& plan, const golden::scenario& scen,
                                                  const golden::trial_data& trial,
                                                  std::vector<Eigen::MatrixXcd>* extents) {
  const std::vector<bool> data = plan.data_stages();
  std::vector<Eigen::MatrixXcd> values(node_count());
  if (extents != nullptr) extents->assign(node_count(), Eigen::MatrixXcd());
  golden_context ctx{scen, trial, values, nullptr, nullptr, extents};
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage)
    if (!data[i_stage]) plan.stages[i_stage]->golden_view(ctx);
  return values;
}

void golden_data_values(const datapath_plan& plan, const golden::scenario& scen, const golden::trial_data& trial,
                        const golden::data_block& block, const std::vector<Eigen::MatrixXcd>& block_values,
                        std::vector<Eigen::MatrixXcd>& values) {
  const std::vector<bool> data = plan.data_stages(), data_node = plan.data_nodes();
  values.resize(node_count());
  for (std::size_t i = 0; i < values.size(); ++i)
    if (data_node[i]) values[i].resize(0, 0);
  golden_context ctx{scen, trial, values, &block, &block_values};
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage)
    if (data[i_stage]) plan.stages[i_stage]->golden_view(ctx);
}

std::vector<Eigen::MatrixXcd> golden_node_values(const datapath_plan& plan, const golden::scenario& scen,
                                                 const golden::trial_data& trial) {
  std::vector<Eigen::MatrixXcd> values = golden_block_values(plan, scen, trial);
  std::vector<Eigen::MatrixXcd> data_values;
  golden_data_values(plan, scen, trial, golden::whole_data(scen, trial), values, data_values);
  for (std::size_t i = 0; i < values.size(); ++i)
    if (data_values[i].size() > 0) values[i] = std::move(data_values[i]);
  return values;
}

std::vector<Eigen::MatrixXcd> golden_node_values(const golden::scenario& scen, const golden::trial_data& trial) {
  return golden_node_values(stages_for(scen), scen, trial);
}

Eigen::MatrixXcd to_values(const word_matrix& words, int frac_bits) {
  // Scaling by a power of two is exact in double (no word here comes near its range limits);
  // the conversion of a word above 2^53 rounds, which only reporting sees.
  const double lsb = std::ldexp(1.0, -frac_bits);
  Eigen::MatrixXcd out(words.rows, words.cols);
  for (int r = 0; r < words.rows; ++r) {
    for (int c = 0; c < words.cols; ++c) {
      const std::size_t i = words.at(r, c);
      out(r, c) = {static_cast<double>(words.re[i]) * lsb,
                   words.is_complex ? static_cast<double>(words.im[i]) * lsb : 0.0};
    }
  }
  return out;
}

}  // namespace fxmimo::datapath
