#pragma once
/// Results of a run as a readable table and as JSON.

#include "fxmimo/harness/runner.hpp"

#include <nlohmann/json.hpp>

#include <cstdio>
#include <string>

namespace fxmimo::harness {

/// The table `fxmimo run` prints: nodes, users, summary with the 3GPP EVM limit, warnings.
std::string format_run_table(const run_results& results);

/// JSON with at least: scenario, trials, nodes.<name>.{format, rounding, overflow, sqnr_db,
/// max_err_lsb, overflows, overflow_rate}, users[].{sinr_golden_db, sinr_fixed_db,
/// evm_golden_pct, evm_fixed_pct}, summary.{sinr_loss_db, evm_impl_pct, evm_fixed_pct}.
/// An exact node (no error at all) has sqnr_db null and exact true.
nlohmann::json to_json(const run_results& results);

}  // namespace fxmimo::harness
