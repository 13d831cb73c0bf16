// fxmimo range, sweep and tune: from the side-by-side model to word lengths.
#include <fmt/core.h>

#include <charconv>
#include <numeric>

#include "commands.hpp"
#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/statistics.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/io/junit.hpp"
#include "fxmimo/report/records.hpp"
#include "fxmimo/report/report.hpp"
#include "output_files.hpp"
#include "progress.hpp"
#include "resource_guard.hpp"
#include "results_output.hpp"
#include "scenario_input.hpp"
#include "shards.hpp"

namespace fxmimo::cli {

namespace {

// ---- range ----

/// Default budget of the trial counts chosen for a claim, seconds at the reference rate.
constexpr double default_budget_seconds = 60.0;

struct range_options {
  std::string scenario_path;
  std::size_t num_trials = 0;
  double budget_seconds = default_budget_seconds;
  unsigned num_threads = 0;
  double overflow_prob = 1e-6;
  std::string json_path;
  std::string scenario_out;
  resource_options resources;
};

int run_range(const range_options& opt) {
  const scenario_input in = load_scenario_input(opt.scenario_path);
  const analysis::sample_plan plan =
      analysis::range_trial_plan(in.scen, opt.overflow_prob, opt.num_trials,
                                 static_cast<std::size_t>(in.trials_or_default(0)), opt.budget_seconds);
  check_resources(in, {plan.trials, 1, opt.num_threads, 0}, opt.resources);
  fmt::print("range: {}\n", plan.text("golden trials"));
  progress_line progress("golden trials");
  const analysis::range_results r =
      analysis::profile_ranges(in.scen, in.config, static_cast<int>(plan.trials), opt.num_threads, opt.overflow_prob,
                               [&](std::size_t d, std::size_t t) { progress.update(d, t); });
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
  std::string key;
  std::string values_text;
  std::string vary = "frac";
  int num_trials = 0;
  unsigned num_threads = 0;
  std::string json_path;
  std::string csv_path;
  resource_options resources;
  shard_options sharding;
};

/// The part of a sweep shard: its origin and share; the caller adds the points.
report::part_record sweep_part(const sweep_options& opt, const scenario_input& in, const analysis::shard& shard,
                               std::size_t total_points) {
  report::part_record part;
  part.origin = part_origin_of("sweep", in, in.trials_or_default(opt.num_trials));
  part.shard = shard;
  part.total = total_points;
  part.first = shard.share(total_points).begin;
  return part;
}

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

std::vector<std::string> split_values(std::string_view text);

/// `sweep --key KEY --values V1,V2,...`: one run of the scenario per value.
int run_key_sweep_command(const sweep_options& opt, const scenario_input& in,
                          const std::optional<analysis::shard>& shard) {
  if (!opt.nodes_text.empty() || !opt.bits_text.empty())
    throw usage_error("give either --node and --bits (a width) or --key and --values (a scenario key), not both");
  if (opt.values_text.empty()) throw usage_error("--key needs --values V1,V2,..., e.g. --values 32,64,128");
  std::vector<std::string> values = split_values(opt.values_text);
  std::vector<golden::scenario> scenarios;
  for (const std::string& v : values) {
    if (v.empty()) throw usage_error(fmt::format("--values '{}': an empty value", opt.values_text));
    scenarios.push_back(golden::parse_scenario(golden::with_overrides(in.doc, {{opt.key, v}})));
  }
  const int trials = in.trials_or_default(opt.num_trials);
  const analysis::index_range points = shard ? shard->share(values.size()) : analysis::all_indices(values.size());
  for (std::size_t i = points.begin; i < points.end; ++i) {
    const scenario_input point{in.doc, scenarios[i], in.config};
    check_resources(point, {static_cast<std::size_t>(trials), 1, opt.num_threads, 0}, opt.resources);
  }
  progress_line progress("sweep trials");
  analysis::key_sweep_results r;
  try {
    r = analysis::run_key_sweep(
        scenarios, values, opt.key, in.config, analysis::first_trials(trials), opt.num_threads,
        [&](std::size_t d, std::size_t t) { progress.update(d, t); }, points);
  } catch (const std::invalid_argument& e) {
    throw usage_error(e.what());
  }
  if (shard) {
    report::part_record part = sweep_part(opt, in, *shard, values.size());
    part.origin.key = opt.key;
    part.origin.values = values;
    part.key_points = std::move(r.points);
    write_part(opt.sharding, part);
    return exit_ok;
  }
  print_and_write(r, opt.json_path, opt.csv_path);
  return exit_ok;
}

int run_sweep_command(const sweep_options& opt) {
  const std::optional<analysis::shard> shard = shard_of(opt.sharding, {opt.json_path, opt.csv_path});
  const scenario_input in = load_scenario_input(opt.scenario_path);
  if (!opt.key.empty()) return run_key_sweep_command(opt, in, shard);
  if (!opt.values_text.empty()) throw usage_error("--values needs --key KEY");
  if (opt.nodes_text.empty() || opt.bits_text.empty())
    throw usage_error(
        "give --node NAMES and --bits A:B (a width), or --key KEY and --values V1,V2,... (a scenario key)");
  const auto nodes = parse_node_list(opt.nodes_text, in.scen);
  const auto [lo, hi] = parse_bit_range(opt.bits_text);
  const std::optional<analysis::sweep_axis> axis = analysis::parse_sweep_axis(opt.vary);
  if (!axis) throw usage_error(fmt::format("bad --vary '{}': expected frac, word or int", opt.vary));
  const std::size_t total_points = analysis::sweep_point_count(nodes, lo, hi);
  const analysis::index_range points = shard ? shard->share(total_points) : analysis::all_indices(total_points);
  if (!points.empty()) {
    check_resources(in,
                    {static_cast<std::size_t>(in.trials_or_default(opt.num_trials)), points.size(), opt.num_threads, 0},
                    opt.resources);
  }
  const std::optional<double> budget = cache_budget_bytes(opt.resources);
  progress_line progress("sweep trials");
  analysis::sweep_results r;
  try {
    r = analysis::run_sweep(
        in.scen, in.config, nodes, lo, hi, *axis, analysis::first_trials(in.trials_or_default(opt.num_trials)),
        opt.num_threads, [&](std::size_t d, std::size_t t) { progress.update(d, t); }, budget, points);
  } catch (const std::invalid_argument& e) {
    throw usage_error(e.what());
  }
  if (shard) {
    report::part_record part = sweep_part(opt, in, *shard, total_points);
    for (datapath::node_id id : nodes) part.origin.nodes.emplace_back(datapath::node_name(id));
    part.origin.bits_lo = lo;
    part.origin.bits_hi = hi;
    part.origin.vary = std::string(analysis::to_string(*axis));
    part.points = std::move(r.points);
    write_part(opt.sharding, part);
    return exit_ok;
  }
  print_and_write(r, opt.json_path, opt.csv_path);
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
  double max_uplink_sinr_loss_db = -1;  ///< < 0: --max-sinr-loss's value when the scenario has an uplink
  double max_uplink_ber_ratio = -1;     ///< < 0: no limit
  std::string cost = "bits";
  int num_trials = 0;
  std::size_t range_trials = 0, verify_trials = 0;
  double range_budget = default_budget_seconds, verify_budget = default_budget_seconds;
  std::string sinr_loss_at = "mean";
  std::vector<std::string> corner_lists;  ///< "KEY=V1,V2,..." each
  std::vector<std::string> corner_files;
  unsigned num_threads = 0;
  double overflow_prob = 1e-6;
  double margin = 0.1;
  std::string out_path;
  std::string json_path;
  std::string junit_path;
  resource_options resources;
};

/// Splits at commas outside brackets and quotes: "10,[1, 2],\"a,b\"" -> 10 | [1, 2] | "a,b".
std::vector<std::string> split_values(std::string_view text) {
  std::vector<std::string> out(1);
  int depth = 0;
  bool quoted = false;
  for (const char c : text) {
    if (c == '"') quoted = !quoted;
    if (!quoted && (c == '[' || c == '{')) ++depth;
    if (!quoted && (c == ']' || c == '}')) --depth;
    if (c == ',' && depth == 0 && !quoted) {
      out.emplace_back();
      continue;
    }
    out.back() += c;
  }
  return out;
}

/// The corners of a tune: the cross product of the --corner lists applied to the scenario (the
/// scenario itself without lists), then each --corner-scenario file.
std::vector<analysis::tune_corner> corners_of(const scenario_input& in, const tune_options& opt) {
  std::vector<std::vector<golden::scenario_override>> combos(1);
  for (const std::string& list : opt.corner_lists) {
    golden::scenario_override head;
    try {
      head = golden::parse_override(list);
    } catch (const std::invalid_argument& e) {
      throw usage_error(fmt::format("--corner: {}", e.what()));
    }
    std::vector<std::vector<golden::scenario_override>> next;
    for (const auto& combo : combos) {
      for (const std::string& value : split_values(head.value)) {
        if (value.empty()) throw usage_error(fmt::format("--corner '{}': an empty value", list));
        next.push_back(combo);
        next.back().push_back({head.key, value});
      }
    }
    combos = std::move(next);
  }
  std::vector<analysis::tune_corner> out;
  for (const auto& combo : combos) {
    std::string name;
    for (const auto& o : combo) name += (name.empty() ? "" : ", ") + o.key + "=" + o.value;
    out.push_back({name, golden::parse_scenario(golden::with_overrides(in.doc, combo)), {}});
  }
  for (const std::string& file : opt.corner_files) {
    const scenario_input other = load_scenario_input(file);
    out.push_back({file, other.scen, {}});
  }
  if (out.size() > 1 && out.front().name.empty()) out.front().name = in.doc.source_name;
  return out;
}

/// --sinr-loss-at: "mean" (nullopt) or a percentile, "95" or "p95", strictly between 0 and 100.
std::optional<double> parse_loss_statistic(const std::string& text) {
  if (text == "mean") return std::nullopt;
  const std::string_view digits = text.starts_with('p') ? std::string_view(text).substr(1) : std::string_view(text);
  double v = 0;
  const auto [ptr, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), v);
  if (ec != std::errc{} || ptr != digits.data() + digits.size() || digits.empty() || !(v > 0 && v < 100)) {
    throw usage_error(fmt::format("bad --sinr-loss-at '{}': expected mean or a percentile such as 95 or p95", text));
  }
  return v;
}

int run_tune(const tune_options& opt) {
  const scenario_input in = load_scenario_input(opt.scenario_path);
  // At least the search's final evaluation, the verification and one evaluation per node.
  check_resources(in,
                  {static_cast<std::size_t>(in.trials_or_default(opt.num_trials)),
                   datapath::active_nodes(in.scen).size() + 2, opt.num_threads, 0},
                  opt.resources);
  analysis::tune_limits limits;
  limits.max_sinr_loss_db = opt.max_sinr_loss_db;
  limits.sinr_loss_percentile = parse_loss_statistic(opt.sinr_loss_at);
  limits.max_overflow_rate = opt.max_overflow_rate;
  limits.max_rms_tx_power_error_db = opt.max_rms_tx_power_error_db;
  if ((opt.max_uplink_sinr_loss_db >= 0 || opt.max_uplink_ber_ratio >= 0) && !in.scen.uplink.on)
    throw usage_error(
        fmt::format("--max-uplink-sinr-loss and --max-uplink-ber-ratio need a scenario with an "
                    "[uplink] table; {} has none",
                    opt.scenario_path));
  if (in.scen.uplink.on) {
    limits.max_uplink_sinr_loss_db =
        opt.max_uplink_sinr_loss_db >= 0 ? opt.max_uplink_sinr_loss_db : opt.max_sinr_loss_db;
    if (opt.max_uplink_ber_ratio >= 0) limits.max_uplink_ber_ratio = opt.max_uplink_ber_ratio;
  }
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
  std::vector<analysis::tune_corner> corners = corners_of(in, opt);
  for (analysis::tune_corner& c : corners) {
    analysis::tune_trial_counts& counts = c.trials;
    counts.search = in.trials_or_default(opt.num_trials);
    const auto search_trials = static_cast<std::size_t>(counts.search);
    const analysis::sample_plan range_plan =
        analysis::range_trial_plan(c.scen, opt.overflow_prob, opt.range_trials, search_trials, opt.range_budget);
    const analysis::sample_plan verify_plan =
        analysis::verify_trial_plan(c.scen, opt.max_overflow_rate, opt.verify_trials, search_trials, opt.verify_budget);
    counts.range = range_plan.trials;
    counts.verify = verify_plan.trials;
    if (corners.size() > 1) fmt::print("corner {}:\n  ", c.name);
    fmt::print("integer bits: {}\n", range_plan.text("golden trials"));
    if (corners.size() > 1) fmt::print("  ");
    fmt::print("verification: {}\n", verify_plan.text("fresh trials"));
  }
  const std::optional<double> budget = cache_budget_bytes(opt.resources);
  analysis::tune_results r;
  try {
    r = analysis::tune_unit_variants(corners, in.config, limits, model, opt.num_threads, opt.overflow_prob, opt.margin,
                                     show_status, budget);
  } catch (const std::invalid_argument& e) {
    throw usage_error(e.what());
  }
  show_status("");
  fmt::print("{}", report::format_tune_table(r));
  // With unit alternatives, the chosen units go into their [units.NODE] tables.
  write_file_atomically(opt.out_path, datapath::scenario_with_nodes(
                                          golden::scenario_with_units(in.text(), r.units), r.config, r.nodes,
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
  cmd->add_option("--range-trials,--trials", opt->num_trials,
                  "Golden trials (default: enough for 10/p values of every node, within --range-budget, at least the "
                  "scenario's)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--range-budget", opt->budget_seconds,
                  "Seconds the default trial count may take, at the reference rate of 1e8 MAC/s (README)")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 1e7));
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--overflow-prob", opt->overflow_prob, "Target probability that a value overflows")
      ->capture_default_str()
      ->check(CLI::Range(1e-15, 0.5));
  cmd->add_option("--json", opt->json_path, "Write the profile (with log2 histograms) as JSON");
  cmd->add_option("--write-scenario", opt->scenario_out, "Write the scenario with the proposed integer bits");
  add_resource_options(cmd, opt->resources);
  cmd->footer(
      "Prints per node: values seen, max |value|, percentiles 99 / 99.99 / 99.9999 % of |real| and |imag| parts,\n"
      "the proposed integer bits m (signed Qm.n) for the overflow probability p, and the worst-case analytic\n"
      "growth of the accumulating nodes. The proposal is the (1 - p) quantile where a node has 10/p values, else\n"
      "the 95 % upper bound of a generalized Pareto fit to its largest values (the tail fit is printed).\n"
      "Examples:\n"
      "  fxmimo range -c examples/rooftop-64.toml\n"
      "  fxmimo range -c examples/rooftop-64.toml --range-trials 200 --overflow-prob 1e-4 --write-scenario "
      "ranged.toml\n"
      "  fxmimo range -c examples/rooftop-64.toml --range-budget 600\n"
      "  mpirun -np 4 fxmimo range -c examples/rooftop-64.toml --range-trials 20000 --threads 1");
  cmd->callback([opt] { run_guarded("range", [opt] { return run_range(*opt); }); });
}

void add_sweep_command(CLI::App& app) {
  auto opt = std::make_shared<sweep_options>();
  CLI::App* cmd =
      app.add_subcommand("sweep", "Vary one node's width at a time and record SINR loss, EVM, SQNR, overflows");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--node", opt->nodes_text, "Node name, comma-separated names, or 'all'");
  cmd->add_option("--bits", opt->bits_text, "Range A:B of the varied quantity");
  cmd->add_option("--key", opt->key, "Sweep a scenario key instead of a width, e.g. array.antennas");
  cmd->add_option("--values", opt->values_text, "The key's values, comma-separated TOML, e.g. 32,64,128");
  cmd->add_option("--vary", opt->vary, "frac (fraction bits), word (word bits) or int (integer bits)")
      ->capture_default_str();
  cmd->add_option("--trials", opt->num_trials, "Trials per point (default: the scenario's)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--threads", opt->num_threads, "Worker threads (default: all cores)");
  cmd->add_option("--json", opt->json_path, "Write the points as JSON (input of fxmimo report)");
  cmd->add_option("--csv", opt->csv_path, "Write the points as CSV");
  add_resource_options(cmd, opt->resources);
  add_cache_option(cmd, opt->resources);
  add_shard_options(cmd, opt->sharding);
  cmd->footer(
      "Each point is exactly `fxmimo run` of the scenario with that one width changed, or (--key) with that one\n"
      "scenario key set; a key sweep prints golden SINR, golden interference over signal, SINR loss and the\n"
      "integer bits the accumulating nodes need at each value.\n"
      "With --shard I/N the sweep computes the I-th of N contiguous blocks of its points (the table's rows) and\n"
      "writes them to -o; fxmimo merge on the N parts prints and writes what the sweep without --shard does.\n"
      "Examples:\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node weights,dac --bits 8:16\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node gram --bits 6:12 --vary int --json gram.json\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node all --bits 10:14 --trials 8 --csv all.csv\n"
      "  fxmimo sweep -c examples/village-16-mf.toml --key array.antennas --values 16,32,64,128,256 --json m.json\n"
      "  fxmimo sweep -c examples/rooftop-64.toml --node all --bits 10:14 --shard 3/8 -o part-3.json\n"
      "  mpirun -np 4 fxmimo sweep -c examples/rooftop-64.toml --node all --bits 10:14 --threads 1 --json all.json");
  cmd->callback([opt] { run_guarded("sweep", [opt] { return run_sweep_command(*opt); }); });
}

void add_tune_command(CLI::App& app) {
  auto opt = std::make_shared<tune_options>();
  CLI::App* cmd =
      app.add_subcommand("tune", "Find the cheapest widths that keep SINR loss, EVM and overflows inside limits");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("--max-sinr-loss", opt->max_sinr_loss_db, "Largest SINR loss (of the --sinr-loss-at statistic), dB")
      ->capture_default_str();
  cmd->add_option("--sinr-loss-at", opt->sinr_loss_at,
                  "What --max-sinr-loss limits: mean (over users, of the mean SINRs) or a percentile of the "
                  "per-trial, per-user losses, e.g. 95")
      ->capture_default_str();
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
  cmd->add_option("--max-uplink-sinr-loss", opt->max_uplink_sinr_loss_db,
                  "With an [uplink]: largest uplink SINR loss (mean over users), dB (default: --max-sinr-loss)")
      ->check(CLI::Range(0.0, 100.0));
  cmd->add_option("--max-uplink-ber-ratio", opt->max_uplink_ber_ratio,
                  "With an [uplink]: largest (fixed bit errors + 1) / (golden bit errors + 1) (default: no limit)")
      ->check(CLI::Range(1.0, 1e6));
  cmd->add_option("--cost", opt->cost, "bits (total word bits) or area (a stated proxy, README)")
      ->capture_default_str();
  cmd->add_option("--trials", opt->num_trials, "Trials per evaluation of the search (default: the scenario's)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--range-trials", opt->range_trials,
                  "Golden trials for the integer bits (default: 10/p values per node within --range-budget)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--range-budget", opt->range_budget, "Seconds at 1e8 MAC/s the default range trials may take")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 1e7));
  cmd->add_option("--verify-trials", opt->verify_trials,
                  "Fresh trials of the verification (default: enough that zero overflows prove the overflow-rate "
                  "limit at 95 %, within --verify-budget, at least --trials)")
      ->check(CLI::Range(1, 100000000));
  cmd->add_option("--verify-budget", opt->verify_budget, "Seconds at 1e8 MAC/s the default verification may take")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 1e7));
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
  cmd->add_option("--corner", opt->corner_lists,
                  "An operating corner axis KEY=V1,V2,... (repeatable: the corners are the cross product), e.g. "
                  "data.snr_db=10,20,30")
      ->allow_extra_args(false);
  cmd->add_option("--corner-scenario", opt->corner_files, "Another scenario file as a corner (repeatable)")
      ->allow_extra_args(false);
  add_resource_options(cmd, opt->resources);
  add_cache_option(cmd, opt->resources);
  cmd->footer(
      "Integer bits come from range profiling; fraction bits from a per-node minimum and greedy add/remove passes.\n"
      "The verification runs on fresh trials, none seen by the search or the range profile, and prints the\n"
      "overflow-rate bound it proves. Exit code 1 when the choice does not meet the limits on those trials.\n"
      "Under mpirun (a build with MPI) every evaluation's trials are spread over the ranks, with the same result.\n"
      "Examples:\n"
      "  fxmimo tune -c examples/rooftop-64.toml --max-sinr-loss 0.05 --max-evm 0.5 -o tuned.toml\n"
      "  fxmimo tune -c examples/tower-128-neumann.toml --modulation scenario --evm-budget 0.2 --cost area -o t.toml "
      "--json t.json\n"
      "  fxmimo tune -c examples/rooftop-64.toml --max-evm 0.5 -o tuned.toml --junit tune.xml\n"
      "  fxmimo tune -c examples/rooftop-64.toml --max-evm 0.5 --max-sinr-loss 0.2 --sinr-loss-at 95 -o t.toml\n"
      "  fxmimo tune -c examples/pier-64-uplink.toml --max-evm 0.5 --max-uplink-sinr-loss 0.05 "
      "--max-uplink-ber-ratio 1.1 -o t.toml\n"
      "  fxmimo tune -c examples/village-16-mf.toml --max-evm 1 --corner data.snr_db=10,20,30 \\\n"
      "      --corner 'cells.users_per_cell=2,4' --corner 'cells.user_gains_db=[0.0, 6.0, 2.0, 4.0]' -o t.toml\n"
      "  mpirun -np 8 fxmimo tune -c examples/metro-7-shadowed.toml --modulation scenario --threads 1 -o m.toml");
  cmd->callback([opt] { run_guarded("tune", [opt] { return run_tune(*opt); }); });
}

}  // namespace fxmimo::cli
