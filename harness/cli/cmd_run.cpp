// fxmimo run and fxmimo demo: the side-by-side model of a scenario, as a table and JSON.
#include "commands.hpp"
#include "output_files.hpp"
#include "progress.hpp"
#include "scenario_input.hpp"

#include "fxmimo/harness/report.hpp"
#include "fxmimo/harness/runner.hpp"

#include <fmt/core.h>

#include <filesystem>
#include <fstream>

namespace fxmimo::cli {

namespace {

struct run_options {
  std::string scenario_path;
  int num_trials = 0;  ///< 0: the scenario's own count
  unsigned num_threads = 0;
  std::string json_path;
};

harness::run_results run_scenario(const scenario_input& in, int num_trials, unsigned num_threads) {
  const int trials = num_trials > 0 ? num_trials : in.scen.num_trials;
  progress_line progress("trials");
  return harness::run_trials(in.scen, in.config, harness::first_trials(trials), num_threads,
                             [&](std::size_t done, std::size_t total) { progress.update(done, total); });
}

int run_run(const run_options& opt) {
  const scenario_input in = load_scenario_input(opt.scenario_path);
  const harness::run_results results = run_scenario(in, opt.num_trials, opt.num_threads);
  fmt::print("{}", harness::format_run_table(results));
  if (!opt.json_path.empty()) write_file_atomically(opt.json_path, harness::to_json(results).dump(2) + "\n");
  return exit_ok;
}

struct demo_options {
  std::string out_dir = "fxmimo-demo";
  unsigned num_threads = 0;
};

int run_demo(const demo_options& opt) {
  const scenario_input in = parse_scenario_input(demo_scenario_text(), "rooftop-64.toml (embedded demo)");
  std::filesystem::create_directories(opt.out_dir);
  write_file_atomically(std::filesystem::path(opt.out_dir) / "scenario.toml", in.text);
  fmt::print("fxmimo demo: {} antennas, {} users per cell, {} cells, {}, {} precoding\n\n", in.scen.array.num_antennas,
             in.scen.cells.num_users, in.scen.cells.num_cells, golden::modulation_name(in.scen.data.mod), "ZF/LDL");
  const harness::run_results results = run_scenario(in, 0, opt.num_threads);
  fmt::print("{}", harness::format_run_table(results));
  const std::filesystem::path json = std::filesystem::path(opt.out_dir) / "run.json";
  write_file_atomically(json, harness::to_json(results).dump(2) + "\n");
  fmt::print("\nwrote {} and {}\n", (std::filesystem::path(opt.out_dir) / "scenario.toml").string(), json.string());
  fmt::print("Results are simulations: sign-off belongs to RTL/gate-level verification and the applicable "
             "conformance tests.\n");
  return exit_ok;
}

}  // namespace

void add_run_command(CLI::App& app) {
  auto opt = std::make_shared<run_options>();
  CLI::App* cmd = app.add_subcommand("run", "Run a scenario's golden model and bit-true datapath side by side");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--trials", opt->num_trials, "Number of trials (default: the scenario's)")->check(CLI::PositiveNumber);
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--json", opt->json_path, "Also write the results as JSON to this file");
  cmd->footer(
      "Prints one row per datapath node (format, rounding, overflow, SQNR against the golden model,\n"
      "largest error in LSBs, overflow count), then per-user SINR and EVM golden/fixed, and the\n"
      "implementation EVM at the DAC beside the 3GPP base-station EVM limit.\n"
      "Examples:\n"
      "  fxmimo run -c examples/rooftop-64.toml\n"
      "  fxmimo run -c examples/tower-128-neumann.toml --trials 50 --threads 2 --json run.json");
  cmd->callback([opt] { run_guarded("run", [opt] { return run_run(*opt); }); });
}

void add_demo_command(CLI::App& app) {
  auto opt = std::make_shared<demo_options>();
  CLI::App* cmd = app.add_subcommand("demo", "Run the embedded demo scenario and write its results");
  cmd->add_option("--out", opt->out_dir, "Directory for the results")->capture_default_str();
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->footer(
      "The demo scenario is examples/rooftop-64.toml: a 64-antenna rooftop array, 8 users per cell,\n"
      "two neighbouring cells reusing its pilots, 64-QAM, zero-forcing with an LDL^H inverter.\n"
      "Examples:\n"
      "  fxmimo demo\n"
      "  fxmimo demo --out /tmp/demo");
  cmd->callback([opt] { run_guarded("demo", [opt] { return run_demo(*opt); }); });
}

}  // namespace fxmimo::cli
