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

fixed_trial run_fixed_datapath(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                               const golden::trial_data& trial) {
  check_config_size(config);
  fixed_trial out;
  out.words.resize(node_count());
  out.counters.resize(node_count());
  fixed_context ctx{scen, trial, config, out.words, out.counters};
  for (const auto& s : plan.stages) s->compute(ctx);
  out.dac_value = to_values(out.words[index_of(node_id::dac)], config[node_id::dac].spec.fmt.frac_bits);
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

fixed_trial rerun_fixed_datapath(const datapath_plan& plan, const golden::scenario& scen, const datapath_config& config,
                                 const golden::trial_data& trial, const fixed_trial& earlier,
                                 const datapath_config& earlier_config, std::vector<bool>* recomputed) {
  check_config_size(config);
  check_config_size(earlier_config);
  if (earlier.words.size() != node_count() || earlier.counters.size() != node_count())
    throw std::logic_error("rerun_fixed_datapath: the earlier trial is not a run of this node table");
  const std::vector<bool> dirty = plan.stages_downstream_of(changed_nodes(plan, config, earlier_config));
  fixed_trial out;
  out.words = earlier.words;
  out.counters = earlier.counters;
  if (recomputed != nullptr) recomputed->assign(node_count(), false);
  fixed_context ctx{scen, trial, config, out.words, out.counters};
  bool dac_again = false;
  for (std::size_t i_stage = 0; i_stage < plan.stages.size(); ++i_stage) {
    if (!dirty[i_stage]) continue;
    const stage& s = *plan.stages[i_stage];
    // A stage counts into its outputs' counters from zero, as in a full run.
    for (const port& p : s.ports()) {
      out.counters[index_of(p.node)] = {};
      if (recomputed != nullptr) (*recomputed)[index_of(p.node)] = true;
      dac_again = dac_again || p.node == node_id::dac;
    }
    s.compute(ctx);
  }
  out.dac_value = dac_again ? to_values(out.words[index_of(node_id::dac)], config[node_id::dac].spec.fmt.frac_bits)
                            : earlier.dac_value;
  return out;
}

std::vector<Eigen::MatrixXcd> golden_node_values(const datapath_plan& plan, const golden::scenario& scen,
                                                 const golden::trial_data& trial) {
  std::vector<Eigen::MatrixXcd> values(node_count());
  golden_context ctx{scen, trial, values};
  for (const auto& s : plan.stages) s->golden_view(ctx);
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
