#pragma once
// What run and sweep print and write at their end, from one process or from the parts that
// `fxmimo merge` reads: one place, so that merged outputs are the unsharded command's, byte for byte.

#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"

namespace fxmimo::cli {

/// Prints the run table; writes the results JSON to `json_path` unless it is "".
void print_and_write(const analysis::run_results& r, const std::string& json_path);
/// Prints the sweep table; writes the JSON and the CSV where their paths are not "".
void print_and_write(const analysis::sweep_results& r, const std::string& json_path, const std::string& csv_path);
void print_and_write(const analysis::key_sweep_results& r, const std::string& json_path, const std::string& csv_path);

}  // namespace fxmimo::cli
