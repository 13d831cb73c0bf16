// fxmimo range, sweep and tune: from the side-by-side model to word lengths.
#include <fmt/core.h>

#include <charconv>

#include "commands.hpp"
#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/io/junit.hpp"
#include "fxmimo/report/records.hpp"
#include "fxmimo/report/report.hpp"
#include "output_files.hpp"
#include "progress.hpp"
#include "resource_guard.hpp"
#include "scenario_input.hpp"

namespace fxmimo::cli {

namespace {

// ---- range ----

struct range_options {
  std::string scenario_path;
  int num_trials = 0;
  unsigned num_threads = 0;
  double overflow_prob = 1e-6;
  std::string json_path;
  std::string scenario_out;
  resource_options resources;
};

int run_range(const range_options& opt) {
  const scenario_input in = load_scenario_input(opt.scenario_path);
  check_resources(in, {static_cast<std::size_t>(in.trials_or_default(opt.num_trials)), 1, opt.num_threads, 0},
                  opt.resources);
  progress_line progress("golden trials");
  const analysis::range_results r =
      analysis::profile_ranges(in.scen, in.config, in.trials_or_default(opt.num_trials), opt.num_threads,
                               opt.overflow_prob, [&](std::size_t d, std::size_t t) { progress.update(d, t); });
  fmt::print("{}", report::format_range_table(r));
  if (!opt.json_path.empty())
    write_file_atomically(opt.json_path, report::to_json(report::make_record(r)).dump(2) + "\n");
  if (!opt.scenario_out.empty()) {
    const datapath::datapath_config proposed = analysis::apply_proposal(in.config, r);
    write_file_atomically(opt.scenario_out, datapath::scenario_with_nodes(
                                                in.text(), proposed, datapath::active_nodes(in.scen),
                                                fmt::format("Integer bits proposed by fxmimo range for overflow "
                                                            "probability {:g}; fraction bits kept",
                                                            opt.overflow_prob)));
    fmt::print("wrote {}\n", opt.scenario_out);
  }
  return exit_ok;
}

// ---- sweep ----

struct sweep_options {
  std::string scenario_path;
  std::string nodes_text;
  std::string bits_text;
  std::string vary = "frac";
  int num_trials = 0;
  unsigned num_threads = 0;
  std::string json_path;
  std::string csv_path;
  resource_options resources;
};

std::pair<int, int> parse_bit_range(const std::string& text) {
  const auto colon = text.find(':');
  int lo = 0, hi = 0;
  auto parse = [&](std::string_view s, int& v) {
    const auto [ptr, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
    return ec == std::errc{} && ptr == s.data() + s.size() && !s.empty();
  };
  const std::string_view all(text);
  if (colon == std::string::npos ? !(parse(all, lo) && (hi = lo, true))
                                 : !(parse(all.substr(0, colon), lo) && parse(all.substr(colon + 1), hi))) {
    throw usage_error(fmt::format("bad --bits '{}': expected A:B, e.g. 8:16", text));
  }
  if (lo > hi) throw usage_error(fmt::format("bad --bits '{}': A must not exceed B", text));
  return {lo, hi};
}

std::vector<datapath::node_id> parse_node_list(const std::string& text, const golden::scenario& scen) {
  const std::vector<datapath::node_id> active = datapath::active_nodes(scen);
  if (text == "all") return active;
  std::vector<datapath::node_id> out;
  std::size_t start = 0;
  while (start <= text.size()) {
    const auto comma = text.find(',', start);
    const std::string name = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    const auto id = datapath::parse_node_name(name);
    if (!id) throw usage_error(fmt::format("unknown node '{}' (known: {})", name, datapath::list_node_names()));
    if (std::find(active.begin(), active.end(), *id) == active.end())
      throw usage_error(fmt::format("node '{}' is not used by this scenario's algorithm", name));
    out.push_back(*id);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return out;
}

int run_sweep_command(const sweep_options& opt) {
  const scenario_input in = load_scenario_input(opt.scenario_path);
  const auto nodes = parse_node_list(opt.nodes_text, in.scen);
  const auto [lo, hi] = parse_bit_range(opt.bits_text);
  analysis::sweep_axis axis = analysis::sweep_axis::frac;
  if (opt.vary == "word")
    axis = analysis::sweep_axis::word;
  else if (opt.vary == "int")
    axis = analysis::sweep_axis::int_bits;
  else if (opt.vary != "frac")
    throw usage_error(fmt::format("bad --vary '{}': expected frac, word or int", opt.vary));
  check_resources(in,
                  {static_cast<std::size_t>(in.trials_or_default(opt.num_trials)),
                   nodes.size() * static_cast<std::size_t>(hi - lo + 1), opt.num_threads, 0},
                  opt.resources);
  progress_line progress("sweep trials");
  analysis::sweep_results r;
  try {
    r = analysis::run_sweep(in.scen, in.config, nodes, lo, hi, axis,
                            analysis::first_trials(in.trials_or_default(opt.num_trials)), opt.num_threads,
                            [&](std::size_t d, std::size_t t) { progress.update(d, t); });
  } catch (const std::invalid_argument& e) {
    throw usage_error(e.what());
  }
  fmt::print("{}", report::format_sweep_table(r));
  if (!opt.json_path.empty())
    write_file_atomically(opt.json_path, report::to_json(report::make_record(r)).dump(2) + "\n");
  if (!opt.csv_path.empty()) write_file_atomically(opt.csv_path, report::to_csv(r));
  return exit_ok;
}

// ---- tune ----

struct tune_options {
  std::string scenario_path;
  double max_sinr_loss_db = 0.1;
  double max_evm_pct = -1;
  std::string modulation;
  double evm_budget = 0.25;
  double max_overflow_rate = 1e-6;
  double max_rms_tx_power_error_db = 0.1;
  std::string cost = "bits";
  int num_trials = 0;
  unsigned num_threads = 0;
  double overflow_prob = 1e-6;
  double margin = 0.1;
  std::string out_path;
  std::string json_path;
  std::string junit_path;
  resource_options resources;
};

int run_tune(const tune_options& opt) {
  const scenario_input in = load_scenario_input(opt.scenario_path);
  // At least the search's final evaluation, the verification and one evaluation per node.
  check_resources(in,
                  {static_cast<std::size_t>(in.trials_or_default(opt.num_trials)),
                   datapath::active_nodes(in.scen).size() + 2, opt.num_threads, 0},
                  opt.resources);
  analysis::tune_limits limits;
  limits.max_sinr_loss_db = opt.max_sinr_loss_db;
  limits.max_overflow_rate = opt.max_overflow_rate;
  limits.max_rms_tx_power_error_db = opt.max_rms_tx_power_error_db;
  if (opt.max_evm_pct > 0) {
    limits.max_evm_pct = opt.max_evm_pct;
  } else if (!opt.modulation.empty()) {
    golden::modulation mod = in.scen.data.mod;
    if (opt.modulation != "scenario") {
      bool found = false;
      for (golden::modulation m : {golden::modulation::qpsk, golden::modulation::qam16, golden::modulation::qam64,
                                   golden::modulation::qam256, golden::modulation::qam1024}) {
        if (golden::modulation_name(m) == opt.modulation) {
          mod = m;
          found = true;
        }
      }
      if (!found)
        throw usage_error(fmt::format("bad --modulation '{}': expected qpsk, 16qam, 64qam, 256qam, 1024qam or scenario",
                                      opt.modulation));
    }
    limits.max_evm_pct = *analysis::bs_evm_limit_pct(mod) * opt.evm_budget;
    fmt::print("EVM limit: {} % (3GPP TS 38.104 Table 6.5.2.2-1, {}) x budget {} = {:.4g} %\n",
               *analysis::bs_evm_limit_pct(mod), golden::modulation_name(mod), opt.evm_budget, limits.max_evm_pct);
  } else {
    throw usage_error("give --max-evm PCT or --modulation NAME (with --evm-budget FRACTION)");
  }
  const analysis::cost_model model = opt.cost == "area" ? analysis::cost_model::area : analysis::cost_model::bits;
  if (opt.cost != "area" && opt.cost != "bits")
    throw usage_error(fmt::format("bad --cost '{}': expected bits or area", opt.cost));
  const analysis::tune_results r =
      analysis::tune_widths(in.scen, in.config, limits, model, in.trials_or_default(opt.num_trials), opt.num_threads,
                            opt.overflow_prob, opt.margin, show_status);
  show_status("");
  fmt::print("{}", report::format_tune_table(r));
  write_file_atomically(opt.out_path, datapath::scenario_with_nodes(
                                          in.text(), r.config, r.nodes,
                                          fmt::format("Widths chosen by fxmimo tune: cost {:.0f} ({}), {}", r.cost,
                                                      analysis::to_string(model),
                                                      r.met ? "verified on fresh trials" : "NOT verified: " + r.note)));
  fmt::print("wrote {}\n", opt.out_path);
  const report::tune_record record = report::make_record(in.scen, r);
  if (!opt.json_path.empty()) write_file_atomically(opt.json_path, report::to_json(record).dump(2) + "\n");
  if (!opt.junit_path.empty()) {
    write_file_atomically(opt.junit_path, io::to_junit_xml({report::to_junit(record)}, "fxmimo tune"));
  }
  return r.met ? exit_ok : exit_check_failed;
}

}  // namespace

void add_range_command(CLI::App& app) {
  auto opt = std::make_shared<range_options>();
  CLI::App* cmd = app.add_subcommand("range", "Profile every node's golden values and propose integer bits");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--trials", opt->num_trials, "Golden trials (default: the scenario's)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--overflow-prob", opt->overflow_prob, "Target probability that a value overflows")
      ->capture_default_str()
      ->check(CLI::Range(1e-15, 0.5));
  cmd->add_option("--json", opt->json_path, "Write the profile (with log2 histograms) as JSON");
  cmd->add_option("--write-scenario", opt->scenario_out, "Write the scenario with the proposed integer bits");
  add_resource_options(cmd, opt->resources);
  cmd->footer(
      "Prints per node: values seen, max |value|, percentiles 99 / 99.99 / 99.9999 % of |real| and |imag| parts,\n"
      "the proposed integer bits m (signed Qm.n) for the overflow probability, and the worst-case analytic\n"
      "growth of the accumulating nodes.\n"
      "Examples:\n"
      "  fxmimo range -c examples/rooftop-64.toml\n"
      "  fxmimo range -c examples/rooftop-64.toml --trials 200 --overflow-prob 1e-4 --write-scenario ranged.toml");
  cmd->callback([opt] { run_guarded("range", [opt] { return run_range(*opt); }); });
}

void add_sweep_command(CLI::App& app) {
  auto opt = std::make_shared<sweep_options>();
  CLI::App* cmd =
      app.add_subcommand("sweep", "Vary one node's width at a time and record SINR loss, EVM, SQNR, overflows");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--node", opt->nodes_text, "Node name, comma-separated names, or 'all'")->required();
  cmd->add_option("--bits", opt->bits_text, "Range A:B of the varied quantity")->required();
  cmd->add_option("--vary", opt->vary, "frac (fraction bits), word (word bits) or int (integer bits)")
      ->capture_default_str();
  cmd->add_option("--trials", opt->num_trials, "Trials per point (default: the scenario's)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--json", opt->json_path, "Write the points as JSON (input of fxmimo report)");
  cmd->add_option("--csv", opt->csv_path, "Write the points as CSV");
  add_resource_options(cmd, opt->resources);
  cmd->footer(
      "Each point is exactly `fxmimo run` of the scenario with that one width changed.\n"
      "Examples:\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node weights,dac --bits 8:16\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node gram --bits 6:12 --vary int --json gram.json\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node all --bits 10:14 --trials 8 --csv all.csv");
  cmd->callback([opt] { run_guarded("sweep", [opt] { return run_sweep_command(*opt); }); });
}

void add_tune_command(CLI::App& app) {
  auto opt = std::make_shared<tune_options>();
  CLI::App* cmd =
      app.add_subcommand("tune", "Find the cheapest widths that keep SINR loss, EVM and overflows inside limits");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--max-sinr-loss", opt->max_sinr_loss_db, "Largest mean SINR loss, dB")->capture_default_str();
  cmd->add_option("--max-evm", opt->max_evm_pct, "Largest implementation EVM at the DAC, %");
  cmd->add_option("--modulation", opt->modulation,
                  "Take the EVM limit from 3GPP TS 38.104 for this modulation ('scenario' = the scenario's)");
  cmd->add_option("--evm-budget", opt->evm_budget, "Fraction of the 3GPP EVM limit given to the datapath")
      ->capture_default_str()
      ->check(CLI::Range(1e-6, 1.0));
  cmd->add_option("--max-overflow-rate", opt->max_overflow_rate, "Largest overflow rate of any node")
      ->capture_default_str();
  cmd->add_option("--max-power-error", opt->max_rms_tx_power_error_db,
                  "Largest RMS over trials of the transmit-power error of the fixed block against the golden one, dB")
      ->capture_default_str();
  cmd->add_option("--cost", opt->cost, "bits (total word bits) or area (a stated proxy, README)")
      ->capture_default_str();
  cmd->add_option("--trials", opt->num_trials,
                  "Trials per evaluation (default: the scenario's); the verification uses as many fresh ones")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--overflow-prob", opt->overflow_prob, "Overflow probability for the integer bits")
      ->capture_default_str();
  cmd->add_option("--margin", opt->margin,
                  "The search aims this fraction below the SINR-loss, EVM and power-error limits")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 0.9));
  cmd->add_option("-o,--out", opt->out_path, "Write the tuned scenario here")->required();
  cmd->add_option("--json", opt->json_path, "Write the result as JSON (input of fxmimo report)");
  cmd->add_option("--junit", opt->junit_path,
                  "Write the re-verification as JUnit XML (one test case per limit, failing when exceeded)");
  add_resource_options(cmd, opt->resources);
  cmd->footer(
      "Integer bits come from range profiling; fraction bits from a per-node minimum and greedy add/remove passes.\n"
      "Exit code 1 when the choice does not meet the limits on the fresh verification trials.\n"
      "Examples:\n"
      "  fxmimo tune -c examples/rooftop-64.toml --max-sinr-loss 0.05 --max-evm 0.5 -o tuned.toml\n"
      "  fxmimo tune -c examples/tower-128-neumann.toml --modulation scenario --evm-budget 0.2 --cost area -o t.toml "
      "--json t.json\n"
      "  fxmimo tune -c examples/rooftop-64.toml --max-evm 0.5 -o tuned.toml --junit tune.xml");
  cmd->callback([opt] { run_guarded("tune", [opt] { return run_tune(*opt); }); });
}

}  // namespace fxmimo::cli
