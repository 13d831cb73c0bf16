#include "fxmimo/analysis/statistics.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <boost/math/special_functions/gamma.hpp>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "fxmimo/analysis/resources.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::analysis {

namespace {

constexpr std::size_t max_trials = 100'000'000;

sample_plan described(const golden::scenario& scen, double values_needed) {
  sample_plan out;
  out.values_needed = values_needed;
  out.sparsest_values = std::numeric_limits<std::uint64_t>::max();
  for (const auto& [id, v] : values_per_trial(scen)) {
    if (v > 0 && v < out.sparsest_values) {
      out.sparsest_values = v;
      out.sparsest = id;
    }
  }
  if (out.sparsest_values == std::numeric_limits<std::uint64_t>::max()) throw std::logic_error("no node has values");
  const double needed = std::ceil(values_needed / static_cast<double>(out.sparsest_values));
  out.needed = static_cast<std::size_t>(std::min<double>(needed, max_trials));
  return out;
}

}  // namespace

std::vector<std::pair<datapath::node_id, std::uint64_t>> values_per_trial(const golden::scenario& scen) {
  const datapath::datapath_plan plan = datapath::stages_for(scen);
  const golden::trial_data trial = golden::run_trial(scen, 0);
  const auto values = datapath::golden_block_values(plan, scen, trial);
  // A data node holds one block's columns at a time: its rows times N values in all.
  golden::data_stream stream(scen, trial);
  golden::data_block block;
  std::vector<Eigen::MatrixXcd> data_values;
  if (stream.next(block)) datapath::golden_data_values(plan, scen, trial, block, values, data_values);
  data_values.resize(datapath::node_count());
  std::vector<std::pair<datapath::node_id, std::uint64_t>> out;
  for (datapath::node_id id : plan.nodes()) {
    const std::size_t i = datapath::index_of(id);
    const auto size = data_values[i].size() > 0 ? static_cast<std::uint64_t>(data_values[i].rows()) *
                                                      static_cast<std::uint64_t>(scen.data.num_symbols)
                                                : static_cast<std::uint64_t>(values[i].size());
    out.emplace_back(id, datapath::node_is_complex(id) ? 2 * size : size);
  }
  return out;
}

std::string sample_plan::text(const std::string& what) const {
  const std::string basis = fmt::format("{:.3g} values per node; node {} has {} per trial", values_needed,
                                        datapath::node_name(sparsest), sparsest_values);
  if (explicit_count) return fmt::format("{} {} (given; {}: {} needed)", trials, what, basis, needed);
  if (capped)
    return fmt::format("{} {} ({}: {} needed; capped by the budget of {:g} s at {:g} MAC/s)", trials, what, basis,
                       needed, budget_seconds, reference_macs_per_second);
  return fmt::format("{} {} ({})", trials, what, basis);
}

sample_plan plan_samples(const golden::scenario& scen, double values_needed, std::size_t at_least,
                         double budget_seconds) {
  sample_plan out = described(scen, values_needed);
  out.budget_seconds = budget_seconds;
  const double per_trial = std::max(1.0, trial_work_macs(scen).amount);
  const double affordable = std::floor(budget_seconds * reference_macs_per_second / per_trial);
  const std::size_t cap = static_cast<std::size_t>(std::clamp<double>(affordable, 0.0, max_trials));
  out.trials = std::max(at_least, std::min(out.needed, cap));
  out.capped = out.trials < out.needed;
  return out;
}

sample_plan given_samples(const golden::scenario& scen, double values_needed, std::size_t trials) {
  sample_plan out = described(scen, values_needed);
  out.trials = trials;
  out.explicit_count = true;
  out.capped = trials < out.needed;
  return out;
}

double rate_upper_bound(std::uint64_t events, std::uint64_t values, double confidence) {
  if (values == 0) return std::numeric_limits<double>::infinity();
  return boost::math::gamma_p_inv(static_cast<double>(events) + 1.0, confidence) / static_cast<double>(values);
}

sample_plan range_trial_plan(const golden::scenario& scen, double overflow_prob, std::size_t given,
                             std::size_t at_least, double budget_seconds) {
  const double values = 10.0 / overflow_prob;
  return given > 0 ? given_samples(scen, values, given) : plan_samples(scen, values, at_least, budget_seconds);
}

sample_plan verify_trial_plan(const golden::scenario& scen, double max_overflow_rate, std::size_t given,
                              std::size_t at_least, double budget_seconds) {
  const double values = -std::log(0.05) / max_overflow_rate;
  return given > 0 ? given_samples(scen, values, given) : plan_samples(scen, values, at_least, budget_seconds);
}

double percentile(std::vector<double> values, double q) {
  if (values.empty()) return 0.0;
  std::sort(values.begin(), values.end());
  const double h = std::clamp(q, 0.0, 1.0) * static_cast<double>(values.size() - 1);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  const std::size_t hi = std::min(lo + 1, values.size() - 1);
  return values[lo] + (h - static_cast<double>(lo)) * (values[hi] - values[lo]);
}

}  // namespace fxmimo::analysis
