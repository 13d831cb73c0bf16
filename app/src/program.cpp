// The command line: each command lives in its own file; this one wires them up.
#include "fxmimo/app/program.hpp"

#include <fmt/core.h>

#include <CLI/CLI.hpp>

#include "commands.hpp"

namespace fxmimo::app {

int run_program(int argc, char** argv) {
  CLI::App app{"fxmimo " FXMIMO_VERSION
               " - bit-true fixed-point modelling of massive-MIMO estimation and precoding datapaths.\n"
               "Results are simulations: sign-off belongs to RTL/gate-level verification and the applicable\n"
               "conformance tests.",
               "fxmimo"};
  app.require_subcommand(1);
  app.set_version_flag("--version", FXMIMO_VERSION);
  app.footer(
      "Run 'fxmimo COMMAND --help' for a command's options and examples.\n"
      "Exit codes: 0 ok, 1 a check failed, 2 bad usage or input, 3 internal error.");
  cli::register_commands(app);
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& e) {
    const int code = app.exit(e);
    return code == 0 ? 0 : cli::exit_usage;
  }
  return cli::last_exit_code();
}

}  // namespace fxmimo::app
