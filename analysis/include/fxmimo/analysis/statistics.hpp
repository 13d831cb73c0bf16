#pragma once
/// Statistics of the trials: percentiles, and how many trials a claim about every node needs
/// and what the trials actually prove. A quantile at probability p is estimated, not guessed, from at least 10 / p
/// values; zero overflows in n values bound the overflow rate below 3 / n at 95 % (the rule of three, common practice;
/// exactly -ln(0.05) / n = 2.996 / n). The node with the fewest values per trial sets the count. Default counts are
/// bounded by a budget in seconds at a fixed reference rate, so they depend on the scenario only, never on the
/// machine's speed or load.

#include <cstddef>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "fxmimo/datapath/node_table.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::analysis {

/// Complex multiply-accumulates per second a default trial budget is converted at: one core of
/// the 2-core development machine of 2026 (README "Performance").
inline constexpr double reference_macs_per_second = 1e8;

/// Values per trial of every active node (real and imaginary parts counted separately), in
/// datapath order.
std::vector<std::pair<datapath::node_id, std::uint64_t>> values_per_trial(const golden::scenario& scen);

struct sample_plan {
  std::size_t trials = 0;             ///< the count chosen
  std::size_t needed = 0;             ///< what the claim needs
  double values_needed = 0.0;         ///< per node
  datapath::node_id sparsest{};       ///< the node with the fewest values per trial
  std::uint64_t sparsest_values = 0;  ///< its values per trial
  double budget_seconds = 0.0;        ///< the budget at reference_macs_per_second
  bool capped = false;                ///< the budget gave fewer trials than needed
  bool explicit_count = false;        ///< the user gave the count
  /// "2400 golden trials (the 10/p = 1e+07 values node norm needs take 1e+07 trials; capped by
  /// the budget of 60 s)"; `what` names the trials and the claim.
  [[nodiscard]] std::string text(const std::string& what) const;
};

/// Trials giving every node at least `values_needed` values: ceil(values_needed / v_min), at
/// least `at_least`, at most what `budget_seconds` of work at the reference rate allows (never
/// below `at_least`), at most 10^8.
sample_plan plan_samples(const golden::scenario& scen, double values_needed, std::size_t at_least,
                         double budget_seconds);

/// The count the user gave, described in the same terms.
sample_plan given_samples(const golden::scenario& scen, double values_needed, std::size_t trials);

/// One-sided upper confidence bound of a rate from `events` in `values` Poisson-distributed
/// counts: gamma_p_inv(events + 1, confidence) / values (Garwood 1936; for zero events at 95 %
/// it is 2.996 / values, the rule of three). +inf for no values.
double rate_upper_bound(std::uint64_t events, std::uint64_t values, double confidence = 0.95);

/// Trials for range profiling: 10 / overflow_prob values per node (`given` > 0: that count).
sample_plan range_trial_plan(const golden::scenario& scen, double overflow_prob, std::size_t given,
                             std::size_t at_least, double budget_seconds);
/// Fresh trials for the verification of an overflow-rate limit: -ln(0.05) / limit values per
/// node, so zero overflows prove the limit at 95 % (`given` > 0: that count).
sample_plan verify_trial_plan(const golden::scenario& scen, double max_overflow_rate, std::size_t given,
                              std::size_t at_least, double budget_seconds);

/// The q-quantile (0 <= q <= 1) with linear interpolation between order statistics (Hyndman &
/// Fan 1996, definition 7; numpy.percentile's default): 0 for no values.
double percentile(std::vector<double> values, double q);

}  // namespace fxmimo::analysis
