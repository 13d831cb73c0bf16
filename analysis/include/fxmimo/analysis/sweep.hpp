#pragma once
/// Sweeps: one node's width varied over a range, every other node as configured; each point is
/// exactly a `fxmimo run` of the scenario with that width set (same trials, same results).

#include <string>
#include <vector>

#include "fxmimo/analysis/runner.hpp"

namespace fxmimo::analysis {

/// What a sweep's "bits" mean: fraction bits (integer bits kept), word bits (integer bits
/// kept), or integer bits (fraction bits kept).
enum class sweep_axis { frac, word, int_bits };
std::string_view to_string(sweep_axis axis);

/// `base` with the swept quantity set to `bits`; throws std::invalid_argument when the result
/// is not a datapath format (fewer than 2 or more than 64 word bits).
fixedpoint::format swept_format(const fixedpoint::format& base, sweep_axis axis, int bits);

struct sweep_point {
  datapath::node_id id = datapath::node_id::adc;
  int bits = 0;
  fixedpoint::format fmt;
  run_summary summary;
  double node_sqnr_db = 0.0;        ///< the swept node's SQNR (+inf: exact)
  double node_overflow_rate = 0.0;  ///< the swept node's overflow rate
  double max_overflow_rate = 0.0;   ///< largest overflow rate over all nodes
};

struct sweep_results {
  std::string scenario_name;
  std::size_t num_trials = 0;
  sweep_axis axis = sweep_axis::frac;
  std::vector<sweep_point> points;  ///< node by node, bits rising
};

/// Runs the sweep: for each node and each bits in [lo, hi], run_trials with that one format
/// changed. Progress counts trials over all points.
sweep_results run_sweep(const golden::scenario& scen, const datapath::datapath_config& config,
                        const std::vector<datapath::node_id>& nodes, int lo, int hi, sweep_axis axis,
                        const std::vector<std::uint64_t>& trials, unsigned num_threads,
                        const progress_callback& progress = {});

}  // namespace fxmimo::analysis
