#pragma once
/// Results of run, range, sweep and tune as readable tables (their JSON: records.hpp).

#include <cstdio>
#include <string>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"

namespace fxmimo::report {

/// The table `fxmimo run` prints: nodes, users, summary with the 3GPP EVM limit, warnings.
std::string format_run_table(const analysis::run_results& results);
/// Two lines: the SINR-loss and EVM percentiles, and the Gram's condition number where there is one.
std::string format_distribution(const analysis::run_distribution& d, std::size_t trials, std::size_t users);
/// The uplink's table (per user and mean, golden and fixed), its bit errors and LLR decisions.
std::string format_uplink(const analysis::uplink_results& u);
std::string format_range_table(const analysis::range_results& r);
std::string format_sweep_table(const analysis::sweep_results& r);
/// CSV: node,bits,format,sinr_loss_db,evm_fixed_pct,evm_impl_pct,sqnr_db,overflow_rate,max_overflow_rate,
/// sinr_loss_p95_db,evm_impl_p95_pct
std::string to_csv(const analysis::sweep_results& r);
std::string format_tune_table(const analysis::tune_results& r);
std::string format_key_sweep_table(const analysis::key_sweep_results& r);
/// CSV: value,sinr_golden_db,sinr_fixed_db,sinr_loss_db,evm_impl_pct,interference_db,max_overflow_rate,
/// then one int_bits_NODE column per accumulating node.
std::string to_csv(const analysis::key_sweep_results& r);

}  // namespace fxmimo::report
