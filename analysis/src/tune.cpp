#include "fxmimo/analysis/tune.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>
#include <sstream>
#include <stdexcept>

#include "fxmimo/analysis/trial_cache.hpp"

namespace fxmimo::analysis {

namespace fp = fxmimo::fixedpoint;

double tune_figures::worst_ratio(const tune_limits& l) const {
  auto ratio = [](double value, double limit) { return limit > 0 ? value / limit : (value > 0 ? 1e300 : 0.0); };
  double worst = std::max({ratio(sinr_loss_db, l.max_sinr_loss_db), ratio(evm_pct, l.max_evm_pct),
                           ratio(max_overflow_rate, l.max_overflow_rate),
                           ratio(rms_tx_power_error_db, l.max_rms_tx_power_error_db)});
  if (l.max_uplink_sinr_loss_db) worst = std::max(worst, ratio(uplink_sinr_loss_db, *l.max_uplink_sinr_loss_db));
  if (l.max_uplink_ber_ratio) worst = std::max(worst, ratio(uplink_ber_ratio, *l.max_uplink_ber_ratio));
  return worst;
}

tune_figures figures_of(const run_results& r, const tune_limits& limits) {
  tune_figures f;
  f.sinr_loss_db = sinr_loss_statistic(r, limits.sinr_loss_percentile);
  f.evm_pct = r.summary.evm_impl_pct;
  f.rms_tx_power_error_db = r.summary.rms_tx_power_error_db;
  f.max_overflow_rate = max_overflow_rate(r);
  if (r.uplink) {
    f.uplink_sinr_loss_db = r.uplink->sinr_loss_db;
    f.uplink_ber_ratio =
        static_cast<double>(r.uplink->bit_errors_fixed + 1) / static_cast<double>(r.uplink->bit_errors_golden + 1);
  }
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

namespace {

/// The largest of each figure over the corners.
tune_figures worst_of(const std::vector<tune_figures>& all) {
  tune_figures w;
  w.sinr_loss_db = -std::numeric_limits<double>::infinity();
  for (const tune_figures& f : all) {
    w.sinr_loss_db = std::max(w.sinr_loss_db, f.sinr_loss_db);
    w.evm_pct = std::max(w.evm_pct, f.evm_pct);
    w.max_overflow_rate = std::max(w.max_overflow_rate, f.max_overflow_rate);
    w.rms_tx_power_error_db = std::max(w.rms_tx_power_error_db, f.rms_tx_power_error_db);
    w.uplink_sinr_loss_db = std::max(w.uplink_sinr_loss_db, f.uplink_sinr_loss_db);
    w.uplink_ber_ratio = std::max(w.uplink_ber_ratio, f.uplink_ber_ratio);
  }
  return w;
}

/// Why the fresh trials fail: each limit exceeded, the nodes whose fresh golden values went
/// beyond their integer bits (the range profile did not see them), and the Gram's condition
/// number, which the inverse's dynamic range follows.
std::string fresh_failure_diagnosis(const tune_results& r, const std::vector<int>& int_bits) {
  std::vector<std::string> parts;
  const tune_figures& f = r.verification;
  const tune_limits& l = r.limits;
  if (f.sinr_loss_db > l.max_sinr_loss_db)
    parts.push_back(fmt::format("SINR loss {:.4g} dB > {:g} dB", f.sinr_loss_db, l.max_sinr_loss_db));
  if (f.evm_pct > l.max_evm_pct)
    parts.push_back(fmt::format("implementation EVM {:.4g} % > {:g} % (worst trial {:.4g} %)", f.evm_pct, l.max_evm_pct,
                                r.verify_distribution.evm_impl_max_pct));
  if (f.rms_tx_power_error_db > l.max_rms_tx_power_error_db)
    parts.push_back(
        fmt::format("RMS power error {:.4g} dB > {:g} dB", f.rms_tx_power_error_db, l.max_rms_tx_power_error_db));
  if (f.max_overflow_rate > l.max_overflow_rate)
    parts.push_back(fmt::format("overflow rate {:.3g} > {:g}", f.max_overflow_rate, l.max_overflow_rate));
  if (l.max_uplink_sinr_loss_db && f.uplink_sinr_loss_db > *l.max_uplink_sinr_loss_db)
    parts.push_back(
        fmt::format("uplink SINR loss {:.4g} dB > {:g} dB", f.uplink_sinr_loss_db, *l.max_uplink_sinr_loss_db));
  if (l.max_uplink_ber_ratio && f.uplink_ber_ratio > *l.max_uplink_ber_ratio)
    parts.push_back(fmt::format("uplink BER ratio {:.4g} > {:g}", f.uplink_ber_ratio, *l.max_uplink_ber_ratio));
  std::string beyond;
  for (std::size_t i = 0; i < r.nodes.size(); ++i) {
    for (const node_result& n : r.verify_nodes) {
      if (datapath::setting_home(n.id) == r.nodes[i] && n.max_abs_golden >= std::ldexp(1.0, int_bits[i]))
        beyond += fmt::format("{}{} {:.4g} >= 2^{}", beyond.empty() ? "" : ", ", datapath::node_name(n.id),
                              n.max_abs_golden, int_bits[i]);
    }
  }
  std::string out = parts.empty() ? std::string("limits exceeded") : parts.front();
  for (std::size_t i = 1; i < parts.size(); ++i) out += "; " + parts[i];
  if (!beyond.empty())
    out += fmt::format(
        ". Fresh golden values beyond the integer bits from {} range trials: {} (the tail is heavier than the "
        "profile saw: more --range-trials, or a design that bounds these values)",
        r.range_trials, beyond);
  // Only where values outgrew the profile and the Gram is badly conditioned (a common cause).
  if (const auto& c = r.verify_distribution.gram_condition_max; c && !beyond.empty() && *c > 1e4) {
    out += fmt::format(
        ". The Gram's condition number on the fresh trials: {:.3g} at 95 %, {:.3g} worst (2^{:.1f}); a ZF "
        "inverse's entries follow 1 / lambda_min, so fixed binary points cannot hold such trials (regularise, "
        "schedule fewer users, or normalise per block)",
        r.verify_distribution.gram_condition_p95.value_or(0.0), *c, std::log2(*c));
  }
  return out;
}

}  // namespace

tune_results tune_widths(const golden::scenario& scen, const datapath::datapath_config& start,
                         const tune_limits& limits, cost_model model, const tune_trial_counts& trials,
                         unsigned num_threads, double overflow_prob, double search_margin,
                         const std::function<void(const std::string&)>& status,
                         std::optional<double> cache_budget_bytes) {
  return tune_widths_at_corners({tune_corner{"", scen, trials}}, start, limits, model, num_threads, overflow_prob,
                                search_margin, status, cache_budget_bytes);
}

tune_results tune_widths_at_corners(const std::vector<tune_corner>& corners, const datapath::datapath_config& start,
                                    const tune_limits& limits, cost_model model, unsigned num_threads,
                                    double overflow_prob, double search_margin,
                                    const std::function<void(const std::string&)>& status,
                                    std::optional<double> cache_budget_bytes) {
  if (corners.empty()) throw std::invalid_argument("tune needs at least one corner");
  auto say = [&](const std::string& s) {
    if (status) status(s);
  };
  const golden::scenario& base = corners.front().scen;
  const bool several = corners.size() > 1;
  auto label = [&](const tune_corner& c) { return several ? "corner " + c.name + ": " : std::string(); };
  tune_results out;
  out.scenario_name = base.name;
  out.limits = limits;
  out.model = model;
  const std::vector<datapath::node_id> active = datapath::active_nodes(base);
  // A node that uses another's setting (setting_home: the uplink block through the pilot ADC) is
  // not a variable of its own: its home's setting is chosen once, for both.
  // A node that clips by design (the LLRs) keeps the scenario's setting: its width and clip
  // level are the decoder's input, a choice the search has no figure for.
  for (datapath::node_id id : active) {
    if (datapath::clips_by_design(id, start[id].spec))
      out.kept_nodes.push_back(id);
    else if (datapath::setting_home(id) == id)
      out.nodes.push_back(id);
  }
  for (const tune_corner& c : corners) {
    if (datapath::active_nodes(c.scen) != active)
      throw std::invalid_argument(
          fmt::format("corner {} has other datapath nodes than the first (its algorithm differs)", c.name));
  }
  // The search trials are the same indices at every corner; the fresh trials of a corner follow
  // its search and range trials, so none of them was seen by either.
  const int search_count = corners.front().trials.search;
  out.search_trials = first_trials(search_count);
  out.range_trials = corners.front().trials.range;
  const std::size_t n = out.nodes.size();

  // Integer bits: at each node the largest proposal over the corners.
  std::vector<int> int_bits(n, std::numeric_limits<int>::min());
  out.int_bits_corner.assign(n, "");
  for (const tune_corner& c : corners) {
    say(fmt::format("{}range profiling for integer bits: {} golden trials", label(c), c.trials.range));
    const range_results ranges =
        profile_ranges(c.scen, start, static_cast<int>(c.trials.range), num_threads, overflow_prob);
    // Each node's proposal goes to the variable of its setting: a shared setting takes the
    // largest of its nodes' proposals.
    for (const node_range& r : ranges.nodes) {
      const auto at = std::find(out.nodes.begin(), out.nodes.end(), datapath::setting_home(r.id));
      if (at == out.nodes.end()) continue;
      const auto i = static_cast<std::size_t>(at - out.nodes.begin());
      if (r.proposed_int_bits > int_bits[i]) {
        int_bits[i] = r.proposed_int_bits;
        out.int_bits_corner[i] = c.name;
      }
    }
  }

  // Fraction bits between 0 (or what keeps the word at 2 bits) and what fills 40 bits of word
  // (at most 64).
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
  // Each corner's search trials: golden once, and every evaluation reruns only the stages
  // downstream of the nodes it changed (bit-identical to full evaluations).
  std::vector<std::unique_ptr<trial_cache>> caches;
  for (const tune_corner& c : corners)
    caches.push_back(std::make_unique<trial_cache>(
        c.scen, cache_budget_bytes.value_or(default_cache_budget_bytes()) / static_cast<double>(corners.size())));
  auto figures_at = [&](const std::vector<int>& frac) {
    std::vector<tune_figures> all;
    for (std::size_t c = 0; c < corners.size(); ++c)
      all.push_back(figures_of(run_trials(*caches[c], config_of(frac), out.search_trials, num_threads), limits));
    return all;
  };
  int step = 0;
  auto evaluate = [&](const std::vector<int>& frac) {
    if (++step % 10 == 0) say(fmt::format("search: {} evaluations", step));
    return worst_of(figures_at(frac));
  };
  auto cost = [&](const std::vector<int>& frac) { return datapath_cost(base, config_of(frac), model); };
  say("searching fraction bits");
  // The search aims below the limits by the margin, so that the fresh trials of the
  // verification (a different sample) still meet them.
  tune_limits search_limits = limits;
  search_limits.max_sinr_loss_db *= 1.0 - search_margin;
  search_limits.max_evm_pct *= 1.0 - search_margin;
  search_limits.max_rms_tx_power_error_db *= 1.0 - search_margin;
  if (search_limits.max_uplink_sinr_loss_db) *search_limits.max_uplink_sinr_loss_db *= 1.0 - search_margin;
  // A ratio's margin is taken from its excess over 1.
  if (search_limits.max_uplink_ber_ratio)
    search_limits.max_uplink_ber_ratio = 1.0 + (*search_limits.max_uplink_ber_ratio - 1.0) * (1.0 - search_margin);
  const std::vector<int> best = greedy_search(lo, hi, evaluate, cost, search_limits, out.evaluations);
  out.config = config_of(best);
  out.cost = datapath_cost(base, out.config, model);

  // Which corner a node's last fraction bit is for: one bit less, the corner furthest past its
  // limits (none when one bit less still meets them everywhere, or the node is at its minimum).
  out.frac_bits_corner.assign(n, "");
  if (several) {
    for (std::size_t i = 0; i < n; ++i) {
      if (best[i] <= lo[i]) continue;
      std::vector<int> y = best;
      --y[i];
      const std::vector<tune_figures> all = figures_at(y);
      out.evaluations += 1;
      double worst = 1.0;
      for (std::size_t c = 0; c < corners.size(); ++c) {
        if (const double r = all[c].worst_ratio(search_limits); r > worst) {
          worst = r;
          out.frac_bits_corner[i] = corners[c].name;
        }
      }
    }
  }

  std::vector<tune_figures> searched = figures_at(best), verified;
  double worst_verified = -1.0;
  for (std::size_t c = 0; c < corners.size(); ++c) {
    const tune_corner& corner = corners[c];
    corner_outcome o;
    o.name = corner.name;
    o.range_trials = corner.trials.range;
    const std::size_t first_fresh =
        std::max<std::size_t>(static_cast<std::size_t>(corner.trials.search), corner.trials.range);
    for (std::size_t t = 0; t < corner.trials.verify; ++t) o.verify_trials.push_back(first_fresh + t);
    say(fmt::format("{}verifying on {} fresh trials", label(corner), o.verify_trials.size()));
    const run_results fresh = run_trials(corner.scen, out.config, o.verify_trials, num_threads);
    o.search = searched[c];
    o.verification = figures_of(fresh, limits);
    verified.push_back(o.verification);
    for (const node_result& node : fresh.nodes) {
      if (!node.clips() && node.overflow_rate_bound() >= o.proven_overflow_bound) {
        o.proven_overflow_bound = node.overflow_rate_bound();
        o.weakest_node = node.id;
      }
    }
    o.met = o.verification.meets(limits);
    // The per-node results and distributions shown are the corner furthest from its limits.
    if (const double r = o.verification.worst_ratio(limits); r > worst_verified) {
      worst_verified = r;
      out.verify_trials = o.verify_trials;
      out.verify_nodes = fresh.nodes;
      out.verify_distribution = fresh.distribution;
      out.users = fresh.users.size();
    }
    if (o.proven_overflow_bound >= out.proven_overflow_bound) {
      out.proven_overflow_bound = o.proven_overflow_bound;
      out.weakest_node = o.weakest_node;
    }
    out.corners.push_back(std::move(o));
  }
  out.search = worst_of(searched);
  out.verification = worst_of(verified);
  out.met = std::all_of(out.corners.begin(), out.corners.end(), [](const corner_outcome& o) { return o.met; });
  if (!out.search.meets(limits)) {
    out.note = "no setting of at most 64 bits per node meets the limits on the search trials";
  } else if (!out.met) {
    out.note = "the choice meets the limits on the search trials but not on the fresh trials: " +
               fresh_failure_diagnosis(out, int_bits);
  }
  return out;
}

std::vector<std::pair<std::string, golden::units_config>> unit_variants(const golden::scenario& scen) {
  std::vector<std::pair<std::string, golden::units_config>> out;
  golden::units_config own = scen.units;
  std::string own_label;
  for (const golden::unit_alternatives& a : scen.units.alternatives)
    own_label += (own_label.empty() ? "" : ", ") + a.node + ": " + own.of(a.node).label();
  out.emplace_back(own_label, own);
  // The cross product, the scenario's own combination first (odometer order over the nodes).
  std::vector<std::size_t> digit(scen.units.alternatives.size(), 0);
  while (true) {
    std::size_t i = 0;
    for (; i < digit.size(); ++i) {
      if (++digit[i] <= scen.units.alternatives[i].choices.size()) break;
      digit[i] = 0;
    }
    if (i == digit.size()) break;
    golden::units_config u = scen.units;
    std::string label;
    for (std::size_t j = 0; j < digit.size(); ++j) {
      const golden::unit_alternatives& a = scen.units.alternatives[j];
      if (digit[j] > 0) u.of(a.node) = a.choices[digit[j] - 1];
      label += (label.empty() ? "" : ", ") + a.node + ": " + u.of(a.node).label();
    }
    out.emplace_back(label, u);
  }
  return out;
}

tune_results tune_unit_variants(const std::vector<tune_corner>& corners, const datapath::datapath_config& start,
                                const tune_limits& limits, cost_model model, unsigned num_threads, double overflow_prob,
                                double search_margin, const std::function<void(const std::string&)>& status,
                                std::optional<double> cache_budget_bytes) {
  if (corners.empty()) throw std::invalid_argument("tune_unit_variants: no corner");
  const auto variants = unit_variants(corners.front().scen);
  if (variants.size() == 1) {
    tune_results r = tune_widths_at_corners(corners, start, limits, model, num_threads, overflow_prob, search_margin,
                                            status, cache_budget_bytes);
    r.units = corners.front().scen.units;
    return r;
  }
  std::vector<tune_results> all;
  std::vector<variant_outcome> outcomes;
  for (std::size_t v = 0; v < variants.size(); ++v) {
    // Named copies, not a structured binding: the status lambda captures the label.
    const std::string& label = variants[v].first;
    const golden::units_config& units = variants[v].second;
    std::vector<tune_corner> these = corners;
    for (tune_corner& c : these) c.scen.units = units;
    const auto say = [&](const std::string& s) {
      if (status) status(s.empty() ? s : fmt::format("units {}/{} ({}): {}", v + 1, variants.size(), label, s));
    };
    all.push_back(tune_widths_at_corners(these, start, limits, model, num_threads, overflow_prob, search_margin, say,
                                         cache_budget_bytes));
    all.back().units = units;
    outcomes.push_back({label, all.back().cost, all.back().met, all.back().verification.worst_ratio(limits),
                        all.back().evaluations, false});
  }
  // The cheapest that meets the limits; else the one closest to them.
  std::size_t best = 0;
  for (std::size_t v = 1; v < all.size(); ++v) {
    const variant_outcome &a = outcomes[v], &b = outcomes[best];
    const bool better = a.met != b.met ? a.met : (a.met ? a.cost < b.cost : a.worst_ratio < b.worst_ratio);
    if (better) best = v;
  }
  outcomes[best].chosen = true;
  tune_results out = std::move(all[best]);
  out.variants = std::move(outcomes);
  for (const variant_outcome& o : out.variants)
    if (!o.chosen) out.evaluations += o.evaluations;
  return out;
}

}  // namespace fxmimo::analysis
