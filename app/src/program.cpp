// The command line: each command lives in its own file; this one wires them up.
#include "fxmimo/app/program.hpp"

#include <fmt/core.h>

#include <CLI/CLI.hpp>
#include <cctype>
#include <string>
#include <vector>

#include "commands.hpp"

namespace fxmimo::app {

namespace {

/// "-.5" and "-.5e-3": negative decimals that start with the point, which the option parser would
/// take for an option; written "-0.5" (the same value) they pass as values, as "-0.5" does.
bool is_point_first_negative(const std::string& arg) {
  if (arg.size() < 3 || arg[0] != '-' || arg[1] != '.' || std::isdigit(static_cast<unsigned char>(arg[2])) == 0) {
    return false;
  }
  std::size_t i = 2;
  while (i < arg.size() && std::isdigit(static_cast<unsigned char>(arg[i])) != 0) ++i;
  if (i < arg.size() && (arg[i] == 'e' || arg[i] == 'E')) {
    ++i;
    if (i < arg.size() && (arg[i] == '+' || arg[i] == '-')) ++i;
    const std::size_t digits = i;
    while (i < arg.size() && std::isdigit(static_cast<unsigned char>(arg[i])) != 0) ++i;
    if (i == digits) return false;
  }
  return i == arg.size();
}

}  // namespace

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
      "Exit codes: 0 ok, 1 a check failed, 2 bad usage or input, 3 internal error, 4 another process of\n"
      "an MPI job failed, 130/143 stopped by SIGINT/SIGTERM.");
  cli::register_commands(app);
  std::vector<std::string> args(argv, argv + argc);
  for (std::size_t i = 1; i < args.size() && args[i] != "--"; ++i) {
    if (is_point_first_negative(args[i])) args[i].insert(1, "0");
  }
  std::vector<char*> pointers;
  for (std::string& a : args) pointers.push_back(a.data());
  try {
    app.parse(static_cast<int>(pointers.size()), pointers.data());
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == 0) return app.exit(e);  // --help, --version
    // One line on stderr, naming what was wrong.
    std::string what = e.what();
    for (char& ch : what) {
      if (ch == '\n') ch = ' ';
    }
    fmt::print(stderr, "fxmimo: {} (see fxmimo --help, or fxmimo COMMAND --help)\n", what);
    return cli::exit_usage;
  }
  return cli::last_exit_code();
}

}  // namespace fxmimo::app
