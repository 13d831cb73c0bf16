#include "resource_guard.hpp"

#include <fmt/core.h>

#include <algorithm>

#include "commands.hpp"
#include "fxmimo/analysis/resources.hpp"
#include "fxmimo/analysis/runner.hpp"

namespace fxmimo::cli {

void add_resource_options(CLI::App* cmd, resource_options& opt) {
  cmd->add_option("--max-memory", opt.max_memory,
                  "Memory the run may use, e.g. 48G (default: what the machine has available)");
  cmd->add_option("--max-work", opt.max_work, "Most complex multiply-accumulates one command may ask for")
      ->capture_default_str()
      ->check(CLI::PositiveNumber);
}

void add_cache_option(CLI::App* cmd, resource_options& opt) {
  cmd->add_option("--cache-budget", opt.cache_budget,
                  "Memory for golden trials and earlier evaluations kept between evaluations, e.g. 4G; 0 keeps "
                  "nothing (default: a quarter of the memory available; results are the same with any budget)");
}

std::optional<double> cache_budget_bytes(const resource_options& opt) {
  if (opt.cache_budget.empty()) return std::nullopt;
  if (opt.cache_budget == "0") return 0.0;  // keep nothing (parse_bytes takes only positive sizes)
  const std::optional<double> bytes = analysis::parse_bytes(opt.cache_budget);
  if (!bytes)
    throw usage_error(
        fmt::format("--cache-budget '{}': expected a size such as 0, 512M, 4G or 1.5T", opt.cache_budget));
  return bytes;
}

void check_resources(const scenario_input& in, const planned_work& plan, const resource_options& opt) {
  const std::size_t at_once = analysis::worker_count(plan.trials, plan.threads);

  const analysis::resource_estimate per_trial = analysis::trial_memory_bytes(in.scen);
  const double kept = analysis::trial_word_bytes(in.scen) * static_cast<double>(plan.kept_trials);
  const double needed = per_trial.amount * static_cast<double>(at_once) + kept;
  std::optional<double> allowed;
  std::string allowed_text;
  if (!opt.max_memory.empty()) {
    allowed = analysis::parse_bytes(opt.max_memory);
    if (!allowed) {
      throw usage_error(
          fmt::format("--max-memory '{}': expected a size such as 2048, 512M, 48G or 1.5T", opt.max_memory));
    }
    allowed_text = fmt::format("the {} that --max-memory allows", analysis::bytes_text(*allowed));
  } else {
    allowed = analysis::available_memory_bytes();
    if (allowed) {
      allowed_text =
          fmt::format("the {} of memory available (raise it with --max-memory)", analysis::bytes_text(*allowed));
    }
  }
  if (allowed && needed > *allowed) {
    const std::string how =
        plan.kept_trials > 0
            ? fmt::format("{} for one trial plus {} for the words of {} trials", analysis::bytes_text(per_trial.amount),
                          analysis::bytes_text(kept), plan.kept_trials)
            : fmt::format("{} trial{} at once, {} each", at_once, at_once == 1 ? "" : "s",
                          analysis::bytes_text(per_trial.amount));
    throw usage_error(fmt::format("{}: the run needs about {} ({}), more than {}", in.key_location(per_trial.key),
                                  analysis::bytes_text(needed), how, allowed_text));
  }

  const analysis::resource_estimate work = analysis::trial_work_macs(in.scen);
  const double total = work.amount * static_cast<double>(plan.trials) * static_cast<double>(plan.evaluations);
  if (total > opt.max_work) {
    const std::string evaluations =
        plan.evaluations > 1 ? fmt::format(" x {} evaluations", plan.evaluations) : std::string();
    throw usage_error(fmt::format(
        "{}: the command asks for about {:.2g} complex multiply-accumulates ({:.2g} per trial x {} trials{}), more "
        "than --max-work {:g}",
        in.key_location(work.key), total, work.amount, plan.trials, evaluations, opt.max_work));
  }
}

}  // namespace fxmimo::cli
