#pragma once
/// Runs trials of the golden model and the bit-true datapath side by side and reduces them into
/// per-node and per-user results. Trials are spread over threads; every per-trial result is
/// kept and reduced in trial order, so results are bit-identical for any thread count.

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::analysis {

/// One node's error and overflow figures over all trials.
struct node_result {
  datapath::node_id id = datapath::node_id::adc;
  fixedpoint::target spec;
  bool is_default = true;
  double signal_energy = 0.0;   ///< sum of |golden|^2 over every value and trial
  double error_energy = 0.0;    ///< sum of |golden - fixed|^2
  double max_err_lsb = 0.0;     ///< largest |golden - fixed| of a real or imaginary part, in LSBs
  double max_abs_golden = 0.0;  ///< largest |real| or |imaginary| part of the golden values
  std::uint64_t num_values = 0;
  fixedpoint::counters counters;
  /// 10 log10(signal / error); +inf when the node is exact.
  [[nodiscard]] double sqnr_db() const;
  /// overflowed / requantised.
  [[nodiscard]] double overflow_rate() const;
  /// Its saturation is a designed clip (datapath::clips_by_design), not an overflow.
  [[nodiscard]] bool clips() const { return datapath::clips_by_design(id, spec); }
  /// Adds another part's figures (energies and counts summed, maxima taken, counters merged):
  /// the same node over more values.
  void absorb(const node_result& other);
  /// One-sided 95 % upper bound of the overflow rate (rate_upper_bound: 2.996 / requantised for
  /// no overflow, the rule of three); +inf when nothing was requantised.
  [[nodiscard]] double overflow_rate_bound() const;
};

/// One user of cell 0: SINR as 10 log10 of the mean linear SINR over trials; EVM as the RMS
/// over trials.
struct user_result {
  double sinr_golden_db = 0.0;
  double sinr_fixed_db = 0.0;
  double evm_golden_pct = 0.0;
  double evm_fixed_pct = 0.0;
  [[nodiscard]] double sinr_loss_db() const { return sinr_golden_db - sinr_fixed_db; }
};

struct run_summary {
  double sinr_golden_db = 0.0;             ///< mean over users
  double sinr_fixed_db = 0.0;              ///< mean over users
  double sinr_loss_db = 0.0;               ///< mean over users of the per-user loss
  double evm_golden_pct = 0.0;             ///< RMS over users
  double evm_fixed_pct = 0.0;              ///< RMS over users
  double evm_impl_pct = 0.0;               ///< RMS over trials of the gain-aligned ||dac - golden tx|| / ||golden tx||
  double tx_power_error_db = 0.0;          ///< mean over trials of 10 log10(|dac|^2 / |golden tx|^2)
  double max_abs_tx_power_error_db = 0.0;  ///< largest |power error| of a trial
  double rms_tx_power_error_db = 0.0;      ///< RMS over trials of the power error
  std::optional<double> evm_limit_pct;     ///< 3GPP base-station limit for the modulation
};

/// Distributions over trials and users, beside the means (README "Metrics").
struct run_distribution {
  /// Percentiles over every (trial, user) of the per-trial SINR loss 10 log10(SINR_golden /
  /// SINR_fixed), dB.
  double sinr_loss_p5_db = 0.0, sinr_loss_p50_db = 0.0, sinr_loss_p95_db = 0.0;
  /// The 0, 1, ..., 100 % percentiles of the same losses (101 values: the empirical CDF).
  std::vector<double> sinr_loss_percentiles_db;
  double evm_impl_p95_pct = 0.0, evm_impl_max_pct = 0.0;  ///< over trials
  /// Condition number lambda_max / lambda_min of the Gram (with RZF loading) over trials;
  /// absent without a Gram (MF).
  std::optional<double> gram_condition_p50, gram_condition_p95, gram_condition_max;
};

/// The uplink of cell 0 over all trials (README "The uplink"), golden and fixed side by side.
struct uplink_results {
  std::vector<user_result> users;  ///< per user: SINR (10 log10 of the mean linear SINR), EVM (RMS)
  double sinr_golden_db = 0.0, sinr_fixed_db = 0.0, sinr_loss_db = 0.0;  ///< means over users
  double evm_golden_pct = 0.0, evm_fixed_pct = 0.0;                      ///< RMS over users
  std::uint64_t bits = 0;                                                ///< bits sent by cell 0's users
  std::uint64_t bit_errors_golden = 0, bit_errors_fixed = 0;             ///< hard-decision errors
  std::uint64_t llrs = 0;                                                ///< LLRs (= bits)
  std::uint64_t llr_sign_flips = 0;  ///< LLRs whose hard decision differs from the golden LLR's
  [[nodiscard]] double ber_golden() const { return bits > 0 ? static_cast<double>(bit_errors_golden) / bits : 0.0; }
  [[nodiscard]] double ber_fixed() const { return bits > 0 ? static_cast<double>(bit_errors_fixed) / bits : 0.0; }
  [[nodiscard]] double llr_flip_rate() const { return llrs > 0 ? static_cast<double>(llr_sign_flips) / llrs : 0.0; }
};

struct run_results {
  std::string scenario_name;
  std::string scenario_source;
  std::vector<std::uint64_t> trial_indices;
  std::vector<node_result> nodes;  ///< active nodes, datapath order
  std::vector<user_result> users;
  run_summary summary;
  run_distribution distribution;
  std::optional<uplink_results> uplink;  ///< with an [uplink] table
  std::vector<std::string> warnings;
};

/// What one trial contributes (kept per trial, reduced in trial order).
struct trial_summary {
  std::uint64_t trial_index = 0;
  std::vector<node_result> nodes;               ///< indexed by datapath::index_of
  std::vector<double> sinr_golden, sinr_fixed;  ///< linear, per user
  std::vector<double> evm_golden_pct, evm_fixed_pct;
  double evm_impl = 0.0;  ///< fraction, not %
  double tx_power_error_db = 0.0;
  double neumann_radius = 0.0;
  double gauss_seidel_residual = 0.0;  ///< golden ||I - G X||_F / sqrt(K) with inversion = gauss_seidel, else 0
  double gram_condition = 0.0;         ///< 0 without a Gram
  // The uplink (empty and zero without [uplink]): per user, linear SINR and EVM of ul_eq.
  std::vector<double> ul_sinr_golden, ul_sinr_fixed, ul_evm_golden_pct, ul_evm_fixed_pct;
  std::uint64_t ul_bits = 0;  ///< bits sent by cell 0's users (K b N_ul)
  std::uint64_t ul_bit_errors_golden = 0, ul_bit_errors_fixed = 0, ul_llr_sign_flips = 0;
};

/// Golden trial, fixed datapath, evaluation through the true channel, per-node errors.
trial_summary evaluate_trial(const golden::scenario& scen, const datapath::datapath_config& config,
                             std::uint64_t trial_index);

class trial_cache;  // trial_cache.hpp
/// The same through a cache: the trial's golden part computed once, the fixed datapath rerun
/// only downstream of the nodes whose settings differ from a kept evaluation of the trial.
/// Bit-identical to evaluate_trial(cache.scenario(), config, trial_index).
trial_summary evaluate_trial(trial_cache& cache, const datapath::datapath_config& config, std::uint64_t trial_index);

/// Called after each finished trial with (done, total).
using progress_callback = std::function<void(std::size_t, std::size_t)>;

/// The threads for_each_index_parallel starts for `count` indices: `num_threads` (0: all cores),
/// at most one per index, at least one.
unsigned worker_count(std::size_t count, unsigned num_threads);

/// Calls body(i) for i = 0 .. count-1 on `num_threads` threads (0: all cores), each index once;
/// results must go into per-index slots so the caller can reduce them in index order. The first
/// exception stops the remaining work and is rethrown; progress(done, count) after each index.
void for_each_index_parallel(std::size_t count, unsigned num_threads, const std::function<void(std::size_t)>& body,
                             const progress_callback& progress = {});

/// Runs the given trials on `num_threads` threads (0: all cores).
run_results run_trials(const golden::scenario& scen, const datapath::datapath_config& config,
                       const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                       const progress_callback& progress = {});

/// The same through a cache (evaluate_trial with a cache): bit-identical results.
run_results run_trials(trial_cache& cache, const datapath::datapath_config& config,
                       const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                       const progress_callback& progress = {});

/// The per-trial figures of the given trials, evaluated on `num_threads` threads (0: all
/// cores), in the order of `trial_indices` (any number, none included): what run_trials reduces,
/// and what a shard of a run (`run --shard`) writes.
std::vector<trial_summary> evaluate_trials(const golden::scenario& scen, const datapath::datapath_config& config,
                                           const std::vector<std::uint64_t>& trial_indices, unsigned num_threads,
                                           const progress_callback& progress = {});

/// Reduces per-trial figures in the order given (per_trial[i] of trial_indices[i]; at least one)
/// into a run's results: run_trials is evaluate_trials then this, so figures read back from
/// shards reduce to the same bits as one process.
run_results reduce_trials(const golden::scenario& scen, const datapath::datapath_config& config,
                          const std::vector<std::uint64_t>& trial_indices, const std::vector<trial_summary>& per_trial);

/// 0, 1, ..., n-1.
std::vector<std::uint64_t> first_trials(int n);

/// The SINR-loss statistic a limit applies to: the mean over users of the per-user loss of the
/// mean SINRs (percentile nullopt), or a percentile (0..100) of the per-(trial, user) losses.
double sinr_loss_statistic(const run_results& r, std::optional<double> percentile);

/// The largest overflow rate over the run's nodes, a node that clips by design left out
/// (node_result::clips): the figure tune limits and sweep reports.
double max_overflow_rate(const run_results& r);

/// 3GPP TS 38.104 Table 6.5.2.2-1 base-station EVM limit in % (QPSK 17.5, 16QAM 12.5,
/// 64QAM 8, 256QAM 3.5); 1024QAM 2.5 (later releases; from memory, unverified).
std::optional<double> bs_evm_limit_pct(golden::modulation mod);

}  // namespace fxmimo::analysis
