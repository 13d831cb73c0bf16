// The results records: from the analyses, to JSON and back through the checked reader.
#include "fxmimo/report/records.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "fxmimo/datapath/node_table.hpp"
#include "fxmimo/datapath/plan.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;
using io::checked_json;
using nlohmann::json;

namespace {

metric finite_or_none(double v) { return std::isfinite(v) ? metric(v) : std::nullopt; }

json metric_json(const metric& m) { return m ? json(*m) : json(nullptr); }

// --- pieces several kinds share

/// What every results file starts with: its kind, the schema and the scenario (with its source
/// file only in run files).
json file_head(report_kind kind, const scenario_ref& s, bool with_source) {
  json out;
  out["kind"] = std::string(to_string(kind));
  out["schema"] = results_schema;
  out["scenario"] = {{"name", s.name}};
  if (with_source) out["scenario"]["source"] = s.source;
  return out;
}

scenario_ref scenario_from(const checked_json& doc) {
  const checked_json s = doc["scenario"];
  if (s.value().is_string()) return {s.text(), ""};
  scenario_ref out{s["name"].text(), ""};
  if (const auto source = s.find("source")) out.source = source->text();
  return out;
}

std::vector<std::uint64_t> counts_from(const checked_json& array) {
  std::vector<std::uint64_t> out;
  const std::size_t n = array.size();
  out.reserve(n);
  for (std::size_t i = 0; i < n; ++i) out.push_back(array[i].count());
  return out;
}

fp::rounding_mode rounding_from(const checked_json& v) {
  const std::string name = v.text();
  const auto mode = fp::parse_rounding_mode(name);
  if (!mode) v.fail(fmt::format("unknown rounding '{}'", name));
  return *mode;
}

fp::overflow_mode overflow_from(const checked_json& v) {
  const std::string name = v.text();
  const auto mode = fp::parse_overflow_mode(name);
  if (!mode) v.fail(fmt::format("unknown overflow '{}'", name));
  return *mode;
}

/// An optional figure that may be null: absent gives nullopt, null gives metric{}.
std::optional<metric> optional_metric(const checked_json& obj, std::string_view key) {
  if (const auto v = obj.find(key)) return v->number_or_null();
  return std::nullopt;
}

distribution_record distribution_of(const analysis::run_distribution& d) {
  return {finite_or_none(d.sinr_loss_p5_db),
          finite_or_none(d.sinr_loss_p50_db),
          finite_or_none(d.sinr_loss_p95_db),
          d.sinr_loss_percentiles_db,
          finite_or_none(d.evm_impl_p95_pct),
          finite_or_none(d.evm_impl_max_pct),
          d.gram_condition_p50,
          d.gram_condition_p95,
          d.gram_condition_max};
}

json distribution_json(const distribution_record& d) {
  json out = {
      {"sinr_loss_p5_db", metric_json(d.sinr_loss_p5_db)},   {"sinr_loss_p50_db", metric_json(d.sinr_loss_p50_db)},
      {"sinr_loss_p95_db", metric_json(d.sinr_loss_p95_db)}, {"sinr_loss_percentiles_db", json::array()},
      {"evm_impl_p95_pct", metric_json(d.evm_impl_p95_pct)}, {"evm_impl_max_pct", metric_json(d.evm_impl_max_pct)}};
  for (double v : d.sinr_loss_percentiles_db) out["sinr_loss_percentiles_db"].push_back(metric_json(finite_or_none(v)));
  if (d.gram_condition_p50) {
    out["gram_condition_p50"] = metric_json(finite_or_none(*d.gram_condition_p50));
    out["gram_condition_p95"] = metric_json(finite_or_none(d.gram_condition_p95.value_or(0)));
    out["gram_condition_max"] = metric_json(finite_or_none(d.gram_condition_max.value_or(0)));
  }
  return out;
}

distribution_record distribution_from(const checked_json& d) {
  distribution_record out;
  out.sinr_loss_p5_db = d["sinr_loss_p5_db"].number_or_null();
  out.sinr_loss_p50_db = d["sinr_loss_p50_db"].number_or_null();
  out.sinr_loss_p95_db = d["sinr_loss_p95_db"].number_or_null();
  const checked_json q = d["sinr_loss_percentiles_db"];
  if (q.size() != 0 && q.size() != 101) q.fail(fmt::format("{} values; expected 101 (0, 1, ..., 100 %)", q.size()));
  for (std::size_t i = 0; i < q.size(); ++i) {
    const metric v = q[i].number_or_null();
    out.sinr_loss_percentiles_db.push_back(v ? *v : std::numeric_limits<double>::infinity());
  }
  out.evm_impl_p95_pct = d["evm_impl_p95_pct"].number_or_null();
  out.evm_impl_max_pct = d["evm_impl_max_pct"].number_or_null();
  if (const auto v = d.find("gram_condition_p50")) {
    out.gram_condition_p50 = v->number_or_null();
    out.gram_condition_p95 = d["gram_condition_p95"].number_or_null();
    out.gram_condition_max = d["gram_condition_max"].number_or_null();
  }
  return out;
}

/// The first of `keys` that is present (newest name first).
std::optional<metric> optional_metric(const checked_json& obj, std::initializer_list<std::string_view> keys) {
  for (const std::string_view key : keys) {
    if (auto m = optional_metric(obj, key)) return m;
  }
  return std::nullopt;
}

/// Node records in datapath order, names this program does not know last in the order given.
template <class Record>
void sort_by_datapath_order(std::vector<Record>& records) {
  std::stable_sort(records.begin(), records.end(),
                   [](const Record& a, const Record& b) { return node_rank(a.node) < node_rank(b.node); });
}

}  // namespace

std::string_view to_string(report_kind kind) {
  switch (kind) {
    case report_kind::run: return "run";
    case report_kind::range: return "range";
    case report_kind::sweep: return "sweep";
    case report_kind::tune: return "tune";
    case report_kind::key_sweep: return "key-sweep";
  }
  return "?";
}

std::size_t node_rank(std::string_view name) {
  const auto id = datapath::parse_node_name(name);
  return id ? datapath::index_of(*id) : datapath::node_count();
}

report_kind kind_of(const results_record& r) { return static_cast<report_kind>(r.index()); }
static_assert(std::variant_size_v<results_record> == 5 &&
                  std::is_same_v<std::variant_alternative_t<0, results_record>, run_record> &&
                  std::is_same_v<std::variant_alternative_t<3, results_record>, tune_record>,
              "results_record's alternatives follow report_kind's order");

// --- run --------------------------------------------------------------------------------------

namespace {

/// The run's and a sweep point's uplink.
uplink_record uplink_record_of(const analysis::uplink_results& u) {
  uplink_record ul;
  for (const analysis::user_result& k : u.users) {
    ul.users.push_back({finite_or_none(k.sinr_golden_db), finite_or_none(k.sinr_fixed_db),
                        finite_or_none(k.sinr_loss_db()), finite_or_none(k.evm_golden_pct),
                        finite_or_none(k.evm_fixed_pct)});
  }
  ul.sinr_golden_db = finite_or_none(u.sinr_golden_db);
  ul.sinr_fixed_db = finite_or_none(u.sinr_fixed_db);
  ul.sinr_loss_db = finite_or_none(u.sinr_loss_db);
  ul.evm_golden_pct = finite_or_none(u.evm_golden_pct);
  ul.evm_fixed_pct = finite_or_none(u.evm_fixed_pct);
  ul.bits = u.bits;
  ul.bit_errors_golden = u.bit_errors_golden;
  ul.bit_errors_fixed = u.bit_errors_fixed;
  ul.llr_sign_flips = u.llr_sign_flips;
  return ul;
}

}  // namespace

run_record make_record(const analysis::run_results& r) {
  run_record out;
  out.scenario = {r.scenario_name, r.scenario_source};
  out.trials = r.trial_indices.size();
  out.trial_indices = r.trial_indices;
  for (const analysis::node_result& n : r.nodes) {
    run_node_record rec;
    rec.node = std::string(datapath::node_name(n.id));
    rec.fmt = n.spec.fmt;
    rec.rounding = n.spec.rounding;
    rec.overflow = n.spec.overflow;
    rec.is_default = n.is_default;
    rec.sqnr_db = finite_or_none(n.sqnr_db());
    rec.max_err_lsb = n.max_err_lsb;
    rec.values = n.num_values;
    rec.overflows = n.counters.overflowed;
    rec.overflow_rate = finite_or_none(n.overflow_rate());
    rec.max_abs_golden = n.max_abs_golden;
    rec.requantized = n.counters.requantized;
    rec.inexact = n.counters.inexact;
    rec.max_overflow_excess_lsb = n.counters.max_excess_lsb;
    rec.overflow_rate_bound = finite_or_none(n.overflow_rate_bound());
    out.nodes.push_back(std::move(rec));
  }
  for (const analysis::user_result& u : r.users) {
    out.users.push_back({finite_or_none(u.sinr_golden_db), finite_or_none(u.sinr_fixed_db),
                         finite_or_none(u.sinr_loss_db()), finite_or_none(u.evm_golden_pct),
                         finite_or_none(u.evm_fixed_pct)});
  }
  const analysis::run_summary& s = r.summary;
  out.summary = {finite_or_none(s.sinr_golden_db),
                 finite_or_none(s.sinr_fixed_db),
                 finite_or_none(s.sinr_loss_db),
                 finite_or_none(s.evm_golden_pct),
                 finite_or_none(s.evm_fixed_pct),
                 finite_or_none(s.evm_impl_pct),
                 s.evm_limit_pct,
                 finite_or_none(s.tx_power_error_db),
                 finite_or_none(s.max_abs_tx_power_error_db),
                 finite_or_none(s.rms_tx_power_error_db)};
  out.distribution = distribution_of(r.distribution);
  if (r.uplink) out.uplink = uplink_record_of(*r.uplink);
  out.warnings = r.warnings;
  return out;
}

namespace {

json user_json(const run_user_record& u) {
  return {{"sinr_golden_db", metric_json(u.sinr_golden_db)},
          {"sinr_fixed_db", metric_json(u.sinr_fixed_db)},
          {"sinr_loss_db", metric_json(u.sinr_loss_db)},
          {"evm_golden_pct", metric_json(u.evm_golden_pct)},
          {"evm_fixed_pct", metric_json(u.evm_fixed_pct)}};
}

run_user_record user_from_json(const checked_json& u) {
  return {u["sinr_golden_db"].number_or_null(), u["sinr_fixed_db"].number_or_null(), u["sinr_loss_db"].number_or_null(),
          u["evm_golden_pct"].number_or_null(), u["evm_fixed_pct"].number_or_null()};
}

json uplink_json(const uplink_record& u) {
  json users = json::array();
  for (const run_user_record& k : u.users) users.push_back(user_json(k));
  return {{"users", users},
          {"sinr_golden_db", metric_json(u.sinr_golden_db)},
          {"sinr_fixed_db", metric_json(u.sinr_fixed_db)},
          {"sinr_loss_db", metric_json(u.sinr_loss_db)},
          {"evm_golden_pct", metric_json(u.evm_golden_pct)},
          {"evm_fixed_pct", metric_json(u.evm_fixed_pct)},
          {"bits", u.bits},
          {"bit_errors_golden", u.bit_errors_golden},
          {"bit_errors_fixed", u.bit_errors_fixed},
          {"llr_sign_flips", u.llr_sign_flips}};
}

uplink_record uplink_from_json(const checked_json& j) {
  uplink_record u;
  const checked_json users = j["users"];
  for (std::size_t i = 0; i < users.size(); ++i) u.users.push_back(user_from_json(users[i]));
  u.sinr_golden_db = j["sinr_golden_db"].number_or_null();
  u.sinr_fixed_db = j["sinr_fixed_db"].number_or_null();
  u.sinr_loss_db = j["sinr_loss_db"].number_or_null();
  u.evm_golden_pct = j["evm_golden_pct"].number_or_null();
  u.evm_fixed_pct = j["evm_fixed_pct"].number_or_null();
  u.bits = j["bits"].count();
  u.bit_errors_golden = j["bit_errors_golden"].count();
  u.bit_errors_fixed = j["bit_errors_fixed"].count();
  u.llr_sign_flips = j["llr_sign_flips"].count();
  return u;
}

}  // namespace

json to_json(const run_record& r) {
  json out = file_head(report_kind::run, r.scenario, true);
  out["trials"] = r.trials;
  out["trial_indices"] = r.trial_indices;
  out["nodes"] = json::object();
  for (const run_node_record& n : r.nodes) {
    json j = {{"format", fp::to_q_string(n.fmt)},
              {"word_bits", n.fmt.word_bits},
              {"frac_bits", n.fmt.frac_bits},
              {"signed", n.fmt.is_signed},
              {"rounding", std::string(fp::to_string(n.rounding))},
              {"overflow", std::string(fp::to_string(n.overflow))},
              {"default", n.is_default},
              {"sqnr_db", metric_json(n.sqnr_db)},
              {"exact", !n.sqnr_db.has_value()},
              {"max_err_lsb", n.max_err_lsb},
              {"values", n.values},
              {"overflows", n.overflows},
              {"overflow_rate", metric_json(n.overflow_rate)}};
    if (n.max_abs_golden) j["max_abs_golden"] = *n.max_abs_golden;
    if (n.requantized) j["requantized"] = *n.requantized;
    if (n.inexact) j["inexact"] = *n.inexact;
    if (n.max_overflow_excess_lsb) j["max_overflow_excess_lsb"] = *n.max_overflow_excess_lsb;
    if (n.overflow_rate_bound) j["overflow_rate_bound_95"] = metric_json(*n.overflow_rate_bound);
    out["nodes"][n.node] = std::move(j);
  }
  out["users"] = json::array();
  for (const run_user_record& u : r.users) out["users"].push_back(user_json(u));
  const run_summary_record& s = r.summary;
  out["summary"] = {
      {"sinr_golden_db", metric_json(s.sinr_golden_db)}, {"sinr_fixed_db", metric_json(s.sinr_fixed_db)},
      {"sinr_loss_db", metric_json(s.sinr_loss_db)},     {"evm_golden_pct", metric_json(s.evm_golden_pct)},
      {"evm_fixed_pct", metric_json(s.evm_fixed_pct)},   {"evm_impl_pct", metric_json(s.evm_impl_pct)},
      {"evm_limit_pct", metric_json(s.evm_limit_pct)}};
  if (s.tx_power_error_db) out["summary"]["tx_power_error_db"] = metric_json(*s.tx_power_error_db);
  if (s.max_abs_tx_power_error_db)
    out["summary"]["max_abs_tx_power_error_db"] = metric_json(*s.max_abs_tx_power_error_db);
  if (s.rms_tx_power_error_db) out["summary"]["rms_tx_power_error_db"] = metric_json(*s.rms_tx_power_error_db);
  if (r.distribution) out["distribution"] = distribution_json(*r.distribution);
  if (r.uplink) out["uplink"] = uplink_json(*r.uplink);
  out["warnings"] = r.warnings;
  return out;
}

run_record run_from_json(const checked_json& doc) {
  run_record r;
  r.scenario = scenario_from(doc);
  r.trials = doc["trials"].count();
  r.trial_indices = counts_from(doc["trial_indices"]);
  const checked_json nodes = doc["nodes"];
  for (const std::string& name : nodes.keys()) {
    const checked_json n = nodes[name];
    run_node_record rec;
    rec.node = name;
    rec.fmt = n.format_fields();
    rec.rounding = rounding_from(n["rounding"]);
    rec.overflow = overflow_from(n["overflow"]);
    rec.is_default = n["default"].boolean();
    rec.sqnr_db = n["sqnr_db"].number_or_null();
    rec.max_err_lsb = n["max_err_lsb"].number();
    rec.values = n["values"].count();
    rec.overflows = n["overflows"].count();
    rec.overflow_rate = n["overflow_rate"].number_or_null();
    if (const auto v = n.find("max_abs_golden")) rec.max_abs_golden = v->number();
    if (const auto v = n.find("requantized")) rec.requantized = v->count();
    if (const auto v = n.find("inexact")) rec.inexact = v->count();
    if (const auto v = n.find("max_overflow_excess_lsb")) rec.max_overflow_excess_lsb = v->number();
    if (const auto v = n.find("overflow_rate_bound_95")) rec.overflow_rate_bound = v->number_or_null();
    r.nodes.push_back(std::move(rec));
  }
  sort_by_datapath_order(r.nodes);
  const checked_json users = doc["users"];
  for (std::size_t i = 0; i < users.size(); ++i) r.users.push_back(user_from_json(users[i]));
  const checked_json s = doc["summary"];
  r.summary.sinr_golden_db = s["sinr_golden_db"].number_or_null();
  r.summary.sinr_fixed_db = s["sinr_fixed_db"].number_or_null();
  r.summary.sinr_loss_db = s["sinr_loss_db"].number_or_null();
  r.summary.evm_golden_pct = s["evm_golden_pct"].number_or_null();
  r.summary.evm_fixed_pct = s["evm_fixed_pct"].number_or_null();
  r.summary.evm_impl_pct = s["evm_impl_pct"].number_or_null();
  r.summary.evm_limit_pct = s["evm_limit_pct"].number_or_null();
  r.summary.tx_power_error_db = optional_metric(s, "tx_power_error_db");
  r.summary.max_abs_tx_power_error_db = optional_metric(s, "max_abs_tx_power_error_db");
  r.summary.rms_tx_power_error_db = optional_metric(s, "rms_tx_power_error_db");
  if (const auto d = doc.find("distribution")) r.distribution = distribution_from(*d);
  if (const auto u = doc.find("uplink")) r.uplink = uplink_from_json(*u);
  const checked_json warnings = doc["warnings"];
  for (std::size_t i = 0; i < warnings.size(); ++i) r.warnings.push_back(warnings[i].text());
  return r;
}

// --- range ------------------------------------------------------------------------------------

range_record make_record(const analysis::range_results& r) {
  range_record out;
  out.scenario = {r.scenario_name, ""};
  out.trials = r.num_trials;
  out.overflow_prob = r.overflow_prob;
  out.gram_condition_p50 = r.gram_condition_p50;
  out.gram_condition_p95 = r.gram_condition_p95;
  out.gram_condition_max = r.gram_condition_max;
  for (const analysis::node_range& n : r.nodes) {
    out.nodes.push_back({std::string(datapath::node_name(n.id)), n.num_values, n.max_abs, n.p99, n.p9999, n.p999999,
                         n.proposed_int_bits, n.proposal_basis, n.analytic_int_bits, n.analytic_rule, n.hist_min_exp,
                         n.log2_histogram, std::nullopt});
    if (n.tail) {
      const analysis::tail_fit& t = *n.tail;
      out.nodes.back().tail =
          tail_record{t.num_exceedances, t.threshold, t.shape, t.scale, t.quantile, t.upper_bound, t.confidence};
    }
  }
  return out;
}

json to_json(const range_record& r) {
  json out = file_head(report_kind::range, r.scenario, false);
  out["trials"] = r.trials;
  out["overflow_prob"] = r.overflow_prob;
  if (r.gram_condition_p50) {
    out["gram_condition"] = {{"p50", metric_json(finite_or_none(*r.gram_condition_p50))},
                             {"p95", metric_json(finite_or_none(r.gram_condition_p95.value_or(0)))},
                             {"max", metric_json(finite_or_none(r.gram_condition_max.value_or(0)))}};
  }
  out["nodes"] = json::object();
  for (const range_node_record& n : r.nodes) {
    out["nodes"][n.node] = {
        {"values", n.values},
        {"max_abs", n.max_abs},
        {"p99", n.p99},
        {"p99_99", n.p99_99},
        {"p99_9999", n.p99_9999},
        {"proposed_int_bits", n.proposed_int_bits},
        {"proposal_basis", n.proposal_basis},
        {"analytic_int_bits", n.analytic_int_bits ? json(*n.analytic_int_bits) : json(nullptr)},
        {"analytic_rule", n.analytic_rule},
        {"hist_min_exp", n.hist_min_exp},
        {"log2_histogram", n.log2_histogram},
    };
    if (n.tail) {
      out["nodes"][n.node]["tail"] = {{"exceedances", n.tail->exceedances},
                                      {"threshold", n.tail->threshold},
                                      {"shape", n.tail->shape},
                                      {"scale", n.tail->scale},
                                      {"quantile", n.tail->quantile},
                                      {"upper_bound", n.tail->upper_bound},
                                      {"confidence", n.tail->confidence}};
    }
  }
  return out;
}

range_record range_from_json(const checked_json& doc) {
  range_record r;
  r.scenario = scenario_from(doc);
  r.trials = doc["trials"].count();
  r.overflow_prob = doc["overflow_prob"].number();
  if (const auto c = doc.find("gram_condition")) {
    r.gram_condition_p50 = (*c)["p50"].number_or_null();
    r.gram_condition_p95 = (*c)["p95"].number_or_null();
    r.gram_condition_max = (*c)["max"].number_or_null();
  }
  const checked_json nodes = doc["nodes"];
  for (const std::string& name : nodes.keys()) {
    const checked_json n = nodes[name];
    range_node_record rec;
    rec.node = name;
    rec.values = n["values"].count();
    rec.max_abs = n["max_abs"].number();
    rec.p99 = n["p99"].number();
    rec.p99_99 = n["p99_99"].number();
    rec.p99_9999 = n["p99_9999"].number();
    rec.proposed_int_bits = n["proposed_int_bits"].int_value();
    rec.proposal_basis = n["proposal_basis"].text();
    if (const auto a = n["analytic_int_bits"]; !a.is_null()) rec.analytic_int_bits = a.int_value();
    rec.analytic_rule = n["analytic_rule"].text();
    rec.hist_min_exp = n["hist_min_exp"].int_value();
    rec.log2_histogram = counts_from(n["log2_histogram"]);
    if (const auto t = n.find("tail")) {
      rec.tail = tail_record{(*t)["exceedances"].count(), (*t)["threshold"].number(), (*t)["shape"].number(),
                             (*t)["scale"].number(),      (*t)["quantile"].number(),  (*t)["upper_bound"].number(),
                             (*t)["confidence"].number()};
    }
    r.nodes.push_back(std::move(rec));
  }
  sort_by_datapath_order(r.nodes);
  return r;
}

// --- sweep ------------------------------------------------------------------------------------

sweep_record make_record(const analysis::sweep_results& r) {
  sweep_record out;
  out.scenario = {r.scenario_name, ""};
  out.trials = r.num_trials;
  out.vary = std::string(analysis::to_string(r.axis));
  for (const analysis::sweep_point& p : r.points) {
    sweep_point_record rec;
    rec.node = std::string(datapath::node_name(p.id));
    rec.bits = p.bits;
    rec.fmt = p.fmt;
    rec.sinr_loss_db = finite_or_none(p.summary.sinr_loss_db);
    rec.evm_fixed_pct = finite_or_none(p.summary.evm_fixed_pct);
    rec.evm_impl_pct = finite_or_none(p.summary.evm_impl_pct);
    rec.overflow_rate = finite_or_none(p.node_overflow_rate);
    rec.sqnr_db = finite_or_none(p.node_sqnr_db);
    rec.sinr_fixed_db = finite_or_none(p.summary.sinr_fixed_db);
    rec.max_overflow_rate = finite_or_none(p.max_overflow_rate);
    rec.sinr_loss_p95_db = finite_or_none(p.distribution.sinr_loss_p95_db);
    rec.evm_impl_p95_pct = finite_or_none(p.distribution.evm_impl_p95_pct);
    if (p.uplink) rec.uplink = uplink_record_of(*p.uplink);
    out.points.push_back(std::move(rec));
  }
  return out;
}

json to_json(const sweep_record& r) {
  json out = file_head(report_kind::sweep, r.scenario, false);
  out["trials"] = r.trials;
  out["vary"] = r.vary;
  out["points"] = json::array();
  for (const sweep_point_record& p : r.points) {
    json j = {{"node", p.node},
              {"bits", p.bits},
              {"format", fp::to_q_string(p.fmt)},
              {"word_bits", p.fmt.word_bits},
              {"frac_bits", p.fmt.frac_bits},
              {"int_bits", p.fmt.int_bits()},
              {"sinr_loss_db", metric_json(p.sinr_loss_db)},
              {"evm_fixed_pct", metric_json(p.evm_fixed_pct)},
              {"evm_impl_pct", metric_json(p.evm_impl_pct)},
              {"sqnr_db", metric_json(p.sqnr_db)},
              {"overflow_rate", metric_json(p.overflow_rate)}};
    if (p.sinr_fixed_db) j["sinr_fixed_db"] = metric_json(*p.sinr_fixed_db);
    if (p.max_overflow_rate) j["max_overflow_rate"] = metric_json(*p.max_overflow_rate);
    if (p.sinr_loss_p95_db) j["sinr_loss_p95_db"] = metric_json(*p.sinr_loss_p95_db);
    if (p.evm_impl_p95_pct) j["evm_impl_p95_pct"] = metric_json(*p.evm_impl_p95_pct);
    if (p.uplink) j["uplink"] = uplink_json(*p.uplink);
    out["points"].push_back(std::move(j));
  }
  return out;
}

sweep_record sweep_from_json(const checked_json& doc) {
  sweep_record r;
  r.scenario = scenario_from(doc);
  r.trials = doc["trials"].count();
  const checked_json vary = doc["vary"];
  r.vary = vary.text();
  if (r.vary != "frac" && r.vary != "word" && r.vary != "int") vary.fail("expected \"frac\", \"word\" or \"int\"");
  const checked_json points = doc["points"];
  for (std::size_t i = 0; i < points.size(); ++i) {
    const checked_json p = points[i];
    sweep_point_record rec;
    rec.node = p["node"].text();
    rec.bits = p["bits"].int_value();
    rec.fmt = p.format_fields();
    rec.sinr_loss_db = p["sinr_loss_db"].number_or_null();
    rec.evm_fixed_pct = p["evm_fixed_pct"].number_or_null();
    rec.evm_impl_pct = p["evm_impl_pct"].number_or_null();
    rec.overflow_rate = p["overflow_rate"].number_or_null();
    rec.sqnr_db = p["sqnr_db"].number_or_null();
    rec.sinr_fixed_db = optional_metric(p, "sinr_fixed_db");
    rec.max_overflow_rate = optional_metric(p, "max_overflow_rate");
    if (const auto v = p.find("sinr_loss_p95_db")) rec.sinr_loss_p95_db = v->number_or_null();
    if (const auto v = p.find("evm_impl_p95_pct")) rec.evm_impl_p95_pct = v->number_or_null();
    if (const auto u = p.find("uplink")) rec.uplink = uplink_from_json(*u);
    r.points.push_back(std::move(rec));
  }
  return r;
}

// --- key sweep --------------------------------------------------------------------------------

key_sweep_record make_record(const analysis::key_sweep_results& r) {
  key_sweep_record out;
  out.scenario = {r.scenario_name, ""};
  out.trials = r.num_trials;
  out.key = r.key;
  for (const analysis::key_sweep_point& p : r.points) {
    key_sweep_point_record rec{p.value,
                               finite_or_none(p.summary.sinr_golden_db),
                               finite_or_none(p.summary.sinr_fixed_db),
                               finite_or_none(p.summary.sinr_loss_db),
                               finite_or_none(p.summary.evm_impl_pct),
                               finite_or_none(p.interference_db),
                               finite_or_none(p.max_overflow_rate),
                               {}};
    for (const auto& [id, bits] : p.growth_int_bits) rec.growth_int_bits.emplace_back(datapath::node_name(id), bits);
    out.points.push_back(std::move(rec));
  }
  return out;
}

json to_json(const key_sweep_record& r) {
  json out = file_head(report_kind::key_sweep, r.scenario, false);
  out["trials"] = r.trials;
  out["key"] = r.key;
  out["points"] = json::array();
  for (const key_sweep_point_record& p : r.points) {
    json growth = json::object();
    for (const auto& [node, bits] : p.growth_int_bits) growth[node] = bits;
    out["points"].push_back({{"value", p.value},
                             {"sinr_golden_db", metric_json(p.sinr_golden_db)},
                             {"sinr_fixed_db", metric_json(p.sinr_fixed_db)},
                             {"sinr_loss_db", metric_json(p.sinr_loss_db)},
                             {"evm_impl_pct", metric_json(p.evm_impl_pct)},
                             {"interference_db", metric_json(p.interference_db)},
                             {"max_overflow_rate", metric_json(p.max_overflow_rate)},
                             {"growth_int_bits", growth}});
  }
  return out;
}

key_sweep_record key_sweep_from_json(const checked_json& doc) {
  key_sweep_record r;
  r.scenario = scenario_from(doc);
  r.trials = doc["trials"].count();
  r.key = doc["key"].text();
  const checked_json points = doc["points"];
  for (std::size_t i = 0; i < points.size(); ++i) {
    const checked_json p = points[i];
    key_sweep_point_record rec{p["value"].text(),
                               p["sinr_golden_db"].number_or_null(),
                               p["sinr_fixed_db"].number_or_null(),
                               p["sinr_loss_db"].number_or_null(),
                               p["evm_impl_pct"].number_or_null(),
                               p["interference_db"].number_or_null(),
                               p["max_overflow_rate"].number_or_null(),
                               {}};
    const checked_json growth = p["growth_int_bits"];
    for (const std::string& node : growth.keys()) rec.growth_int_bits.emplace_back(node, growth[node].int_value());
    std::stable_sort(rec.growth_int_bits.begin(), rec.growth_int_bits.end(),
                     [](const auto& a, const auto& b) { return node_rank(a.first) < node_rank(b.first); });
    r.points.push_back(std::move(rec));
  }
  return r;
}

// --- tune -------------------------------------------------------------------------------------

namespace {

/// `uplink`: the tune had an uplink limit, so its figures are written.
tune_figures_record figures_of(const analysis::tune_figures& f, bool uplink) {
  tune_figures_record out{finite_or_none(f.sinr_loss_db),
                          finite_or_none(f.evm_pct),
                          finite_or_none(f.max_overflow_rate),
                          finite_or_none(f.rms_tx_power_error_db),
                          {},
                          {}};
  if (uplink) {
    out.uplink_sinr_loss_db = finite_or_none(f.uplink_sinr_loss_db);
    out.uplink_ber_ratio = finite_or_none(f.uplink_ber_ratio);
  }
  return out;
}

json figures_json(const tune_figures_record& f) {
  json out = {{"sinr_loss_db", metric_json(f.sinr_loss_db)},
              {"evm_impl_pct", metric_json(f.evm_impl_pct)},
              {"max_overflow_rate", metric_json(f.max_overflow_rate)}};
  if (f.rms_tx_power_error_db) out["rms_tx_power_error_db"] = metric_json(*f.rms_tx_power_error_db);
  if (f.uplink_sinr_loss_db) out["uplink_sinr_loss_db"] = metric_json(*f.uplink_sinr_loss_db);
  if (f.uplink_ber_ratio) out["uplink_ber_ratio"] = metric_json(*f.uplink_ber_ratio);
  return out;
}

tune_figures_record figures_from(const checked_json& obj) {
  tune_figures_record out{obj["sinr_loss_db"].number_or_null(),
                          obj["evm_impl_pct"].number_or_null(),
                          obj["max_overflow_rate"].number_or_null(),
                          optional_metric(obj, {"rms_tx_power_error_db", "abs_tx_power_error_db"}),
                          {},
                          {}};
  out.uplink_sinr_loss_db = optional_metric(obj, {"uplink_sinr_loss_db"});
  out.uplink_ber_ratio = optional_metric(obj, {"uplink_ber_ratio"});
  return out;
}

metric margin(double limit, const metric& value) { return value ? finite_or_none(limit - *value) : std::nullopt; }

}  // namespace

tune_record make_record(const golden::scenario& scen, const analysis::tune_results& r) {
  tune_record out;
  out.scenario = {r.scenario_name, ""};
  out.cost_model = std::string(analysis::to_string(r.model));
  out.cost = r.cost;
  out.max_sinr_loss_db = r.limits.max_sinr_loss_db;
  out.max_evm_pct = r.limits.max_evm_pct;
  out.max_overflow_rate = r.limits.max_overflow_rate;
  out.max_rms_tx_power_error_db = r.limits.max_rms_tx_power_error_db;
  out.max_uplink_sinr_loss_db = r.limits.max_uplink_sinr_loss_db;
  out.max_uplink_ber_ratio = r.limits.max_uplink_ber_ratio;
  const bool uplink = out.max_uplink_sinr_loss_db || out.max_uplink_ber_ratio;
  const datapath::datapath_plan plan = datapath::stages_for(scen);
  for (datapath::node_id id : r.nodes) {
    out.nodes.push_back({std::string(datapath::node_name(id)), r.config[id].spec.fmt, r.config[id].spec.rounding,
                         r.config[id].spec.overflow, analysis::node_cost(plan, r.config, id, r.model), std::nullopt});
    for (const analysis::node_result& n : r.verify_nodes) {
      if (n.id == id) out.nodes.back().overflow_rate_bound = finite_or_none(n.overflow_rate_bound());
    }
  }
  out.search = figures_of(r.search, uplink);
  out.search_trials = r.search_trials.size();
  out.evaluations = static_cast<std::uint64_t>(r.evaluations);
  out.verification = figures_of(r.verification, uplink);
  out.verification_trials = r.verify_trials.size();
  out.verification_trial_indices = r.verify_trials;
  out.range_trials = r.range_trials;
  out.sinr_loss_percentile = r.limits.sinr_loss_percentile;
  if (!r.verify_nodes.empty()) {
    out.proven_overflow_bound = finite_or_none(r.proven_overflow_bound);
    out.weakest_node = std::string(datapath::node_name(r.weakest_node));
    out.verification_distribution = distribution_of(r.verify_distribution);
  }
  if (r.corners.size() > 1) {
    for (const analysis::corner_outcome& c : r.corners) {
      out.corners.push_back({c.name, figures_of(c.verification, uplink), finite_or_none(c.proven_overflow_bound),
                             c.verify_trials.size(), c.met});
    }
    out.int_bits_corner = r.int_bits_corner;
    out.frac_bits_corner = r.frac_bits_corner;
  }
  for (const analysis::variant_outcome& v : r.variants) out.variants.push_back({v.label, v.cost, v.met, v.chosen});
  out.meets_limits = r.met;
  out.note = r.note;
  return out;
}

json to_json(const tune_record& r) {
  json out = file_head(report_kind::tune, r.scenario, false);
  out["cost_model"] = r.cost_model;
  out["cost"] = r.cost;
  out["limits"] = {{"max_sinr_loss_db", r.max_sinr_loss_db},
                   {"max_evm_pct", r.max_evm_pct},
                   {"max_overflow_rate", r.max_overflow_rate}};
  if (r.max_rms_tx_power_error_db) out["limits"]["max_rms_tx_power_error_db"] = *r.max_rms_tx_power_error_db;
  if (r.max_uplink_sinr_loss_db) out["limits"]["max_uplink_sinr_loss_db"] = *r.max_uplink_sinr_loss_db;
  if (r.max_uplink_ber_ratio) out["limits"]["max_uplink_ber_ratio"] = *r.max_uplink_ber_ratio;
  out["nodes"] = json::object();
  for (const tune_node_record& n : r.nodes) {
    json j = {{"format", fp::to_q_string(n.fmt)},
              {"word_bits", n.fmt.word_bits},
              {"frac_bits", n.fmt.frac_bits},
              {"int_bits", n.fmt.int_bits()},
              {"cost", n.cost}};
    if (n.rounding) j["rounding"] = std::string(fp::to_string(*n.rounding));
    if (n.overflow) j["overflow"] = std::string(fp::to_string(*n.overflow));
    if (n.overflow_rate_bound) j["overflow_rate_bound_95"] = metric_json(*n.overflow_rate_bound);
    out["nodes"][n.node] = std::move(j);
  }
  if (r.search) {
    out["search"] = figures_json(*r.search);
    if (r.search_trials) out["search"]["trials"] = *r.search_trials;
    if (r.evaluations) out["search"]["evaluations"] = *r.evaluations;
  }
  out["verification"] = figures_json(r.verification);
  if (r.verification_trials) out["verification"]["trials"] = *r.verification_trials;
  if (r.verification_trial_indices) out["verification"]["trial_indices"] = *r.verification_trial_indices;
  if (r.proven_overflow_bound) {
    out["verification"]["proven_overflow_bound_95"] = metric_json(*r.proven_overflow_bound);
    out["verification"]["weakest_node"] = r.weakest_node;
  }
  if (r.verification_distribution)
    out["verification"]["distribution"] = distribution_json(*r.verification_distribution);
  if (r.range_trials) out["range_trials"] = *r.range_trials;
  if (!r.corners.empty()) {
    out["corners"] = json::array();
    for (const corner_record& c : r.corners) {
      json j = figures_json(c.verification);
      j["name"] = c.name;
      j["proven_overflow_bound_95"] = metric_json(c.proven_overflow_bound);
      j["trials"] = c.verification_trials;
      j["meets_limits"] = c.meets_limits;
      out["corners"].push_back(std::move(j));
    }
    for (std::size_t i = 0; i < r.nodes.size() && i < r.int_bits_corner.size(); ++i) {
      out["nodes"][r.nodes[i].node]["int_bits_corner"] = r.int_bits_corner[i];
      out["nodes"][r.nodes[i].node]["frac_bits_corner"] = r.frac_bits_corner[i];
    }
  }
  if (!r.variants.empty()) {
    out["unit_variants"] = json::array();
    for (const variant_record& v : r.variants) {
      out["unit_variants"].push_back(
          {{"units", v.label}, {"cost", v.cost}, {"meets_limits", v.meets_limits}, {"chosen", v.chosen}});
    }
  }
  if (r.sinr_loss_percentile) out["limits"]["sinr_loss_percentile"] = *r.sinr_loss_percentile;
  out["verification"]["meets_limits"] = r.meets_limits;
  out["margins"] = {{"sinr_loss_db", metric_json(margin(r.max_sinr_loss_db, r.verification.sinr_loss_db))},
                    {"evm_pct", metric_json(margin(r.max_evm_pct, r.verification.evm_impl_pct))},
                    {"overflow_rate", metric_json(margin(r.max_overflow_rate, r.verification.max_overflow_rate))}};
  if (r.max_rms_tx_power_error_db && r.verification.rms_tx_power_error_db) {
    out["margins"]["rms_tx_power_error_db"] =
        metric_json(margin(*r.max_rms_tx_power_error_db, *r.verification.rms_tx_power_error_db));
  }
  if (r.max_uplink_sinr_loss_db && r.verification.uplink_sinr_loss_db) {
    out["margins"]["uplink_sinr_loss_db"] =
        metric_json(margin(*r.max_uplink_sinr_loss_db, *r.verification.uplink_sinr_loss_db));
  }
  if (r.max_uplink_ber_ratio && r.verification.uplink_ber_ratio) {
    out["margins"]["uplink_ber_ratio"] = metric_json(margin(*r.max_uplink_ber_ratio, *r.verification.uplink_ber_ratio));
  }
  out["met"] = r.meets_limits;
  out["note"] = r.note;
  return out;
}

std::optional<bool> tune_record::search_meets_limits() const {
  if (!search) return std::nullopt;
  const auto within = [](const metric& value, const std::optional<double>& limit) {
    return !limit || (value && *value <= *limit);
  };
  return within(search->sinr_loss_db, max_sinr_loss_db) && within(search->evm_impl_pct, max_evm_pct) &&
         within(search->max_overflow_rate, max_overflow_rate) &&
         (!search->rms_tx_power_error_db || within(*search->rms_tx_power_error_db, max_rms_tx_power_error_db)) &&
         (!search->uplink_sinr_loss_db || within(*search->uplink_sinr_loss_db, max_uplink_sinr_loss_db)) &&
         (!search->uplink_ber_ratio || within(*search->uplink_ber_ratio, max_uplink_ber_ratio));
}

tune_record tune_from_json(const checked_json& doc) {
  tune_record r;
  r.scenario = scenario_from(doc);
  const checked_json model = doc["cost_model"];
  r.cost_model = model.text();
  if (r.cost_model != "bits" && r.cost_model != "area") model.fail("expected \"bits\" or \"area\"");
  r.cost = doc["cost"].number();
  const checked_json limits = doc["limits"];
  r.max_sinr_loss_db = limits["max_sinr_loss_db"].number();
  r.max_evm_pct = limits["max_evm_pct"].number();
  r.max_overflow_rate = limits["max_overflow_rate"].number();
  for (const char* key : {"max_rms_tx_power_error_db", "max_tx_power_error_db"}) {
    if (const auto v = limits.find(key); v && !r.max_rms_tx_power_error_db) r.max_rms_tx_power_error_db = v->number();
  }
  if (const auto v = limits.find("max_uplink_sinr_loss_db")) r.max_uplink_sinr_loss_db = v->number();
  if (const auto v = limits.find("max_uplink_ber_ratio")) r.max_uplink_ber_ratio = v->number();
  const checked_json nodes = doc["nodes"];
  for (const std::string& name : nodes.keys()) {
    const checked_json n = nodes[name];
    tune_node_record rec;
    rec.node = name;
    rec.fmt = n.format_fields();
    if (const auto m = n.find("int_bits"); m && m->int_value() != rec.fmt.int_bits()) {
      m->fail(fmt::format("{} disagrees with the format {}", m->int_value(), fp::to_q_string(rec.fmt)));
    }
    if (const auto v = n.find("rounding")) rec.rounding = rounding_from(*v);
    if (const auto v = n.find("overflow")) rec.overflow = overflow_from(*v);
    rec.cost = n["cost"].number();
    if (const auto v = n.find("overflow_rate_bound_95")) rec.overflow_rate_bound = v->number_or_null();
    r.nodes.push_back(std::move(rec));
  }
  sort_by_datapath_order(r.nodes);
  if (const auto v = limits.find("sinr_loss_percentile")) r.sinr_loss_percentile = v->number();
  if (const auto v = doc.find("range_trials")) r.range_trials = v->count();
  if (const auto search = doc.find("search")) {
    r.search = figures_from(*search);
    if (const auto v = search->find("trials")) r.search_trials = v->count();
    if (const auto v = search->find("evaluations")) r.evaluations = v->count();
  }
  const checked_json ver = doc["verification"];
  r.verification = figures_from(ver);
  if (const auto v = ver.find("trials")) r.verification_trials = v->count();
  if (const auto v = ver.find("trial_indices")) r.verification_trial_indices = counts_from(*v);
  if (const auto v = ver.find("proven_overflow_bound_95")) {
    r.proven_overflow_bound = v->number_or_null();
    r.weakest_node = ver["weakest_node"].text();
  }
  if (const auto v = ver.find("distribution")) r.verification_distribution = distribution_from(*v);
  if (const auto cs = doc.find("corners")) {
    for (std::size_t i = 0; i < cs->size(); ++i) {
      const checked_json c = (*cs)[i];
      r.corners.push_back({c["name"].text(), figures_from(c), c["proven_overflow_bound_95"].number_or_null(),
                           c["trials"].count(), c["meets_limits"].boolean()});
    }
    for (const tune_node_record& n : r.nodes) {
      const checked_json node = nodes[n.node];
      r.int_bits_corner.push_back(node["int_bits_corner"].text());
      r.frac_bits_corner.push_back(node["frac_bits_corner"].text());
    }
  }
  if (const auto vs = doc.find("unit_variants")) {
    for (std::size_t i = 0; i < vs->size(); ++i) {
      const checked_json v = (*vs)[i];
      r.variants.push_back({v["units"].text(), v["cost"].number(), v["meets_limits"].boolean(), v["chosen"].boolean()});
    }
  }
  r.meets_limits = ver["meets_limits"].boolean();
  if (const auto v = doc.find("note")) r.note = v->text();
  return r;
}

// --- any of them ------------------------------------------------------------------------------

json to_json(const results_record& r) {
  return std::visit([](const auto& rec) { return to_json(rec); }, r);
}

report_kind kind_of(const checked_json& doc) {
  const json& value = doc.value();
  const std::string& name = doc.file();
  if (!value.is_object()) throw io::json_error(name + ": expected a JSON object with a \"kind\"");
  const auto kind = doc.find("kind");
  if (!kind) {
    if (doc.find("summary") && doc.find("users")) return report_kind::run;
    throw io::json_error(name + ": no \"kind\" (expected run, range, sweep or tune)");
  }
  if (!kind->value().is_string()) throw io::json_error(name + ": \"kind\" is not a string");
  // Files without "schema" were written before results files were versioned: schema 1.
  if (const auto schema = doc.find("schema")) {
    if (!schema->value().is_number_integer()) throw io::json_error(name + ": \"schema\" is not an integer");
    if (schema->value().get<long long>() != results_schema) {
      throw io::json_error(
          fmt::format("{}: schema {} is not supported (this reader knows {}); use the fxmimo that "
                      "wrote it",
                      name, schema->value().get<long long>(), results_schema));
    }
  }
  const std::string k = kind->text();
  for (const report_kind candidate :
       {report_kind::run, report_kind::range, report_kind::sweep, report_kind::tune, report_kind::key_sweep}) {
    if (k == to_string(candidate)) return candidate;
  }
  std::string shown = k.substr(0, 60);
  for (char& ch : shown) {
    if (static_cast<unsigned char>(ch) < 0x20) ch = '?';
  }
  throw io::json_error(fmt::format("{}: unknown kind \"{}\" (expected run, range, sweep or tune)", name, shown));
}

results_record record_from_json(const checked_json& doc) {
  switch (kind_of(doc)) {
    case report_kind::run: return run_from_json(doc);
    case report_kind::range: return range_from_json(doc);
    case report_kind::sweep: return sweep_from_json(doc);
    case report_kind::tune: return tune_from_json(doc);
    case report_kind::key_sweep: return key_sweep_from_json(doc);
  }
  throw std::logic_error("record_from_json: unknown report_kind");
}

named_record read_results_file(const std::filesystem::path& path) {
  const json doc = io::read_json_file(path);
  return {path.string(), record_from_json(checked_json(doc, path.string()))};
}

}  // namespace fxmimo::report
