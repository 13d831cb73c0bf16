#pragma once
/// Range profiling: the golden value of every node over many trials, its distribution, and a
/// proposal of integer bits for a target overflow probability beside the worst-case analytic
/// growth of the accumulating nodes.

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "fxmimo/analysis/tail.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::analysis {

struct node_range {
  datapath::node_id id = datapath::node_id::adc;
  std::uint64_t num_values = 0;                  ///< real and imaginary parts counted separately (real nodes: one)
  double max_abs = 0.0;                          ///< largest |part|
  double p99 = 0.0, p9999 = 0.0, p999999 = 0.0;  ///< percentiles of |part|
  /// Histogram of floor(log2 |part|) for exponents hist_min_exp .. hist_min_exp + size - 1
  /// (zeros are not counted).
  int hist_min_exp = -40;
  std::vector<std::uint64_t> log2_histogram;
  /// Proposed integer bits m (signed Qm.n, |v| < 2^m) for the overflow probability.
  int proposed_int_bits = 0;
  /// "quantile" (at least 10 / p values), "tail" (the upper 95 % bound of a generalized Pareto
  /// fit, never below the largest value) or "max+1" (too few values for a fit).
  std::string proposal_basis;
  std::optional<tail_fit> tail;          ///< the fit, where one was made
  std::optional<int> analytic_int_bits;  ///< worst-case growth, where it is a simple rule
  std::string analytic_rule;             ///< e.g. "adc + pilot_rom + log2(tau_p)"
};

struct range_results {
  std::string scenario_name;
  std::size_t num_trials = 0;
  double overflow_prob = 1e-6;
  std::vector<node_range> nodes;  ///< active nodes, datapath order
  /// Condition number of the Gram over the trials (absent without a Gram).
  std::optional<double> gram_condition_p50, gram_condition_p95, gram_condition_max;
};

/// Runs `num_trials` golden trials (0 .. n-1) on `num_threads` threads and profiles every active
/// node. The datapath config supplies the formats the analytic rule starts from.
range_results profile_ranges(const golden::scenario& scen, const datapath::datapath_config& config, int num_trials,
                             unsigned num_threads, double overflow_prob,
                             const std::function<void(std::size_t, std::size_t)>& progress = {});

/// Integer bits m such that a signed Qm.n holds |v| <= value: the smallest m with 2^m > value
/// (at least -30 for value 0).
int int_bits_for(double value);

/// The datapath config with every active node's integer bits set to the proposal and its
/// fraction bits kept (word bits adjusted; at most 64).
datapath::datapath_config apply_proposal(const datapath::datapath_config& config, const range_results& ranges);

}  // namespace fxmimo::analysis
