// fxmimo vectors: the bit-true words of a scenario's datapath nodes, for chosen trials, written
// as a vector set (README "Handing vectors to RTL") that an RTL testbench reads with $readmemh / hread / numpy.
#include <fmt/core.h>

#include <algorithm>
#include <array>
#include <charconv>
#include <cstdint>
#include <filesystem>
#include <limits>
#include <memory>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "commands.hpp"
#include "fxmimo/analysis/resources.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/golden/trial.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "progress.hpp"
#include "resource_guard.hpp"
#include "scenario_input.hpp"

namespace fxmimo::cli {

namespace {

using datapath::node_id;

struct vectors_options {
  std::string scenario_path;
  std::string out_dir;
  std::string trials = "0";
  std::string nodes;  ///< empty: every active node
  std::string form = "hex";
  std::string layout = "split";
  resource_options resources;
};

/// Splits "a,b,,c" at commas, keeping empty items (so that a stray comma is reported).
std::vector<std::string_view> split_commas(std::string_view text) {
  std::vector<std::string_view> items;
  std::size_t start = 0;
  while (true) {
    const std::size_t comma = text.find(',', start);
    items.push_back(text.substr(start, comma == std::string_view::npos ? std::string_view::npos : comma - start));
    if (comma == std::string_view::npos) break;
    start = comma + 1;
  }
  return items;
}

std::optional<std::uint64_t> parse_index(std::string_view text) {
  if (text.empty() || text.size() > 18) return std::nullopt;
  std::uint64_t value = 0;
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), value);
  if (ec != std::errc() || end != text.data() + text.size()) return std::nullopt;
  return value;
}

/// Trial indices from "0,3,5-7" (single indices and inclusive ranges, each index at most once),
/// in the order given; every index must lie in 0 .. num_trials-1 of the scenario.
std::vector<std::uint64_t> parse_trial_list(std::string_view text, int num_trials) {
  const auto limit = static_cast<std::uint64_t>(num_trials);
  std::vector<std::uint64_t> trials;
  for (std::string_view item : split_commas(text)) {
    const std::size_t dash = item.find('-');
    const std::optional<std::uint64_t> first = parse_index(item.substr(0, dash));
    const std::optional<std::uint64_t> last =
        dash == std::string_view::npos ? first : parse_index(item.substr(dash + 1));
    if (!first || !last) {
      throw usage_error(
          fmt::format("--trials '{}': '{}' is not a trial index or a range FIRST-LAST (e.g. 0,3,5-7)", text, item));
    }
    if (*last < *first) throw usage_error(fmt::format("--trials '{}': range '{}' runs backwards", text, item));
    if (*last >= limit) {
      throw usage_error(fmt::format("--trials '{}': trial {} is out of range: the scenario runs trials 0..{}", text,
                                    *last, num_trials - 1));
    }
    for (std::uint64_t t = *first; t <= *last; ++t) {
      if (std::find(trials.begin(), trials.end(), t) != trials.end()) {
        throw usage_error(fmt::format("--trials '{}': trial {} is listed twice", text, t));
      }
      trials.push_back(t);
    }
  }
  return trials;
}

/// Chosen nodes in datapath order; every one must be active in this scenario.
std::vector<node_id> parse_node_list(std::string_view text, const std::vector<node_id>& active) {
  if (text.empty()) return active;
  std::vector<bool> chosen(datapath::node_count(), false);
  for (std::string_view item : split_commas(text)) {
    const std::optional<node_id> id = datapath::parse_node_name(item);
    if (!id) {
      throw usage_error(fmt::format("--nodes: unknown node '{}' (nodes: {})", item, datapath::list_node_names()));
    }
    if (std::find(active.begin(), active.end(), *id) == active.end()) {
      throw usage_error(fmt::format("--nodes: node '{}' is not used by this scenario's datapath", item));
    }
    chosen[datapath::index_of(*id)] = true;
  }
  std::vector<node_id> out;
  for (node_id id : active) {
    if (chosen[datapath::index_of(id)]) out.push_back(id);
  }
  return out;
}

/// An empty "out" record for a node, its dimensions named by the node table (a column vector's
/// one-wide second dimension is left out of the file).
vectors::node_words start_record(datapath::node_id id, const scenario_input& in, const datapath::datapath_plan& plan) {
  vectors::node_words r;
  r.node = std::string(datapath::node_name(id));
  r.direction = "out";
  r.spec = in.config[id].spec;
  const std::array<datapath::dim, 2> dims = datapath::dims_of(id);
  r.dim_names = {"trial", std::string(plan.dims.name(dims[0]))};
  if (dims[1] != datapath::dim::one) r.dim_names.push_back(std::string(plan.dims.name(dims[1])));
  return r;
}

/// Appends one trial's words of a node to its record (sizes from the first trial; later trials
/// must agree).
void append_trial(vectors::node_words& r, const datapath::word_matrix& w) {
  const auto rows = static_cast<std::size_t>(w.rows);
  const auto cols = static_cast<std::size_t>(w.cols);
  const bool is_vector = r.dim_names.size() == 2;
  if (is_vector && cols != 1) {
    throw std::logic_error(fmt::format("node {}: {} x {} words for a one-column node", r.node, rows, cols));
  }
  if (r.dim_sizes.empty()) {
    r.is_complex = w.is_complex;
    r.dim_sizes = {0, rows};
    if (!is_vector) r.dim_sizes.push_back(cols);
  } else if (r.dim_sizes[1] != rows || (!is_vector && r.dim_sizes[2] != cols)) {
    throw std::logic_error(fmt::format("node {}: trials differ in shape", r.node));
  }
  ++r.dim_sizes[0];
  r.re.insert(r.re.end(), w.re.begin(), w.re.end());
  r.im.insert(r.im.end(), w.im.begin(), w.im.end());
}

std::string dims_text(const vectors::file_entry& f) {
  std::string s = "[";
  for (std::size_t i = 0; i < f.dim_names.size(); ++i) {
    s += fmt::format("{}{}={}", i == 0 ? "" : ", ", f.dim_names[i], f.dim_sizes[i]);
  }
  return s + "]";
}

int run_vectors(const vectors_options& opt) {
  const std::optional<vectors::file_form> form = vectors::parse_file_form(opt.form);
  if (!form) throw usage_error(fmt::format("--form '{}': expected hex, bin or npy", opt.form));
  const std::optional<vectors::complex_layout> layout = vectors::parse_complex_layout(opt.layout);
  if (!layout) throw usage_error(fmt::format("--layout '{}': expected split or interleaved", opt.layout));

  const scenario_input in = load_scenario_input(opt.scenario_path);
  const std::vector<std::uint64_t> trials = parse_trial_list(opt.trials, in.scen.num_trials);
  check_resources(in, {trials.size(), 1, 1, trials.size()}, opt.resources);
  const datapath::datapath_plan plan = datapath::stages_for(in.scen);
  const std::vector<node_id> active = plan.nodes();
  const std::vector<node_id> chosen = parse_node_list(opt.nodes, active);

  // Every node whose words go into the set: the chosen ones and their sources.
  std::vector<std::optional<vectors::node_words>> words(datapath::node_count());
  for (node_id id : chosen) {
    words[datapath::index_of(id)] = start_record(id, in, plan);
    for (node_id src : plan.sources_of(id)) words[datapath::index_of(src)] = start_record(src, in, plan);
  }

  {
    progress_line progress("trials");
    for (std::size_t i = 0; i < trials.size(); ++i) {
      analysis::throw_if_stop_requested();
      const golden::trial_data trial = golden::run_trial(in.scen, trials[i]);
      const datapath::fixed_trial fixed = datapath::run_fixed_datapath(plan, in.scen, in.config, trial);
      for (node_id id : datapath::all_nodes()) {
        if (words[datapath::index_of(id)])
          append_trial(*words[datapath::index_of(id)], fixed.words[datapath::index_of(id)]);
      }
      progress.update(i + 1, trials.size());
    }
  }

  std::vector<vectors::node_words> records;
  for (node_id id : chosen) {
    records.push_back(*words[datapath::index_of(id)]);
    for (node_id src : plan.sources_of(id)) {
      vectors::node_words port = *words[datapath::index_of(src)];
      port.node = std::string(datapath::node_name(id));
      port.direction = "in";
      port.port = std::string(datapath::node_name(src));
      records.push_back(std::move(port));
    }
  }

  vectors::manifest_info info;
  info.tool_version = FXMIMO_VERSION;
  info.scenario_name = std::filesystem::path(opt.scenario_path).filename().string();
  info.scenario_text = in.text();
  info.seed = in.scen.seed;
  info.trials = trials;
  const vectors::manifest man = vectors::write_vector_set(opt.out_dir, info, records, *form, *layout);

  std::string trial_text;
  for (std::uint64_t t : trials) trial_text += fmt::format("{}{}", trial_text.empty() ? "" : ",", t);
  fmt::print("scenario {} ({}), seed {}, trials {}: {} nodes, {} records\n", in.scen.name, info.scenario_name,
             in.scen.seed, trial_text, chosen.size(), records.size());
  std::size_t name_width = 0;
  std::size_t dims_width = 0;
  for (const vectors::file_entry& f : man.files) {
    name_width = std::max(name_width, f.file.size());
    dims_width = std::max(dims_width, dims_text(f).size());
  }
  std::size_t total_words = 0;
  for (const vectors::file_entry& f : man.files) {
    fmt::print("  {:<{}}  {:<{}}  {} {} {}\n", f.file, name_width, dims_text(f), dims_width,
               fixedpoint::describe(f.spec.fmt), fixedpoint::to_string(f.spec.rounding),
               fixedpoint::to_string(f.spec.overflow));
    total_words += f.word_count;
  }
  fmt::print("wrote {} files ({} words) and {} to {}\n", man.files.size(), total_words, vectors::manifest_file_name,
             opt.out_dir);
  return exit_ok;
}

}  // namespace

void add_vectors_command(CLI::App& app) {
  auto opt = std::make_shared<vectors_options>();
  CLI::App* cmd =
      app.add_subcommand("vectors", "Write a scenario's datapath words as a vector set for an RTL testbench");
  cmd->add_option("-c,--scenario", opt->scenario_path, "Scenario file (TOML)")->required();
  cmd->add_option("-o,--out", opt->out_dir, "Directory of the vector set (absent, empty or an earlier set)")
      ->required();
  cmd->add_option("--trials", opt->trials, "Trial indices, e.g. 0,3,5-7 (each below the scenario's trial count)")
      ->capture_default_str();
  cmd->add_option("--nodes", opt->nodes, "Nodes, comma-separated, e.g. tx_acc,dac (default: every active node)");
  cmd->add_option("--form", opt->form, "Word files: hex ($readmemh, hread), bin ($readmemb) or npy")
      ->capture_default_str();
  cmd->add_option("--layout", opt->layout, "Complex words: split (.re/.im files) or interleaved")
      ->capture_default_str();
  add_resource_options(cmd, opt->resources);
  cmd->footer(
      "Runs the golden model and the bit-true datapath for each chosen trial and writes, per chosen\n"
      "node, the words it must produce (direction \"out\") and the words it consumes from other nodes\n"
      "(direction \"in\", one port per source node, in that node's format), plus manifest.json.\n"
      "Every file's first dimension is the trial, in the order given; then the node's own, e.g.\n"
      "tx_acc [trial, antenna, symbol], weights [trial, antenna, user], gram [trial, user, user].\n"
      "Exit code: 0 written, 2 bad scenario, trial list or node name (nothing complete left behind).\n"
      "Examples:\n"
      "  fxmimo vectors -c examples/rooftop-64.toml -o vec --nodes tx_acc,dac\n"
      "  fxmimo vectors -c examples/rooftop-64.toml -o vec --trials 0,3,5-7 --form npy\n"
      "  fxmimo vectors -c examples/village-16-mf.toml -o vec --layout interleaved");
  cmd->callback([opt] { run_guarded("vectors", [opt] { return run_vectors(*opt); }); });
}

}  // namespace fxmimo::cli
