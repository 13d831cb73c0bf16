#pragma once
/// Automatic word-length search: the cheapest fraction bits per node that keep SINR loss,
/// implementation EVM and overflow rate inside limits. Integer bits come from the range
/// proposal. Method (a sequential search of the kind compared by Cantin, Savaria & Lavoie,
/// "A comparison of automatic word length optimization procedures", ISCAS 2002): each node's
/// minimum with all others wide, then greedy passes that add a bit where it buys the most budget
/// per unit cost (ranked once per round, taken in rank order while each still helps) and remove
/// bits while the limits hold; finally a re-verification on fresh trials.

#include <functional>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/runner.hpp"

namespace fxmimo::analysis {

struct tune_limits {
  double max_sinr_loss_db = 0.1;
  double max_evm_pct = 1.0;                ///< implementation EVM at the DAC, %
  double max_overflow_rate = 1e-6;         ///< for every node
  double max_rms_tx_power_error_db = 0.1;  ///< RMS over trials of the transmit-power error of the fixed block, dB
  /// The SINR-loss limit applies to this percentile (0..100) of the per-(trial, user) losses;
  /// nullopt: to the mean over users (sinr_loss_statistic).
  std::optional<double> sinr_loss_percentile = std::nullopt;
  /// With an uplink (README "The uplink"): the uplink's mean SINR loss over users, dB, and the
  /// ratio of its bit error counts (fixed + 1) / (golden + 1); nullopt: no limit.
  std::optional<double> max_uplink_sinr_loss_db = std::nullopt;
  std::optional<double> max_uplink_ber_ratio = std::nullopt;
};

/// The figures the limits apply to.
struct tune_figures {
  double sinr_loss_db = 0.0;
  double evm_pct = 0.0;
  double max_overflow_rate = 0.0;
  double rms_tx_power_error_db = 0.0;
  double uplink_sinr_loss_db = 0.0;  ///< 0 without an uplink
  double uplink_ber_ratio = 1.0;     ///< (fixed errors + 1) / (golden errors + 1); 1 without an uplink
  [[nodiscard]] bool meets(const tune_limits& l) const {
    return sinr_loss_db <= l.max_sinr_loss_db && evm_pct <= l.max_evm_pct && max_overflow_rate <= l.max_overflow_rate &&
           rms_tx_power_error_db <= l.max_rms_tx_power_error_db &&
           (!l.max_uplink_sinr_loss_db || uplink_sinr_loss_db <= *l.max_uplink_sinr_loss_db) &&
           (!l.max_uplink_ber_ratio || uplink_ber_ratio <= *l.max_uplink_ber_ratio);
  }
  /// Largest of the three figures over their limits (<= 1 when every limit holds).
  [[nodiscard]] double worst_ratio(const tune_limits& l) const;
};
tune_figures figures_of(const run_results& r, const tune_limits& limits);

enum class cost_model { bits, area };
std::string_view to_string(cost_model m);

/// Cost of a configuration, summed over the stages of datapath::stages_for(scen). bits: the sum
/// of the nodes' word bits. area (a stated proxy): storage bits (word bits times the words each
/// node stores, stage::storage_words) plus each stage's real multipliers times the product of
/// their operand widths (stage::multiplier_cost: four per complex multiplier; the precoding
/// accumulator has one complex multiplier per antenna, every other stage one).
double datapath_cost(const golden::scenario& scen, const datapath::datapath_config& config, cost_model model);
/// One node's share of that cost: its word bits (bits), or word bits times the words its stage
/// stores for it (area; multipliers are the stages', not the nodes').
double node_cost(const datapath::datapath_plan& plan, const datapath::datapath_config& config, datapath::node_id id,
                 cost_model model);

/// The generic search over integer variables x_i in [lo_i, hi_i] (the fraction bits), given an
/// evaluation and a cost. Returns the chosen x; `evaluations` counts calls of `evaluate`.
std::vector<int> greedy_search(const std::vector<int>& lo, const std::vector<int>& hi,
                               const std::function<tune_figures(const std::vector<int>&)>& evaluate,
                               const std::function<double(const std::vector<int>&)>& cost, const tune_limits& limits,
                               int& evaluations);

/// The trials of a tune: the search's, range profiling's (golden only, from trial 0) and the
/// verification's (fresh: after both).
struct tune_trial_counts {
  int search = 1;
  std::size_t range = 1;
  std::size_t verify = 1;
};

/// One operating point of a tune: a scenario (a file, or the base scenario with overrides) and
/// its trial counts.
struct tune_corner {
  std::string name;  ///< "" for a plain tune; e.g. "data.snr_db=10, cells.users_per_cell=4"
  golden::scenario scen;
  tune_trial_counts trials;
};

/// What the tuned widths do at one corner.
struct corner_outcome {
  std::string name;
  std::size_t range_trials = 0;
  std::vector<std::uint64_t> verify_trials;
  tune_figures search, verification;
  double proven_overflow_bound = 0.0;  ///< largest node bound on its fresh trials
  datapath::node_id weakest_node{};
  bool met = false;
};

/// One way of building the scenario's divide and root units ([units.NODE] and its
/// `alternatives`) and what its tune gave.
struct variant_outcome {
  std::string label;  ///< e.g. "inv_diag_recip: newton a=6 n=2, norm: exact"
  double cost = 0.0;
  bool met = false;
  double worst_ratio = 0.0;  ///< tune_figures::worst_ratio of the verification
  int evaluations = 0;
  bool chosen = false;
};

struct tune_results {
  std::string scenario_name;
  tune_limits limits;
  cost_model model = cost_model::bits;
  datapath::datapath_config config;      ///< the tuned datapath
  std::vector<datapath::node_id> nodes;  ///< the tuned (active) nodes
  /// Active nodes kept at the scenario's setting: those that clip by design (ul_llr).
  std::vector<datapath::node_id> kept_nodes;
  double cost = 0.0;
  tune_figures search;        ///< on the search trials
  tune_figures verification;  ///< on fresh trials
  std::vector<std::uint64_t> search_trials, verify_trials;
  std::size_t range_trials = 0;
  std::vector<node_result> verify_nodes;  ///< per node on the fresh trials, datapath order
  run_distribution verify_distribution;   ///< on the fresh trials
  std::size_t users = 0;                  ///< users per trial (cell 0's)
  /// The largest over nodes of the 95 % upper bound of the overflow rate on the fresh trials
  /// (node_result::overflow_rate_bound) and the node it belongs to: what a PASS proves.
  double proven_overflow_bound = 0.0;
  datapath::node_id weakest_node{};
  int evaluations = 0;
  /// Per corner (one for a plain tune); the figures above are the worst over the corners, the
  /// per-node results and distributions those of the corner furthest from its limits.
  std::vector<corner_outcome> corners;
  /// Per node (order of `nodes`): the corner whose range profile set the integer bits, and the
  /// corner that one fraction bit less would fail first ("" : none, or a single corner).
  std::vector<std::string> int_bits_corner, frac_bits_corner;
  bool met = false;  ///< the verification meets every limit (at every corner)
  std::string note;  ///< why it could not, when it could not
  /// Where the scenario lists unit alternatives: every combination tuned (tune_unit_variants),
  /// the chosen one marked; `units` is the chosen combination.
  std::vector<variant_outcome> variants;
  golden::units_config units;
};

/// Runs range profiling (integer bits), then the search (aiming at the SINR-loss, EVM and power limits
/// reduced by `search_margin`, a fraction), then the verification on fresh trials against the
/// limits themselves.
tune_results tune_widths(const golden::scenario& scen, const datapath::datapath_config& start,
                         const tune_limits& limits, cost_model model, const tune_trial_counts& trials,
                         unsigned num_threads, double overflow_prob, double search_margin,
                         const std::function<void(const std::string&)>& status = {},
                         std::optional<double> cache_budget_bytes = {});

/// The same over several corners: one set of widths meeting the limits at every corner. Integer
/// bits are the largest range proposal over the corners; an evaluation is the worst figure over
/// the corners (the same search trials at each); each corner is verified on its own fresh
/// trials. The corners must share the datapath's nodes; cost is the first corner's. The search
/// evaluates each corner's trials through a trial_cache; the corners share `cache_budget_bytes`
/// (default_cache_budget_bytes when absent; 0 keeps nothing): results are the same with any
/// budget.
tune_results tune_widths_at_corners(const std::vector<tune_corner>& corners, const datapath::datapath_config& start,
                                    const tune_limits& limits, cost_model model, unsigned num_threads,
                                    double overflow_prob, double search_margin,
                                    const std::function<void(const std::string&)>& status = {},
                                    std::optional<double> cache_budget_bytes = {});

/// Every combination of the divide and root units a scenario lists: its own choices first, then
/// the cross product of each listing node's choices (own + alternatives), in file order. Each
/// entry is the units table to use and its label.
std::vector<std::pair<std::string, golden::units_config>> unit_variants(const golden::scenario& scen);

/// tune_widths_at_corners for each unit variant (the same corners, trial counts and start),
/// then the cheapest variant that meets the limits on its fresh trials (where none does, the
/// one closest to them: smallest worst_ratio); its results, with `variants` listing them all.
/// A scenario without alternatives is one plain tune.
tune_results tune_unit_variants(const std::vector<tune_corner>& corners, const datapath::datapath_config& start,
                                const tune_limits& limits, cost_model model, unsigned num_threads, double overflow_prob,
                                double search_margin, const std::function<void(const std::string&)>& status = {},
                                std::optional<double> cache_budget_bytes = {});

}  // namespace fxmimo::analysis
