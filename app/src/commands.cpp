#include "commands.hpp"

#include <fmt/core.h>

#include <csignal>
#include <cstdio>
#include <stdexcept>

#include "fxmimo/analysis/resources.hpp"

namespace fxmimo::cli {

namespace {
int exit_code = exit_ok;
}

int last_exit_code() { return exit_code; }

void run_guarded(const std::string& command, const std::function<int()>& body) {
  try {
    exit_code = body();
    analysis::throw_if_stop_requested();  // a stop during the last writes: say so, exit as stopped
  } catch (const analysis::stop_requested& e) {
    std::fflush(stdout);
    fmt::print(stderr, "fxmimo {}: stopped by {} before the end; no partial result was written\n", command,
               e.signal == SIGINT    ? "SIGINT"
               : e.signal == SIGTERM ? "SIGTERM"
                                     : fmt::format("signal {}", e.signal));
    exit_code = 128 + e.signal;
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
  add_tune_command(app);
  add_check_command(app);
  add_diff_command(app);
  add_vectors_command(app);
  add_report_command(app);
}

}  // namespace fxmimo::cli
