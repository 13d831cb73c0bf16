#include "fxmimo/analysis/sweep.hpp"

#include <fmt/core.h>

#include <cmath>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/trial_cache.hpp"

namespace fxmimo::analysis {

namespace fp = fxmimo::fixedpoint;

std::string_view to_string(sweep_axis axis) {
  switch (axis) {
    case sweep_axis::frac: return "frac";
    case sweep_axis::word: return "word";
    case sweep_axis::int_bits: return "int";
  }
  return "?";
}

std::optional<sweep_axis> parse_sweep_axis(std::string_view name) {
  for (sweep_axis axis : {sweep_axis::frac, sweep_axis::word, sweep_axis::int_bits})
    if (to_string(axis) == name) return axis;
  return std::nullopt;
}

fp::format swept_format(const fp::format& base, sweep_axis axis, int bits) {
  fp::format f = base;
  const int int_bits = base.int_bits();
  switch (axis) {
    case sweep_axis::frac:
      f.frac_bits = bits;
      f.word_bits = (base.is_signed ? 1 : 0) + int_bits + bits;
      break;
    case sweep_axis::word:
      f.word_bits = bits;
      f.frac_bits = bits - (base.is_signed ? 1 : 0) - int_bits;
      break;
    case sweep_axis::int_bits: f.word_bits = (base.is_signed ? 1 : 0) + bits + base.frac_bits; break;
  }
  if (f.word_bits < 2 || f.container_bits() > datapath::max_node_word_bits) {
    throw std::invalid_argument(fmt::format("{} = {} gives a {}-bit word from {}: datapath words hold 2 to 64 bits",
                                            to_string(axis), bits, f.word_bits, fp::to_q_string(base)));
  }
  return f;
}

std::size_t sweep_point_count(const std::vector<datapath::node_id>& nodes, int lo, int hi) {
  return lo > hi ? 0 : nodes.size() * static_cast<std::size_t>(hi - lo + 1);
}

sweep_results run_sweep(const golden::scenario& scen, const datapath::datapath_config& config,
                        const std::vector<datapath::node_id>& nodes, int lo, int hi, sweep_axis axis,
                        const std::vector<std::uint64_t>& trials, unsigned num_threads,
                        const progress_callback& progress, std::optional<double> cache_budget_bytes,
                        std::optional<index_range> points) {
  if (lo > hi) throw std::invalid_argument(fmt::format("empty bit range {}:{}", lo, hi));
  // Check every point before running any, so a bad range fails at once (in every shard alike).
  for (datapath::node_id id : nodes)
    for (int b = lo; b <= hi; ++b) (void)swept_format(config[id].spec.fmt, axis, b);
  const index_range run = points.value_or(all_indices(sweep_point_count(nodes, lo, hi)));
  if (run.end > sweep_point_count(nodes, lo, hi)) throw std::logic_error("sweep points beyond the sweep");
  sweep_results out;
  out.scenario_name = scen.name;
  out.num_trials = trials.size();
  out.axis = axis;
  const std::size_t total = run.size() * trials.size();
  std::size_t before = 0;
  // Golden once per trial; each point reruns only the stages downstream of its node.
  trial_cache cache(scen, cache_budget_bytes.value_or(default_cache_budget_bytes()));
  std::size_t i_point = 0;
  for (datapath::node_id id : nodes) {
    for (int b = lo; b <= hi; ++b, ++i_point) {
      if (i_point < run.begin || i_point >= run.end) continue;
      datapath::datapath_config c = config;
      c[id].spec.fmt = swept_format(config[id].spec.fmt, axis, b);
      c[id].is_default = false;
      const run_results r = run_trials(cache, c, trials, num_threads, [&](std::size_t done, std::size_t) {
        if (progress) progress(before + done, total);
      });
      before += trials.size();
      sweep_point p;
      p.id = id;
      p.bits = b;
      p.fmt = c[id].spec.fmt;
      p.summary = r.summary;
      p.distribution = r.distribution;
      p.uplink = r.uplink;
      p.max_overflow_rate = max_overflow_rate(r);
      for (const node_result& n : r.nodes) {
        if (n.id == id) {
          p.node_sqnr_db = n.sqnr_db();
          p.node_overflow_rate = n.overflow_rate();
        }
      }
      out.points.push_back(p);
    }
  }
  return out;
}

key_sweep_results run_key_sweep(const std::vector<golden::scenario>& scenarios, const std::vector<std::string>& values,
                                const std::string& key, const datapath::datapath_config& config,
                                const std::vector<std::uint64_t>& trials, unsigned num_threads,
                                const progress_callback& progress, std::optional<index_range> points) {
  if (scenarios.empty() || scenarios.size() != values.size())
    throw std::invalid_argument("a key sweep needs one scenario per value");
  const std::vector<datapath::node_id> nodes = datapath::active_nodes(scenarios.front());
  for (std::size_t i = 0; i < scenarios.size(); ++i) {
    if (datapath::active_nodes(scenarios[i]) != nodes)
      throw std::invalid_argument(fmt::format(
          "{} = {} changes the datapath's nodes (the algorithm); sweep keys that keep them", key, values[i]));
  }
  const index_range run = points.value_or(all_indices(scenarios.size()));
  if (run.end > scenarios.size()) throw std::logic_error("key sweep points beyond the sweep");
  key_sweep_results out;
  out.scenario_name = scenarios.front().name;
  out.key = key;
  out.num_trials = trials.size();
  const std::size_t total = run.size() * trials.size();
  std::size_t before = 0;
  for (std::size_t i = run.begin; i < run.end; ++i) {
    const run_results r = run_trials(scenarios[i], config, trials, num_threads, [&](std::size_t done, std::size_t) {
      if (progress) progress(before + done, total);
    });
    before += trials.size();
    key_sweep_point p;
    p.value = values[i];
    p.summary = r.summary;
    p.interference_db = 20.0 * std::log10(r.summary.evm_golden_pct / 100.0);
    p.max_overflow_rate = max_overflow_rate(r);
    for (const node_result& n : r.nodes) {
      if (datapath::role_of(n.id) == datapath::node_role::accumulator)
        p.growth_int_bits.emplace_back(n.id, int_bits_for(n.max_abs_golden));
    }
    out.points.push_back(std::move(p));
  }
  return out;
}

}  // namespace fxmimo::analysis
