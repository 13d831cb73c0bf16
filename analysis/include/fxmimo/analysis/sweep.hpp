#pragma once
/// Sweeps: one node's width varied over a range, every other node as configured; each point is
/// exactly a `fxmimo run` of the scenario with that width set (same trials, same results).

#include <optional>
#include <string>
#include <vector>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/shard.hpp"

namespace fxmimo::analysis {

/// What a sweep's "bits" mean: fraction bits (integer bits kept), word bits (integer bits
/// kept), or integer bits (fraction bits kept).
enum class sweep_axis { frac, word, int_bits };
std::string_view to_string(sweep_axis axis);
/// The axis named "frac", "word" or "int"; nullopt for anything else.
std::optional<sweep_axis> parse_sweep_axis(std::string_view name);

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
  double max_overflow_rate = 0.0;   ///< largest overflow rate over all nodes but a clipping one (clips_by_design)
  run_distribution distribution;    ///< percentiles over trials and users
  /// The uplink at this point as run_trials reduced it (README "The uplink"); absent without
  /// [uplink].
  std::optional<uplink_results> uplink;
};

struct sweep_results {
  std::string scenario_name;
  std::size_t num_trials = 0;
  sweep_axis axis = sweep_axis::frac;
  std::vector<sweep_point> points;  ///< node by node, bits rising
};

/// The number of points of a sweep over `nodes` and bits lo..hi: node by node, bits rising
/// (point i is node i / (hi - lo + 1) at bits lo + i % (hi - lo + 1)).
std::size_t sweep_point_count(const std::vector<datapath::node_id>& nodes, int lo, int hi);

/// Runs the sweep: for each node and each bits in [lo, hi], run_trials with that one format
/// changed. Progress counts trials over all points. The points share a trial_cache of
/// `cache_budget_bytes` (default_cache_budget_bytes when absent; 0 keeps nothing): results are
/// the same with any budget. With `points` (a shard's share), only those points are run and
/// returned; every point's format is checked all the same, and each point's results are those of
/// the whole sweep.
sweep_results run_sweep(const golden::scenario& scen, const datapath::datapath_config& config,
                        const std::vector<datapath::node_id>& nodes, int lo, int hi, sweep_axis axis,
                        const std::vector<std::uint64_t>& trials, unsigned num_threads,
                        const progress_callback& progress = {}, std::optional<double> cache_budget_bytes = {},
                        std::optional<index_range> points = {});

/// A sweep over a scenario key (an operating point, not a width): each point is exactly `fxmimo
/// run` of the scenario with KEY = value, every width as configured.
struct key_sweep_point {
  std::string value;  ///< the key's value as given (TOML)
  run_summary summary;
  /// Golden interference-to-signal ratio at the users, dB: 20 log10 of the golden EVM (noise
  /// excluded, so multi-user and inter-cell interference plus precoder leakage over the signal).
  double interference_db = 0.0;
  double max_overflow_rate = 0.0;  ///< largest over all nodes but a clipping one (clips_by_design)
  /// Integer bits each accumulating node needs for the largest golden value seen
  /// (int_bits_for(max |golden|)), in datapath order.
  std::vector<std::pair<datapath::node_id, int>> growth_int_bits;
};

struct key_sweep_results {
  std::string scenario_name;
  std::string key;
  std::size_t num_trials = 0;
  std::vector<key_sweep_point> points;  ///< in the order of the values
};

/// Runs one point per scenario (the same scenario with the key set to values[i]); the scenarios
/// must share the datapath's nodes. Progress counts trials over all points. With `points` (a
/// shard's share), only those values are run and returned (every scenario is checked).
key_sweep_results run_key_sweep(const std::vector<golden::scenario>& scenarios, const std::vector<std::string>& values,
                                const std::string& key, const datapath::datapath_config& config,
                                const std::vector<std::uint64_t>& trials, unsigned num_threads,
                                const progress_callback& progress = {}, std::optional<index_range> points = {});

}  // namespace fxmimo::analysis
