#pragma once
/// What one sweep, tune or range call keeps between its evaluations of the same trials:
/// - each trial's golden part (the golden trial, its node values and the figures that do not
///   depend on the datapath's settings), computed once;
/// - the latest fixed evaluations of each trial, from which an evaluation at other settings
///   reruns only the stages downstream of the nodes whose settings changed
///   (datapath::rerun_block_stages) and measures only the nodes it recomputed; the data phase
///   is computed again block by block in every evaluation (its words are never kept).
/// Bounded by a memory budget: what does not fit is not kept and is computed again when needed,
/// so results are bit-identical with any budget, with the cache and without it.

#include <Eigen/Dense>
#include <cstdint>
#include <deque>
#include <map>
#include <memory>
#include <mutex>
#include <vector>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/golden/scenario.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::analysis {

/// A trial's golden side: independent of every node setting.
struct golden_part {
  golden::trial_data trial;
  std::vector<Eigen::MatrixXcd> node_values;  ///< datapath::golden_block_values, indexed by index_of
  double gram_condition = 0.0;                ///< 0 without a Gram
  /// The data phase, kept where the cache's budget allows (else empty, and every evaluation
  /// regenerates it from the trial): its blocks in order and each block's golden data values
  /// (datapath::golden_data_values). The same blocks either way.
  std::vector<golden::data_block> blocks;
  std::vector<std::vector<Eigen::MatrixXcd>> block_values;
};

/// One fixed evaluation of a trial at one configuration.
struct fixed_part {
  datapath::datapath_config config;
  datapath::fixed_trial fixed;  ///< the data nodes' words empty (their counters the totals)
  /// The data nodes' words per block ([block][index_of]), kept with a kept data phase, so that
  /// an evaluation reruns only the data stages downstream of its changes.
  std::vector<std::vector<datapath::word_matrix>> data_words;
  trial_summary summary;
};

/// The golden part of trial `trial_index` of `plan`'s scenario, computed; with `keep_data`, its
/// data phase too.
golden_part make_golden_part(const datapath::datapath_plan& plan, const golden::scenario& scen,
                             std::uint64_t trial_index, bool keep_data = false);

/// Bytes the data phase of one trial takes when kept in a golden_part (its blocks and their
/// golden data values), estimated from the scenario's dimensions.
double kept_data_bytes(const golden::scenario& scen);

/// How much the cache saved (for progress lines, the benchmark and tests).
struct cache_statistics {
  std::uint64_t golden_computed = 0, golden_reused = 0;
  std::uint64_t evaluations_full = 0, evaluations_incremental = 0;
  std::uint64_t nodes_run = 0, nodes_reused = 0;  ///< node words computed again or copied
  double bytes_kept = 0.0;
};

class trial_cache {
 public:
  /// A cache for `scen` (kept by reference: it must outlive the cache) that keeps at most
  /// `budget_bytes` (estimated: the matrices' elements) and `evaluations_per_trial` fixed
  /// evaluations of each trial (0: golden parts only).
  trial_cache(const golden::scenario& scen, double budget_bytes, std::size_t evaluations_per_trial = 2);

  [[nodiscard]] const golden::scenario& scenario() const { return scen_; }
  [[nodiscard]] const datapath::datapath_plan& plan() const { return plan_; }

  /// The golden part of a trial: kept, or computed (and kept while within the budget).
  std::shared_ptr<const golden_part> golden(std::uint64_t trial_index);
  /// The kept evaluation of the trial that reruns the fewest stages for `config` (the most
  /// recent among equals); nullptr when none is kept.
  [[nodiscard]] std::shared_ptr<const fixed_part> nearest(std::uint64_t trial_index,
                                                          const datapath::datapath_config& config) const;
  /// Keeps an evaluation (the oldest of the trial's goes when there are more than allowed); not
  /// kept when over the budget.
  void keep(std::uint64_t trial_index, std::shared_ptr<const fixed_part> evaluation);
  /// Counts an evaluation, full or incremental, and the nodes it computed or copied.
  void count_evaluation(bool incremental, std::size_t nodes_run, std::size_t nodes_reused);

  [[nodiscard]] cache_statistics statistics() const;

 private:
  const golden::scenario& scen_;
  datapath::datapath_plan plan_;
  double budget_bytes_;
  std::size_t evaluations_per_trial_;
  mutable std::mutex mutex_;
  std::map<std::uint64_t, std::shared_ptr<const golden_part>> golden_;
  std::map<std::uint64_t, std::deque<std::shared_ptr<const fixed_part>>> fixed_;
  cache_statistics stats_;
};

/// The cache budget when none is given: a quarter of the memory available now
/// (available_memory_bytes), 2 GiB where that is unknown.
double default_cache_budget_bytes();

/// Bytes a golden part or an evaluation holds (its matrices' elements; the estimate the budget
/// counts).
double bytes_of(const golden_part& g);
double bytes_of(const fixed_part& f);

}  // namespace fxmimo::analysis
