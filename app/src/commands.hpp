#pragma once
// The commands of the fxmimo program. Each add_*_command registers one subcommand; its callback
// runs through run_guarded, which turns an exception into a one-line message and exit code 2
// (3 for an internal error).

#include <CLI/CLI.hpp>
#include <functional>
#include <string>

namespace fxmimo::cli {

inline constexpr int exit_ok = 0;
inline constexpr int exit_check_failed = 1;
inline constexpr int exit_usage = 2;
inline constexpr int exit_internal = 3;        ///< a broken invariant inside fxmimo (a logic_error)
inline constexpr int exit_process_failed = 4;  ///< another process of an MPI job failed

/// Bad input the user can fix: printed as "fxmimo CMD: message", exit code 2.
struct usage_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

void register_commands(CLI::App& app);
int last_exit_code();
/// Whether this process writes the command's output files: alone, or rank 0 of an MPI job
/// (the other ranks compute their shares and write nothing).
bool writes_outputs();
/// Runs a command body; its return value (or 2 after an exception) becomes the exit code.
void run_guarded(const std::string& command, const std::function<int()>& body);

void add_quant_command(CLI::App& app);
void add_run_command(CLI::App& app);
void add_demo_command(CLI::App& app);
void add_range_command(CLI::App& app);
void add_sweep_command(CLI::App& app);
void add_tune_command(CLI::App& app);
void add_check_command(CLI::App& app);
void add_diff_command(CLI::App& app);
void add_vectors_command(CLI::App& app);
void add_report_command(CLI::App& app);
void add_merge_command(CLI::App& app);

}  // namespace fxmimo::cli
