#include "fxmimo/analysis/tune.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <sstream>

namespace fxmimo::analysis {

namespace fp = fxmimo::fixedpoint;

double tune_figures::worst_ratio(const tune_limits& l) const {
  auto ratio = [](double value, double limit) { return limit > 0 ? value / limit : (value > 0 ? 1e300 : 0.0); };
  return std::max({ratio(sinr_loss_db, l.max_sinr_loss_db), ratio(evm_pct, l.max_evm_pct),
                   ratio(max_overflow_rate, l.max_overflow_rate),
                   ratio(rms_tx_power_error_db, l.max_rms_tx_power_error_db)});
}

tune_figures figures_of(const run_results& r) {
  tune_figures f;
  f.sinr_loss_db = r.summary.sinr_loss_db;
  f.evm_pct = r.summary.evm_impl_pct;
  f.rms_tx_power_error_db = r.summary.rms_tx_power_error_db;
  for (const node_result& n : r.nodes) f.max_overflow_rate = std::max(f.max_overflow_rate, n.overflow_rate());
  return f;
}

std::string_view to_string(cost_model m) { return m == cost_model::bits ? "bits" : "area"; }

double node_cost(const datapath::datapath_plan& plan, const datapath::datapath_config& config, datapath::node_id id,
                 cost_model model) {
  const double w = config[id].spec.fmt.word_bits;
  if (model == cost_model::bits) return w;
  const datapath::stage* producer = plan.producer(id);
  return producer != nullptr ? w * producer->storage_words(id, plan.dims) : 0.0;
}

double datapath_cost(const golden::scenario& scen, const datapath::datapath_config& config, cost_model model) {
  const datapath::datapath_plan plan = datapath::stages_for(scen);
  double cost = 0;
  for (const auto& stage : plan.stages) {
    for (const datapath::port& p : stage->ports()) cost += node_cost(plan, config, p.node, model);
    if (model == cost_model::area) cost += stage->multiplier_cost(config, plan.dims);
  }
  return cost;
}

std::vector<int> greedy_search(const std::vector<int>& lo, const std::vector<int>& hi,
                               const std::function<tune_figures(const std::vector<int>&)>& evaluate,
                               const std::function<double(const std::vector<int>&)>& cost, const tune_limits& limits,
                               int& evaluations) {
  const std::size_t n = lo.size();
  auto eval = [&](const std::vector<int>& x) {
    ++evaluations;
    return evaluate(x);
  };
  // 1. Each variable's minimum with all others at their widest (binary search: the figures
  //    fall as bits are added, the usual behaviour in the granular region).
  std::vector<int> x = hi;
  if (!eval(x).meets(limits)) return x;  // even the widest setting fails: report it as is
  std::vector<int> minimum(n);
  for (std::size_t i = 0; i < n; ++i) {
    int a = lo[i], b = hi[i];  // b meets
    while (a < b) {
      const int mid = a + (b - a) / 2;
      std::vector<int> probe = hi;
      probe[i] = mid;
      if (eval(probe).meets(limits))
        b = mid;
      else
        a = mid + 1;
    }
    minimum[i] = b;
  }
  // 2. All at their minima; add bits where they buy the most budget per unit cost. Each round
  //    ranks every one-bit addition by (gain in the worst limit ratio) / (added cost), then takes
  //    the additions in that order while each is at least half as good per unit cost as the best
  //    and still improves the combined state.
  x = minimum;
  tune_figures fx = eval(x);
  while (!fx.meets(limits)) {
    struct candidate {
      std::size_t var;
      double gain_per_cost;
    };
    std::vector<candidate> ranked;
    for (std::size_t i = 0; i < n; ++i) {
      if (x[i] >= hi[i]) continue;
      std::vector<int> y = x;
      ++y[i];
      const double gain = fx.worst_ratio(limits) - eval(y).worst_ratio(limits);
      ranked.push_back({i, gain / std::max(1e-12, cost(y) - cost(x))});
    }
    if (ranked.empty()) break;  // everything at its widest
    std::stable_sort(ranked.begin(), ranked.end(),
                     [](const candidate& a, const candidate& b) { return a.gain_per_cost > b.gain_per_cost; });
    bool first = true;
    const double best_rate = ranked.front().gain_per_cost;
    for (const candidate& c : ranked) {
      // Only additions nearly as good per unit cost as the best one join the round: a much
      // dearer bit is left for a later round, where cheap bits may have made it unnecessary.
      if (!first && (best_rate <= 0 || c.gain_per_cost < 0.5 * best_rate)) break;
      std::vector<int> y = x;
      ++y[c.var];
      const tune_figures fy = eval(y);
      if (!first && fy.worst_ratio(limits) >= fx.worst_ratio(limits)) break;
      x = y;
      fx = fy;
      first = false;
      if (fx.meets(limits)) break;
    }
  }
  if (!fx.meets(limits)) return hi;
  // 3. Remove bits while the limits hold, the most expensive bit first; a variable whose removal
  //    once broke a limit is left alone from then on (each removal only tightens the others).
  std::vector<double> saving(n, 0.0);
  for (std::size_t i = 0; i < n; ++i) {
    std::vector<int> y = x;
    --y[i];
    saving[i] = cost(x) - cost(y);
  }
  std::vector<std::size_t> order(n);
  for (std::size_t i = 0; i < n; ++i) order[i] = i;
  std::stable_sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) { return saving[a] > saving[b]; });
  for (std::size_t i : order) {
    while (x[i] > lo[i]) {
      std::vector<int> y = x;
      --y[i];
      if (!eval(y).meets(limits)) break;
      x = y;
    }
  }
  return x;
}

tune_results tune_widths(const golden::scenario& scen, const datapath::datapath_config& start,
                         const tune_limits& limits, cost_model model, int num_trials, unsigned num_threads,
                         double overflow_prob, double search_margin,
                         const std::function<void(const std::string&)>& status) {
  auto say = [&](const std::string& s) {
    if (status) status(s);
  };
  tune_results out;
  out.scenario_name = scen.name;
  out.limits = limits;
  out.model = model;
  out.nodes = datapath::active_nodes(scen);
  out.search_trials = first_trials(num_trials);
  for (int t = 0; t < num_trials; ++t) out.verify_trials.push_back(static_cast<std::uint64_t>(num_trials + t));

  say("range profiling for integer bits");
  const range_results ranges = profile_ranges(scen, start, num_trials, num_threads, overflow_prob);
  std::vector<int> int_bits;
  for (const node_range& r : ranges.nodes) int_bits.push_back(r.proposed_int_bits);

  // Fraction bits between 0 (or what keeps the word at 2 bits) and what fills 40 bits of word
  // (at most 64).
  const std::size_t n = out.nodes.size();
  std::vector<int> lo(n), hi(n);
  for (std::size_t i = 0; i < n; ++i) {
    lo[i] = std::max(0, 1 - int_bits[i]);
    hi[i] = std::max(lo[i], std::min(40, 63 - int_bits[i]));
  }
  auto config_of = [&](const std::vector<int>& frac) {
    datapath::datapath_config c = start;
    for (std::size_t i = 0; i < n; ++i) {
      datapath::node_setting& s = c[out.nodes[i]];
      s.spec.fmt = s.spec.fmt.with_int_frac(int_bits[i], frac[i]);  // signed stays signed, unsigned unsigned
      s.is_default = false;
    }
    return c;
  };
  int step = 0;
  auto evaluate = [&](const std::vector<int>& frac) {
    if (++step % 10 == 0) say(fmt::format("search: {} evaluations", step));
    return figures_of(run_trials(scen, config_of(frac), out.search_trials, num_threads));
  };
  auto cost = [&](const std::vector<int>& frac) { return datapath_cost(scen, config_of(frac), model); };
  say("searching fraction bits");
  // The search aims below the limits by the margin, so that the fresh trials of the
  // verification (a different sample) still meet them.
  tune_limits search_limits = limits;
  search_limits.max_sinr_loss_db *= 1.0 - search_margin;
  search_limits.max_evm_pct *= 1.0 - search_margin;
  search_limits.max_rms_tx_power_error_db *= 1.0 - search_margin;
  const std::vector<int> best = greedy_search(lo, hi, evaluate, cost, search_limits, out.evaluations);
  out.config = config_of(best);
  out.cost = datapath_cost(scen, out.config, model);
  out.search = figures_of(run_trials(scen, out.config, out.search_trials, num_threads));
  say("verifying on fresh trials");
  out.verification = figures_of(run_trials(scen, out.config, out.verify_trials, num_threads));
  out.met = out.verification.meets(limits);
  if (!out.search.meets(limits)) {
    out.note = "no setting of at most 64 bits per node meets the limits on the search trials";
  } else if (!out.met) {
    out.note =
        "the choice meets the limits on the search trials but not on the fresh trials: "
        "use more trials or tighter margins";
  }
  return out;
}

}  // namespace fxmimo::analysis
