#pragma once
// The checks before a command starts its trials: the peak memory and the work the scenario asks
// for, each refused with one line naming the scenario key that makes it too big.

#include <CLI/CLI.hpp>
#include <cstddef>
#include <optional>
#include <string>

#include "scenario_input.hpp"

namespace fxmimo::cli {

/// Default bound on the complex multiply-accumulates of one command (README "Robustness").
inline constexpr double default_max_work = 1e14;

struct resource_options {
  std::string max_memory;  ///< "" : the memory available; else a size such as "48G"
  double max_work = default_max_work;
  std::string cache_budget;  ///< "" : analysis::default_cache_budget_bytes; else a size (0: none)
};

/// Adds --max-memory and --max-work to a command.
void add_resource_options(CLI::App* cmd, resource_options& opt);
/// Adds --cache-budget (commands that evaluate the same trials at many settings: sweep, tune).
void add_cache_option(CLI::App* cmd, resource_options& opt);
/// The --cache-budget in bytes (absent: the default); a bad size is a usage_error.
std::optional<double> cache_budget_bytes(const resource_options& opt);

/// What a command is about to do: `trials` trials per evaluation, `evaluations` evaluations
/// (sweep points; a lower bound for tune), `threads` threads (0: all cores); `kept_trials` trials
/// whose node words stay in memory until the end (vectors).
struct planned_work {
  std::size_t trials = 1;
  std::size_t evaluations = 1;
  unsigned threads = 0;
  std::size_t kept_trials = 0;
};

/// Throws usage_error ("FILE:LINE: KEY: ...") when the plan needs more memory than is available
/// (or than --max-memory allows) or more work than --max-work.
void check_resources(const scenario_input& in, const planned_work& plan, const resource_options& opt);

}  // namespace fxmimo::cli
