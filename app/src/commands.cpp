#include "commands.hpp"

#include <fmt/core.h>

#include <csignal>
#include <cstdio>
#include <stdexcept>

#include "fxmimo/analysis/processes.hpp"
#include "fxmimo/analysis/resources.hpp"

namespace fxmimo::cli {

namespace {

int exit_code = exit_ok;

/// SIGINT and SIGTERM during a command that runs trials: the first asks the trial loops to stop
/// (the command then removes its temporaries and exits 128 + signal); a second ends the process
/// at once. Other commands keep the default action: they end at once and write nothing partial.
extern "C" void on_stop_signal(int signal_number) {
  analysis::request_stop(signal_number);
  std::signal(signal_number, SIG_DFL);
}

bool one_of(const std::string& command, std::initializer_list<const char*> names) {
  for (const char* name : names) {
    if (command == name) return true;
  }
  return false;
}

bool runs_trials(const std::string& command) {
  return one_of(command, {"run", "demo", "range", "sweep", "tune", "vectors"});
}

/// The commands that spread their trials over the processes of an MPI job (README "On several
/// processes (MPI)"); the others run on one process.
bool spreads_over_processes(const std::string& command) { return one_of(command, {"run", "range", "sweep", "tune"}); }

}  // namespace

int last_exit_code() { return exit_code; }

bool writes_outputs() {
  const analysis::process_group* group = analysis::current_process_group();
  return group == nullptr || group->rank() == 0;
}

void run_guarded(const std::string& command, const std::function<int()>& body) {
  if (runs_trials(command)) {
    std::signal(SIGINT, on_stop_signal);
    std::signal(SIGTERM, on_stop_signal);
  }
  try {
    if (analysis::spread_over_processes() && !spreads_over_processes(command)) {
      throw usage_error(fmt::format(
          "runs on one process, not on the {} of this MPI job (run, range, sweep and tune spread over processes); "
          "start it without mpirun",
          analysis::current_process_group()->size()));
    }
    exit_code = body();
    analysis::throw_if_stop_requested();  // a stop during the last writes: say so, exit as stopped
  } catch (const analysis::stop_requested& e) {
    std::fflush(stdout);
    fmt::print(stderr, "fxmimo {}: stopped by {} before the end; no partial result was written\n", command,
               e.signal == SIGINT    ? "SIGINT"
               : e.signal == SIGTERM ? "SIGTERM"
                                     : fmt::format("signal {}", e.signal));
    exit_code = 128 + e.signal;
  } catch (const analysis::process_failure& e) {
    std::fflush(stdout);
    fmt::print(stderr, "fxmimo {}: {}; nothing was written\n", command, e.what());
    exit_code = exit_process_failed;
  } catch (const std::invalid_argument& e) {  // a logic_error by type, but bad input by use here
    std::fflush(stdout);
    fmt::print(stderr, "fxmimo {}: {}\n", command, e.what());
    exit_code = exit_usage;
  } catch (const std::logic_error& e) {
    // A broken invariant inside fxmimo, not the user's input.
    std::fflush(stdout);
    fmt::print(stderr, "fxmimo {}: internal error: {} (please report it with the command line and input files)\n",
               command, e.what());
    exit_code = exit_internal;
  } catch (const std::exception& e) {
    std::fflush(stdout);
    fmt::print(stderr, "fxmimo {}: {}\n", command, e.what());
    exit_code = exit_usage;
  }
}

void register_commands(CLI::App& app) {
  add_quant_command(app);
  add_run_command(app);
  add_demo_command(app);
  add_range_command(app);
  add_sweep_command(app);
  add_merge_command(app);
  add_tune_command(app);
  add_check_command(app);
  add_diff_command(app);
  add_vectors_command(app);
  add_report_command(app);
}

}  // namespace fxmimo::cli
