// fxmimo run and fxmimo demo: the side-by-side model of a scenario, as a table and JSON.
#include <fmt/core.h>

#include <filesystem>
#include <fstream>
#include <numeric>

#include "commands.hpp"
#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/report/records.hpp"
#include "fxmimo/report/report.hpp"
#include "fxmimo/report/report_html.hpp"
#include "output_files.hpp"
#include "progress.hpp"
#include "resource_guard.hpp"
#include "results_output.hpp"
#include "scenario_input.hpp"
#include "shards.hpp"

namespace fxmimo::cli {

namespace {

struct run_options {
  std::string scenario_path;
  int num_trials = 0;  ///< 0: the scenario's own count
  unsigned num_threads = 0;
  std::string json_path;
  resource_options resources;
  shard_options sharding;
};

analysis::run_results run_scenario(const scenario_input& in, int num_trials, unsigned num_threads) {
  const int trials = in.trials_or_default(num_trials);
  progress_line progress("trials");
  return analysis::run_trials(in.scen, in.config, analysis::first_trials(trials), num_threads,
                              [&](std::size_t done, std::size_t total) { progress.update(done, total); });
}

/// `run --shard I/N`: the shard's share of the trials, each trial's figures as they stand before
/// the reduction, written as a part.
int run_run_shard(const run_options& opt, const scenario_input& in, const analysis::shard& shard) {
  const int trials = in.trials_or_default(opt.num_trials);
  const analysis::index_range share = shard.share(static_cast<std::size_t>(trials));
  if (!share.empty()) check_resources(in, {share.size(), 1, opt.num_threads, 0}, opt.resources);
  std::vector<std::uint64_t> indices(share.size());
  std::iota(indices.begin(), indices.end(), share.begin);
  report::part_record part;
  part.origin = part_origin_of("run", in, trials);
  part.shard = shard;
  part.total = static_cast<std::uint64_t>(trials);
  part.first = share.begin;
  part.trial_nodes = datapath::active_nodes(in.scen);
  progress_line progress("trials");
  part.trials = analysis::evaluate_trials(in.scen, in.config, indices, opt.num_threads,
                                          [&](std::size_t done, std::size_t total) { progress.update(done, total); });
  write_part(opt.sharding, part);
  return exit_ok;
}

int run_run(const run_options& opt) {
  const std::optional<analysis::shard> shard = shard_of(opt.sharding, {opt.json_path});
  const scenario_input in = load_scenario_input(opt.scenario_path);
  if (shard) return run_run_shard(opt, in, *shard);
  check_resources(in, {static_cast<std::size_t>(in.trials_or_default(opt.num_trials)), 1, opt.num_threads, 0},
                  opt.resources);
  print_and_write(run_scenario(in, opt.num_trials, opt.num_threads), opt.json_path);
  return exit_ok;
}

struct demo_options {
  std::string out_dir = "fxmimo-demo";
  unsigned num_threads = 0;
};

int run_demo(const demo_options& opt) {
  namespace fs = std::filesystem;
  const scenario_input in = parse_scenario_input(demo_scenario_text(), "pier-64-uplink.toml (embedded demo)");
  fs::create_directories(opt.out_dir);
  const fs::path dir(opt.out_dir);
  write_file_atomically(dir / "scenario.toml", in.text());
  fmt::print("fxmimo demo: {} antennas, {} users per cell, {} cells, {}, ZF/LDL precoding{}\n\n",
             in.scen.array.num_antennas, in.scen.cells.num_users, in.scen.cells.num_cells,
             golden::modulation_name(in.scen.data.mod),
             in.scen.uplink.on ? fmt::format("; uplink {}, {} combiner", golden::modulation_name(in.scen.uplink.mod),
                                             golden::combiner_name(in.scen.uplink.combiner))
                               : "");

  // 1. The scenario's own widths, side by side with the golden model.
  const analysis::run_results results = run_scenario(in, 0, opt.num_threads);
  fmt::print("{}", report::format_run_table(results));
  const nlohmann::json run_json = report::to_json(report::make_record(results));
  write_file_atomically(dir / "run.json", run_json.dump(2) + "\n");

  // 2. Where the values live: integer bits per node.
  const std::size_t range_trials = 2000;
  fmt::print("\n== range: golden values per node, {} trials ==\n", range_trials);
  progress_line range_progress("golden trials");
  const analysis::range_results ranges =
      analysis::profile_ranges(in.scen, in.config, static_cast<int>(range_trials), opt.num_threads, 1e-6,
                               [&](std::size_t d, std::size_t t) { range_progress.update(d, t); });
  fmt::print("{}", report::format_range_table(ranges));
  const nlohmann::json range_json = report::to_json(report::make_record(ranges));
  write_file_atomically(dir / "range.json", range_json.dump(2) + "\n");

  // 3. What the last stages' fraction bits buy: the downlink's two, and the uplink combiner's.
  const int sweep_trials = 8;
  std::vector<datapath::node_id> swept{datapath::node_id::weights, datapath::node_id::dac};
  if (in.scen.uplink.on) swept.push_back(datapath::node_id::ul_comb);
  fmt::print("\n== sweep: fraction bits of weights{}, {} trials per point ==\n",
             in.scen.uplink.on ? ", dac (downlink) and ul_comb (uplink)" : " and dac", sweep_trials);
  progress_line sweep_progress("sweep trials");
  const analysis::sweep_results sweep = analysis::run_sweep(
      in.scen, in.config, swept, 8, 14, analysis::sweep_axis::frac, analysis::first_trials(sweep_trials),
      opt.num_threads, [&](std::size_t d, std::size_t t) { sweep_progress.update(d, t); });
  fmt::print("{}", report::format_sweep_table(sweep));
  const nlohmann::json sweep_json = report::to_json(report::make_record(sweep));
  write_file_atomically(dir / "sweep.json", sweep_json.dump(2) + "\n");

  // 4. The cheapest widths for a budget: 0.05 dB SINR loss (both directions, as `tune` defaults
  // the uplink's limit), a tenth of the 64-QAM EVM limit.
  analysis::tune_limits limits;
  limits.max_sinr_loss_db = 0.05;
  limits.max_evm_pct = 0.1 * *analysis::bs_evm_limit_pct(in.scen.data.mod);
  limits.max_overflow_rate = 1e-6;
  if (in.scen.uplink.on) limits.max_uplink_sinr_loss_db = limits.max_sinr_loss_db;
  const analysis::tune_trial_counts counts{12, range_trials, 200};
  fmt::print(
      "\n== tune: SINR loss <= {} dB{}, implementation EVM <= {} % (a tenth of the TS 38.104 limit), "
      "{} trials, integer bits from {} golden trials, verified on {} fresh ones ==\n",
      limits.max_sinr_loss_db, limits.max_uplink_sinr_loss_db ? " in each direction" : "", limits.max_evm_pct,
      counts.search, counts.range, counts.verify);
  const analysis::tune_results tuned = analysis::tune_widths(in.scen, in.config, limits, analysis::cost_model::bits,
                                                             counts, opt.num_threads, 1e-6, 0.1, show_status);
  show_status("");
  fmt::print("{}", report::format_tune_table(tuned));
  const nlohmann::json tune_json = report::to_json(report::make_record(in.scen, tuned));
  write_file_atomically(dir / "tune.json", tune_json.dump(2) + "\n");
  write_file_atomically(dir / "tuned.toml",
                        datapath::scenario_with_nodes(
                            in.text(), tuned.config, tuned.nodes,
                            fmt::format("Widths chosen by fxmimo tune in the demo: cost {:.0f} bits", tuned.cost)));

  // 5. One page with all of it.
  const std::string html = report::render_report_html(
      {{"run.json", run_json}, {"range.json", range_json}, {"sweep.json", sweep_json}, {"tune.json", tune_json}});
  write_file_atomically(dir / "report.html", html);
  fmt::print("\nwrote {}: scenario.toml, run.json, range.json, sweep.json, tune.json, tuned.toml\n", dir.string());
  fmt::print("report: {}\n", (dir / "report.html").string());
  fmt::print(
      "Results are simulations: sign-off belongs to RTL/gate-level verification and the applicable "
      "conformance tests.\n");
  return exit_ok;
}

}  // namespace

void add_run_command(CLI::App& app) {
  auto opt = std::make_shared<run_options>();
  CLI::App* cmd = app.add_subcommand("run", "Run a scenario's golden model and bit-true datapath side by side");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--trials", opt->num_trials, "Number of trials (default: the scenario's)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--json", opt->json_path, "Also write the results as JSON to this file");
  add_resource_options(cmd, opt->resources);
  add_shard_options(cmd, opt->sharding);
  cmd->footer(
      "Prints one row per datapath node (format, rounding, overflow, SQNR against the golden model,\n"
      "largest error in LSBs, overflow count), then per-user SINR and EVM golden/fixed, and the\n"
      "implementation EVM at the DAC beside the 3GPP base-station EVM limit.\n"
      "With --shard I/N the run computes the I-th of N contiguous blocks of the trials and writes their\n"
      "figures to -o; fxmimo merge on the N parts prints and writes what the run without --shard does.\n"
      "Under mpirun (a build with MPI) the trials are spread over the ranks; rank 0 prints and writes, and the\n"
      "results are byte for byte those of one process.\n"
      "Examples:\n"
      "  fxmimo run -c examples/rooftop-64.toml\n"
      "  fxmimo run -c examples/tower-128-neumann.toml --trials 50 --threads 2 --json run.json\n"
      "  fxmimo run -c examples/tower-128-neumann.toml --trials 50 --shard 2/4 -o part-2.json\n"
      "  mpirun -np 3 fxmimo run -c examples/metro-7-shadowed.toml --trials 300 --threads 1 --json run.json");
  cmd->callback([opt] { run_guarded("run", [opt] { return run_run(*opt); }); });
}

void add_demo_command(CLI::App& app) {
  auto opt = std::make_shared<demo_options>();
  CLI::App* cmd = app.add_subcommand("demo", "Run the embedded demo scenario and write its results");
  cmd->add_option("--out", opt->out_dir, "Directory for the results")->capture_default_str();
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->footer(
      "The demo scenario is examples/pier-64-uplink.toml: a 64-antenna array, 8 users per cell, two\n"
      "neighbouring cells reusing its pilots, 64-QAM both ways; the downlink zero-forcing precoder and\n"
      "the uplink zero-forcing detector share one Gram matrix and its LDL^H inverse.\n"
      "It runs both directions side by side with the golden model, profiles the node ranges, sweeps\n"
      "the last stages of both directions (with the uplink's figures at every point), tunes all\n"
      "widths for a budget in both directions, and writes report.html with everything.\n"
      "Examples:\n"
      "  fxmimo demo\n"
      "  fxmimo demo --out /tmp/demo");
  cmd->callback([opt] { run_guarded("demo", [opt] { return run_demo(*opt); }); });
}

}  // namespace fxmimo::cli
