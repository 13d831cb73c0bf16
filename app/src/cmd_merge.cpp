// fxmimo merge: the partial results of `run --shard` and `sweep --shard` put back together,
// checked to be one computation's complete set of shards, and reduced, printed and written exactly
// as the command without --shard does.
#include <fmt/core.h>

#include <algorithm>
#include <map>

#include "commands.hpp"
#include "fxmimo/golden/scenario.hpp"
#include "fxmimo/report/parts.hpp"
#include "fxmimo/vectors/sha256.hpp"
#include "results_output.hpp"
#include "scenario_input.hpp"

namespace fxmimo::cli {

namespace {

struct merge_options {
  std::vector<std::string> parts;
  std::string out_path;
  std::string csv_path;
};

struct named_part {
  std::string file;
  report::part_record part;
};

/// The first key path at which two origins differ ("" when they agree), e.g. "options.trials".
std::string first_difference(const nlohmann::json& a, const nlohmann::json& b, const std::string& path = "") {
  if (a.is_object() && b.is_object()) {
    for (const auto& [key, value] : a.items()) {
      const std::string here = path.empty() ? key : path + "." + key;
      if (!b.contains(key)) return here;
      if (std::string d = first_difference(value, b[key], here); !d.empty()) return d;
    }
    for (const auto& [key, value] : b.items()) {
      if (!a.contains(key)) return path.empty() ? key : path + "." + key;
    }
    return "";
  }
  return a == b ? "" : path;
}

std::string shown(const nlohmann::json& origin, const std::string& path) {
  const nlohmann::json::json_pointer pointer("/" + [&] {
    std::string p = path;
    for (char& c : p) c = c == '.' ? '/' : c;
    return p;
  }());
  return origin.contains(pointer) ? origin[pointer].dump() : "nothing";
}

/// The parts, checked to be the shards 1..N of one computation, in shard order.
std::vector<named_part> checked_parts(const std::vector<std::string>& files) {
  std::vector<named_part> parts;
  for (const std::string& file : files) {
    parts.push_back({file, report::read_part_file(file)});
    const report::part_origin& o = parts.back().part.origin;
    if (vectors::sha256_hex(o.scenario_text) != o.scenario_sha256)
      throw usage_error(fmt::format(
          "{}: scenario.text does not have the SHA-256 in scenario.sha256: the part was changed after it was written",
          file));
  }
  const named_part& first = parts.front();
  const nlohmann::json first_origin = report::origin_json(first.part.origin);
  std::map<std::size_t, const named_part*> by_shard;
  for (const named_part& p : parts) {
    const nlohmann::json origin = report::origin_json(p.part.origin);
    if (const std::string d = first_difference(first_origin, origin); d == "scenario.sha256") {
      throw usage_error(fmt::format(
          "{}: not a part of the same computation as {}: another scenario file (SHA-256 {}... there, {}... here)",
          p.file, first.file, first.part.origin.scenario_sha256.substr(0, 12),
          p.part.origin.scenario_sha256.substr(0, 12)));
    } else if (!d.empty()) {
      throw usage_error(fmt::format("{}: not a part of the same computation as {}: {} is {} there, {} here", p.file,
                                    first.file, d, shown(first_origin, d), shown(origin, d)));
    }
    if (p.part.shard.count != first.part.shard.count) {
      throw usage_error(fmt::format(
          "{}: shard {}/{}, but {} is shard {}/{}: the parts of one computation have one "
          "shard count",
          p.file, p.part.shard.index, p.part.shard.count, first.file, first.part.shard.index, first.part.shard.count));
    }
    if (p.part.total != first.part.total) {
      throw usage_error(
          fmt::format("{}: share.total {}, but {} has {}", p.file, p.part.total, first.file, first.part.total));
    }
    const auto [it, inserted] = by_shard.emplace(p.part.shard.index, &p);
    if (!inserted) {
      throw usage_error(fmt::format("{}: shard {}/{} again (also {}): give each shard once", p.file, p.part.shard.index,
                                    p.part.shard.count, it->second->file));
    }
  }
  const std::size_t count = first.part.shard.count;
  std::vector<std::string> missing;
  for (std::size_t i = 1; i <= count; ++i) {
    if (!by_shard.contains(i)) missing.push_back(fmt::format("{}/{}", i, count));
  }
  if (!missing.empty()) {
    // At most 8 of each, so that the message stays one line.
    const auto listed = [](const std::vector<std::string>& names) {
      std::string out;
      for (std::size_t i = 0; i < names.size() && i < 8; ++i) out += (i == 0 ? "" : ", ") + names[i];
      return names.size() > 8 ? out + fmt::format(" and {} more", names.size() - 8) : out;
    };
    const std::string list = listed(missing), given = listed(files);
    throw usage_error(fmt::format("{} {} {} missing (given: {}): merge needs every shard once",
                                  missing.size() == 1 ? "shard" : "shards", list, missing.size() == 1 ? "is" : "are",
                                  given));
  }
  std::sort(parts.begin(), parts.end(),
            [](const named_part& a, const named_part& b) { return a.part.shard.index < b.part.shard.index; });
  return parts;
}

/// The trials or points a computation has in all, from its options (a part's share.total must agree).
std::size_t expected_total(const report::part_origin& o) {
  if (o.command == "run") return o.trials;
  if (!o.key.empty()) return o.values.size();
  return o.bits_hi < o.bits_lo ? 0 : o.nodes.size() * static_cast<std::size_t>(o.bits_hi - o.bits_lo + 1);
}

int merge_run(std::vector<named_part>& parts, const scenario_input& in, const merge_options& opt) {
  if (!opt.csv_path.empty()) throw usage_error("--csv is for the parts of a sweep; a run writes JSON (-o) only");
  const std::vector<datapath::node_id> nodes = datapath::active_nodes(in.scen);
  std::vector<analysis::trial_summary> per_trial;
  for (named_part& p : parts) {
    if (!p.part.trials.empty() && p.part.trial_nodes != nodes) {
      throw usage_error(fmt::format("{}: its trials hold other nodes than the datapath of its scenario", p.file));
    }
    for (analysis::trial_summary& t : p.part.trials) {
      if (t.sinr_golden.size() != static_cast<std::size_t>(in.scen.cells.num_users)) {
        throw usage_error(fmt::format("{}: trial {} holds figures of {} users; its scenario has {}", p.file,
                                      t.trial_index, t.sinr_golden.size(), in.scen.cells.num_users));
      }
      // A node's setting is the scenario's, as evaluate_trial sets it.
      for (datapath::node_id id : nodes) {
        t.nodes[datapath::index_of(id)].spec = in.config[id].spec;
        t.nodes[datapath::index_of(id)].is_default = in.config[id].is_default;
      }
      per_trial.push_back(std::move(t));
    }
  }
  print_and_write(analysis::reduce_trials(in.scen, in.config,
                                          analysis::first_trials(static_cast<int>(per_trial.size())), per_trial),
                  opt.out_path);
  return exit_ok;
}

int merge_sweep(const std::vector<named_part>& parts, const scenario_input& in, const merge_options& opt) {
  const report::part_origin& o = parts.front().part.origin;
  if (!o.key.empty()) {
    analysis::key_sweep_results r;
    // As the key sweep names itself: after its first scenario.
    r.scenario_name = golden::parse_scenario(golden::with_overrides(in.doc, {{o.key, o.values.front()}})).name;
    r.key = o.key;
    r.num_trials = o.trials;
    for (const named_part& p : parts) {
      for (std::size_t i = 0; i < p.part.key_points.size(); ++i) {
        if (p.part.key_points[i].value != o.values[p.part.first + i])
          throw usage_error(fmt::format("{}: points[{}] is value {}; its share says {}", p.file, i,
                                        p.part.key_points[i].value, o.values[p.part.first + i]));
        r.points.push_back(p.part.key_points[i]);
      }
    }
    print_and_write(r, opt.out_path, opt.csv_path);
    return exit_ok;
  }
  const std::optional<analysis::sweep_axis> axis = analysis::parse_sweep_axis(o.vary);
  if (!axis) throw usage_error(fmt::format("{}: options.vary: unknown axis '{}'", parts.front().file, o.vary));
  analysis::sweep_results r;
  r.scenario_name = in.scen.name;
  r.num_trials = o.trials;
  r.axis = *axis;
  const auto width = static_cast<std::size_t>(o.bits_hi - o.bits_lo + 1);
  for (const named_part& p : parts) {
    for (std::size_t i = 0; i < p.part.points.size(); ++i) {
      // Point k of the sweep is node k / width at bits lo + k % width (analysis::sweep_point_count).
      const std::size_t k = p.part.first + i;
      const analysis::sweep_point& point = p.part.points[i];
      if (datapath::node_name(point.id) != o.nodes[k / width] ||
          point.bits != o.bits_lo + static_cast<int>(k % width)) {
        throw usage_error(fmt::format("{}: points[{}] is {} at {} bits; its share says {} at {}", p.file, i,
                                      datapath::node_name(point.id), point.bits, o.nodes[k / width],
                                      o.bits_lo + static_cast<int>(k % width)));
      }
      r.points.push_back(point);
    }
  }
  print_and_write(r, opt.out_path, opt.csv_path);
  return exit_ok;
}

int run_merge(const merge_options& opt) {
  std::vector<named_part> parts = checked_parts(opt.parts);
  const report::part_origin& o = parts.front().part.origin;
  const scenario_input in = parse_scenario_input(o.scenario_text, o.scenario_source);
  if (const std::size_t total = expected_total(o); parts.front().part.total != total) {
    throw usage_error(fmt::format("{}: share.total {}, but its options make {}", parts.front().file,
                                  parts.front().part.total, total));
  }
  return o.command == "run" ? merge_run(parts, in, opt) : merge_sweep(parts, in, opt);
}

}  // namespace

void add_merge_command(CLI::App& app) {
  auto opt = std::make_shared<merge_options>();
  CLI::App* cmd = app.add_subcommand(
      "merge", "Put the partial results of run --shard or sweep --shard together into the command's results");
  cmd->add_option("parts", opt->parts, "The partial results files, one per shard, in any order")->required();
  cmd->add_option("-o,--out", opt->out_path, "The results JSON: what run or sweep writes with --json")->required();
  cmd->add_option("--csv", opt->csv_path, "Parts of a sweep: also the CSV that sweep writes with --csv");
  cmd->footer(
      "Checks that the parts come from one scenario file (its SHA-256) and one command line (the options that\n"
      "change results: not --threads, --cache-budget, --max-memory, --max-work or the output paths), and that\n"
      "every shard 1..N is there once; any fault is one line and exit code 2, with nothing written. Then it\n"
      "reduces the trials in trial order (run) or puts the points in order (sweep), prints the table the command\n"
      "prints and writes its JSON (and CSV): byte for byte what one run without --shard writes.\n"
      "Examples:\n"
      "  fxmimo merge part-1.json part-2.json part-3.json part-4.json -o run.json\n"
      "  fxmimo merge sweep-part-*.json -o sweep.json --csv sweep.csv");
  cmd->callback([opt] { run_guarded("merge", [opt] { return run_merge(*opt); }); });
}

}  // namespace fxmimo::cli
