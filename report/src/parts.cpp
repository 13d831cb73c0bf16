// Partial results files: to JSON and back through the checked reader, every double exact.
#include "fxmimo/report/parts.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <optional>
#include <span>

#include "fxmimo/datapath/node_table.hpp"
#include "fxmimo/io/exact_double.hpp"

namespace fxmimo::report {

using io::checked_json;
using nlohmann::json;

namespace {

json exact(double v) { return io::exact_double_text(v); }

json exact_list(const std::vector<double>& values) {
  json out = json::array();
  for (double v : values) out.push_back(exact(v));
  return out;
}

std::vector<double> exact_list_from(const checked_json& array) {
  std::vector<double> out;
  for (std::size_t i = 0; i < array.size(); ++i) out.push_back(array[i].exact_double());
  return out;
}

datapath::node_id node_from(const checked_json& v) {
  const std::string name = v.text();
  const auto id = datapath::parse_node_name(name);
  if (!id) v.fail(fmt::format("unknown node '{}'", name));
  return *id;
}

// --- a run's trials

json node_json(const analysis::node_result& n) {
  return {{"node", std::string(datapath::node_name(n.id))},
          {"signal_energy", exact(n.signal_energy)},
          {"error_energy", exact(n.error_energy)},
          {"max_err_lsb", exact(n.max_err_lsb)},
          {"max_abs_golden", exact(n.max_abs_golden)},
          {"values", n.num_values},
          {"requantized", n.counters.requantized},
          {"overflowed", n.counters.overflowed},
          {"inexact", n.counters.inexact},
          {"max_excess_lsb", exact(n.counters.max_excess_lsb)}};
}

analysis::node_result node_from_json(const checked_json& j) {
  analysis::node_result n;
  n.id = node_from(j["node"]);
  n.signal_energy = j["signal_energy"].exact_double();
  n.error_energy = j["error_energy"].exact_double();
  n.max_err_lsb = j["max_err_lsb"].exact_double();
  n.max_abs_golden = j["max_abs_golden"].exact_double();
  n.num_values = j["values"].count();
  n.counters.requantized = j["requantized"].count();
  n.counters.overflowed = j["overflowed"].count();
  n.counters.inexact = j["inexact"].count();
  n.counters.max_excess_lsb = j["max_excess_lsb"].exact_double();
  return n;
}

/// The given nodes only (a trial's slots of the nodes its datapath lacks stay default).
json trial_json(const analysis::trial_summary& t, const std::vector<datapath::node_id>& nodes) {
  json node_list = json::array();
  for (datapath::node_id id : nodes) node_list.push_back(node_json(t.nodes[datapath::index_of(id)]));
  json out = {{"trial", t.trial_index},
              {"nodes", node_list},
              {"sinr_golden", exact_list(t.sinr_golden)},
              {"sinr_fixed", exact_list(t.sinr_fixed)},
              {"evm_golden_pct", exact_list(t.evm_golden_pct)},
              {"evm_fixed_pct", exact_list(t.evm_fixed_pct)},
              {"evm_impl", exact(t.evm_impl)},
              {"tx_power_error_db", exact(t.tx_power_error_db)},
              {"neumann_radius", exact(t.neumann_radius)},
              {"gauss_seidel_residual", exact(t.gauss_seidel_residual)},
              {"gram_condition", exact(t.gram_condition)}};
  if (!t.ul_sinr_golden.empty()) {
    out["uplink"] = {{"sinr_golden", exact_list(t.ul_sinr_golden)},
                     {"sinr_fixed", exact_list(t.ul_sinr_fixed)},
                     {"evm_golden_pct", exact_list(t.ul_evm_golden_pct)},
                     {"evm_fixed_pct", exact_list(t.ul_evm_fixed_pct)},
                     {"bits", t.ul_bits},
                     {"bit_errors_golden", t.ul_bit_errors_golden},
                     {"bit_errors_fixed", t.ul_bit_errors_fixed},
                     {"llr_sign_flips", t.ul_llr_sign_flips}};
  }
  return out;
}

/// A trial; `nodes` gets the order of its nodes.
analysis::trial_summary trial_from_json(const checked_json& j, std::vector<datapath::node_id>& nodes) {
  analysis::trial_summary t;
  t.trial_index = j["trial"].count();
  t.nodes.resize(datapath::node_count());
  const checked_json list = j["nodes"];
  nodes.clear();
  for (std::size_t i = 0; i < list.size(); ++i) {
    analysis::node_result n = node_from_json(list[i]);
    if (std::find(nodes.begin(), nodes.end(), n.id) != nodes.end())
      list[i]["node"].fail(fmt::format("node {} twice", datapath::node_name(n.id)));
    nodes.push_back(n.id);
    t.nodes[datapath::index_of(n.id)] = n;
  }
  t.sinr_golden = exact_list_from(j["sinr_golden"]);
  t.sinr_fixed = exact_list_from(j["sinr_fixed"]);
  t.evm_golden_pct = exact_list_from(j["evm_golden_pct"]);
  t.evm_fixed_pct = exact_list_from(j["evm_fixed_pct"]);
  const std::size_t users = t.sinr_golden.size();
  for (const char* key : {"sinr_fixed", "evm_golden_pct", "evm_fixed_pct"}) {
    if (j[key].size() != users) j[key].fail(fmt::format("{} values; sinr_golden has {}", j[key].size(), users));
  }
  t.evm_impl = j["evm_impl"].exact_double();
  t.tx_power_error_db = j["tx_power_error_db"].exact_double();
  t.neumann_radius = j["neumann_radius"].exact_double();
  // Parts written before the Gauss-Seidel inverse existed lack it (0: no such inverse).
  if (const auto v = j.find("gauss_seidel_residual")) t.gauss_seidel_residual = v->exact_double();
  t.gram_condition = j["gram_condition"].exact_double();
  if (const auto u = j.find("uplink")) {
    t.ul_sinr_golden = exact_list_from((*u)["sinr_golden"]);
    t.ul_sinr_fixed = exact_list_from((*u)["sinr_fixed"]);
    t.ul_evm_golden_pct = exact_list_from((*u)["evm_golden_pct"]);
    t.ul_evm_fixed_pct = exact_list_from((*u)["evm_fixed_pct"]);
    const std::size_t ul_users = t.ul_sinr_golden.size();
    for (const char* key : {"sinr_fixed", "evm_golden_pct", "evm_fixed_pct"}) {
      if ((*u)[key].size() != ul_users)
        (*u)[key].fail(fmt::format("{} values; sinr_golden has {}", (*u)[key].size(), ul_users));
    }
    t.ul_bits = (*u)["bits"].count();
    t.ul_bit_errors_golden = (*u)["bit_errors_golden"].count();
    t.ul_bit_errors_fixed = (*u)["bit_errors_fixed"].count();
    t.ul_llr_sign_flips = (*u)["llr_sign_flips"].count();
  }
  return t;
}

// --- a sweep's points

/// The double members of a results struct and their keys: one table serves both directions.
template <class S>
struct double_field {
  const char* key;
  double S::*member;
};
template <class S>
struct optional_field {
  const char* key;
  std::optional<double> S::*member;
};

template <class S>
struct exact_fields {
  std::span<const double_field<S>> doubles;
  std::span<const optional_field<S>> optionals;  // written only when present
};

template <class S>
json fields_json(const S& s, const exact_fields<S>& f) {
  json out = json::object();
  for (const auto& d : f.doubles) out[d.key] = exact(s.*d.member);
  for (const auto& o : f.optionals)
    if (s.*o.member) out[o.key] = exact(*(s.*o.member));
  return out;
}

template <class S>
void fields_from_json(const checked_json& j, const exact_fields<S>& f, S& s) {
  for (const auto& d : f.doubles) s.*d.member = j[d.key].exact_double();
  for (const auto& o : f.optionals)
    if (const auto v = j.find(o.key)) s.*o.member = v->exact_double();
}

using analysis::run_distribution;
using analysis::run_summary;

constexpr double_field<run_summary> summary_doubles[] = {
    {"sinr_golden_db", &run_summary::sinr_golden_db},
    {"sinr_fixed_db", &run_summary::sinr_fixed_db},
    {"sinr_loss_db", &run_summary::sinr_loss_db},
    {"evm_golden_pct", &run_summary::evm_golden_pct},
    {"evm_fixed_pct", &run_summary::evm_fixed_pct},
    {"evm_impl_pct", &run_summary::evm_impl_pct},
    {"tx_power_error_db", &run_summary::tx_power_error_db},
    {"max_abs_tx_power_error_db", &run_summary::max_abs_tx_power_error_db},
    {"rms_tx_power_error_db", &run_summary::rms_tx_power_error_db}};
constexpr optional_field<run_summary> summary_optionals[] = {{"evm_limit_pct", &run_summary::evm_limit_pct}};
constexpr exact_fields<run_summary> summary_fields{summary_doubles, summary_optionals};

constexpr double_field<run_distribution> distribution_doubles[] = {
    {"sinr_loss_p5_db", &run_distribution::sinr_loss_p5_db},
    {"sinr_loss_p50_db", &run_distribution::sinr_loss_p50_db},
    {"sinr_loss_p95_db", &run_distribution::sinr_loss_p95_db},
    {"evm_impl_p95_pct", &run_distribution::evm_impl_p95_pct},
    {"evm_impl_max_pct", &run_distribution::evm_impl_max_pct}};
constexpr optional_field<run_distribution> distribution_optionals[] = {
    {"gram_condition_p50", &run_distribution::gram_condition_p50},
    {"gram_condition_p95", &run_distribution::gram_condition_p95},
    {"gram_condition_max", &run_distribution::gram_condition_max}};
constexpr exact_fields<run_distribution> distribution_fields{distribution_doubles, distribution_optionals};

json summary_json(const run_summary& s) { return fields_json(s, summary_fields); }

run_summary summary_from_json(const checked_json& j) {
  run_summary s;
  fields_from_json(j, summary_fields, s);
  return s;
}

json distribution_json(const run_distribution& d) {
  json out = fields_json(d, distribution_fields);
  out["sinr_loss_percentiles_db"] = exact_list(d.sinr_loss_percentiles_db);
  return out;
}

run_distribution distribution_from_json(const checked_json& j) {
  run_distribution d;
  fields_from_json(j, distribution_fields, d);
  d.sinr_loss_percentiles_db = exact_list_from(j["sinr_loss_percentiles_db"]);
  return d;
}

/// A sweep point's uplink, every figure exact (what run_trials reduced; merge puts it back as is).
json uplink_json(const analysis::uplink_results& u) {
  json users = json::array();
  for (const analysis::user_result& k : u.users) {
    users.push_back({{"sinr_golden_db", exact(k.sinr_golden_db)},
                     {"sinr_fixed_db", exact(k.sinr_fixed_db)},
                     {"evm_golden_pct", exact(k.evm_golden_pct)},
                     {"evm_fixed_pct", exact(k.evm_fixed_pct)}});
  }
  return {{"users", users},
          {"sinr_golden_db", exact(u.sinr_golden_db)},
          {"sinr_fixed_db", exact(u.sinr_fixed_db)},
          {"sinr_loss_db", exact(u.sinr_loss_db)},
          {"evm_golden_pct", exact(u.evm_golden_pct)},
          {"evm_fixed_pct", exact(u.evm_fixed_pct)},
          {"bits", u.bits},
          {"bit_errors_golden", u.bit_errors_golden},
          {"bit_errors_fixed", u.bit_errors_fixed},
          {"llrs", u.llrs},
          {"llr_sign_flips", u.llr_sign_flips}};
}

analysis::uplink_results uplink_from_json(const checked_json& j) {
  analysis::uplink_results u;
  const checked_json users = j["users"];
  for (std::size_t i = 0; i < users.size(); ++i) {
    const checked_json k = users[i];
    u.users.push_back({k["sinr_golden_db"].exact_double(), k["sinr_fixed_db"].exact_double(),
                       k["evm_golden_pct"].exact_double(), k["evm_fixed_pct"].exact_double()});
  }
  u.sinr_golden_db = j["sinr_golden_db"].exact_double();
  u.sinr_fixed_db = j["sinr_fixed_db"].exact_double();
  u.sinr_loss_db = j["sinr_loss_db"].exact_double();
  u.evm_golden_pct = j["evm_golden_pct"].exact_double();
  u.evm_fixed_pct = j["evm_fixed_pct"].exact_double();
  u.bits = j["bits"].count();
  u.bit_errors_golden = j["bit_errors_golden"].count();
  u.bit_errors_fixed = j["bit_errors_fixed"].count();
  u.llrs = j["llrs"].count();
  u.llr_sign_flips = j["llr_sign_flips"].count();
  return u;
}

json point_json(const analysis::sweep_point& p) {
  json out = {{"node", std::string(datapath::node_name(p.id))},
              {"bits", p.bits},
              {"format", {{"signed", p.fmt.is_signed}, {"word_bits", p.fmt.word_bits}, {"frac_bits", p.fmt.frac_bits}}},
              {"summary", summary_json(p.summary)},
              {"distribution", distribution_json(p.distribution)},
              {"node_sqnr_db", exact(p.node_sqnr_db)},
              {"node_overflow_rate", exact(p.node_overflow_rate)},
              {"max_overflow_rate", exact(p.max_overflow_rate)}};
  if (p.uplink) out["uplink"] = uplink_json(*p.uplink);
  return out;
}

analysis::sweep_point point_from_json(const checked_json& j) {
  analysis::sweep_point p;
  p.id = node_from(j["node"]);
  p.bits = j["bits"].int_value();
  const checked_json f = j["format"];
  p.fmt.is_signed = f["signed"].boolean();
  p.fmt.word_bits = f["word_bits"].int_value();
  p.fmt.frac_bits = f["frac_bits"].int_value();
  p.summary = summary_from_json(j["summary"]);
  p.distribution = distribution_from_json(j["distribution"]);
  p.node_sqnr_db = j["node_sqnr_db"].exact_double();
  p.node_overflow_rate = j["node_overflow_rate"].exact_double();
  p.max_overflow_rate = j["max_overflow_rate"].exact_double();
  if (const auto u = j.find("uplink")) p.uplink = uplink_from_json(*u);
  return p;
}

json key_point_json(const analysis::key_sweep_point& p) {
  json growth = json::array();
  for (const auto& [id, bits] : p.growth_int_bits) growth.push_back({std::string(datapath::node_name(id)), bits});
  return {{"value", p.value},
          {"summary", summary_json(p.summary)},
          {"interference_db", exact(p.interference_db)},
          {"max_overflow_rate", exact(p.max_overflow_rate)},
          {"growth_int_bits", growth}};
}

analysis::key_sweep_point key_point_from_json(const checked_json& j) {
  analysis::key_sweep_point p;
  p.value = j["value"].text();
  p.summary = summary_from_json(j["summary"]);
  p.interference_db = j["interference_db"].exact_double();
  p.max_overflow_rate = j["max_overflow_rate"].exact_double();
  const checked_json growth = j["growth_int_bits"];
  for (std::size_t i = 0; i < growth.size(); ++i) {
    const checked_json pair = growth[i];
    if (pair.size() != 2) pair.fail("expected [node, integer bits]");
    p.growth_int_bits.emplace_back(node_from(pair[0]), pair[1].int_value());
  }
  return p;
}

std::vector<std::string> texts_from(const checked_json& array) {
  std::vector<std::string> out;
  for (std::size_t i = 0; i < array.size(); ++i) out.push_back(array[i].text());
  return out;
}

}  // namespace

std::size_t part_record::count() const { return trials.size() + points.size() + key_points.size(); }

json origin_json(const part_origin& o) {
  json options = {{"trials", o.trials}};
  if (!o.nodes.empty()) {
    options["node"] = o.nodes;
    options["bits"] = {o.bits_lo, o.bits_hi};
    options["vary"] = o.vary;
  }
  if (!o.key.empty()) {
    options["key"] = o.key;
    options["values"] = o.values;
  }
  return {{"program", o.program},
          {"command", o.command},
          {"scenario", {{"source", o.scenario_source}, {"sha256", o.scenario_sha256}}},
          {"options", options}};
}

json to_json(const part_record& p) {
  json out = {{"kind", "part"}, {"schema", parts_schema}};
  out.update(origin_json(p.origin));
  out["scenario"]["text"] = p.origin.scenario_text;
  out["shard"] = {{"index", p.shard.index}, {"count", p.shard.count}};
  out["share"] = {{"of", p.origin.command == "run" ? "trials" : "points"},
                  {"total", p.total},
                  {"first", p.first},
                  {"count", p.count()}};
  if (p.origin.command == "run") {
    out["trials"] = json::array();
    for (const analysis::trial_summary& t : p.trials) out["trials"].push_back(trial_json(t, p.trial_nodes));
  } else {
    out["points"] = json::array();
    for (const analysis::sweep_point& s : p.points) out["points"].push_back(point_json(s));
    for (const analysis::key_sweep_point& s : p.key_points) out["points"].push_back(key_point_json(s));
  }
  return out;
}

part_record part_from_json(const checked_json& doc) {
  if (doc.value().is_object()) {
    const auto kind = doc.find("kind");
    if (!kind || !kind->value().is_string() || kind->text() != "part") {
      doc.fail(
          "not a partial results file (those that run --shard and sweep --shard write; kind \"part\"): merge "
          "reads only those");
    }
  }
  if (const long long schema = doc["schema"].integer(0, 1000000); schema != parts_schema)
    doc["schema"].fail(fmt::format("schema {} is not supported (this fxmimo reads schema {})", schema, parts_schema));
  part_record p;
  part_origin& o = p.origin;
  o.program = doc["program"].text();
  o.command = doc["command"].text();
  if (o.command != "run" && o.command != "sweep") doc["command"].fail("expected \"run\" or \"sweep\"");
  const checked_json scenario = doc["scenario"];
  o.scenario_source = scenario["source"].text();
  o.scenario_sha256 = scenario["sha256"].text();
  o.scenario_text = scenario["text"].text();
  const checked_json options = doc["options"];
  o.trials = options["trials"].count();
  if (o.trials == 0) options["trials"].fail("expected at least one trial");
  if (const auto nodes = options.find("node")) {
    o.nodes = texts_from(*nodes);
    const checked_json bits = options["bits"];
    if (bits.size() != 2) bits.fail("expected [lo, hi]");
    o.bits_lo = bits[0].int_value();
    o.bits_hi = bits[1].int_value();
    o.vary = options["vary"].text();
  }
  if (const auto key = options.find("key")) {
    o.key = key->text();
    o.values = texts_from(options["values"]);
  }
  if (o.command == "sweep" && o.nodes.empty() == o.key.empty())
    options.fail("a sweep part names either node, bits and vary, or key and values");
  if (o.command == "run" && (!o.nodes.empty() || !o.key.empty())) options.fail("a run part has trials only");
  if (!o.nodes.empty() && o.bits_lo > o.bits_hi) options["bits"].fail("expected lo <= hi");
  if (!o.key.empty() && o.values.empty()) options["values"].fail("expected at least one value");
  const checked_json shard = doc["shard"];
  p.shard.count = static_cast<std::size_t>(shard["count"].integer(1, 1000000000));
  p.shard.index = static_cast<std::size_t>(shard["index"].integer(1, static_cast<long long>(p.shard.count)));
  const checked_json share = doc["share"];
  p.total = share["total"].count();
  p.first = share["first"].count();
  const std::uint64_t count = share["count"].count();
  const analysis::index_range expected = p.shard.share(p.total);
  if (p.first != expected.begin || count != expected.size()) {
    share.fail(fmt::format("first {} and count {}, but shard {}/{} of {} holds first {} and count {}", p.first, count,
                           p.shard.index, p.shard.count, p.total, expected.begin, expected.size()));
  }
  const checked_json units = doc[o.command == "run" ? "trials" : "points"];
  if (units.size() != count) units.fail(fmt::format("{} entries; share.count says {}", units.size(), count));
  for (std::size_t i = 0; i < count; ++i) {
    if (o.command == "run") {
      std::vector<datapath::node_id> nodes;
      p.trials.push_back(trial_from_json(units[i], nodes));
      if (p.trials.back().trial_index != p.first + i)
        units[i]["trial"].fail(fmt::format("expected trial {} here", p.first + i));
      if (i == 0) p.trial_nodes = nodes;
      if (nodes != p.trial_nodes) units[i]["nodes"].fail("not the nodes of the part's first trial");
    } else if (!o.nodes.empty()) {
      p.points.push_back(point_from_json(units[i]));
    } else {
      p.key_points.push_back(key_point_from_json(units[i]));
    }
  }
  return p;
}

part_record read_part_file(const std::filesystem::path& path) {
  const json doc = io::read_json_file(path);
  return part_from_json(checked_json(doc, path.string()));
}

}  // namespace fxmimo::report
