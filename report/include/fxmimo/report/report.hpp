#pragma once
/// Results of run, range, sweep and tune as readable tables and as JSON.

#include <cstdio>
#include <nlohmann/json.hpp>
#include <string>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"

namespace fxmimo::report {

/// Version of the results files (run, range, sweep, tune JSON), written as "schema"; a reader
/// refuses any other version with one clear error. Files without the key are version 1.
inline constexpr int results_schema = 1;

/// The table `fxmimo run` prints: nodes, users, summary with the 3GPP EVM limit, warnings.
std::string format_run_table(const analysis::run_results& results);

/// JSON with at least: scenario, trials, nodes.<name>.{format, rounding, overflow, sqnr_db,
/// max_err_lsb, overflows, overflow_rate}, users[].{sinr_golden_db, sinr_fixed_db,
/// evm_golden_pct, evm_fixed_pct}, summary.{sinr_loss_db, evm_impl_pct, evm_fixed_pct}.
/// An exact node (no error at all) has sqnr_db null and exact true.
nlohmann::json to_json(const analysis::run_results& results);

std::string format_range_table(const analysis::range_results& r);
nlohmann::json to_json(const analysis::range_results& r);
std::string format_sweep_table(const analysis::sweep_results& r);
nlohmann::json to_json(const analysis::sweep_results& r);
/// CSV: node,bits,format,sinr_loss_db,evm_fixed_pct,evm_impl_pct,sqnr_db,overflow_rate,max_overflow_rate
std::string to_csv(const analysis::sweep_results& r);
std::string format_tune_table(const analysis::tune_results& r);
nlohmann::json to_json(const golden::scenario& scen, const analysis::tune_results& r);

}  // namespace fxmimo::report
