#include "fxmimo/harness/range.hpp"

#include "fxmimo/golden/trial.hpp"
#include "fxmimo/harness/datapath.hpp"
#include "fxmimo/harness/runner.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>

namespace fxmimo::harness {

namespace fp = fxmimo::fixedpoint;

namespace {

constexpr int hist_min = -40, hist_max = 40;

/// The q-quantile (0..1) of sorted-on-demand values (nth_element), 0 for no values.
double quantile(std::vector<double>& v, double q) {
  if (v.empty()) return 0.0;
  const auto k = static_cast<std::size_t>(std::min<double>(static_cast<double>(v.size()) - 1,
                                                           std::floor(q * static_cast<double>(v.size() - 1))));
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
  return v[k];
}

int ceil_log2(int n) { return n <= 1 ? 0 : static_cast<int>(std::ceil(std::log2(static_cast<double>(n)))); }

}  // namespace

int int_bits_for(double value) {
  if (!(value > 0)) return -30;
  // Smallest m with 2^m > value.
  int m = static_cast<int>(std::floor(std::log2(value))) + 1;
  while (std::ldexp(1.0, m - 1) > value) --m;
  return std::max(m, -30);
}

range_results profile_ranges(const golden::scenario& scen, const datapath_config& config, int num_trials,
                             unsigned num_threads, double overflow_prob,
                             const std::function<void(std::size_t, std::size_t)>& progress) {
  if (num_trials < 1) throw std::invalid_argument("range profiling needs at least one trial");
  if (!(overflow_prob > 0 && overflow_prob < 1)) throw std::invalid_argument("overflow probability must lie in (0, 1)");
  const std::vector<node_id> active = active_nodes(scen);
  // Per trial, per node: the |parts|, kept in trial order so the result is thread-independent.
  std::vector<std::vector<std::vector<double>>> parts(static_cast<std::size_t>(num_trials));
  for_each_index_parallel(
      static_cast<std::size_t>(num_trials), num_threads,
      [&](std::size_t t) {
        const golden::trial_data trial = golden::run_trial(scen, t);
        const auto values = golden_node_values(scen, trial);
        auto& mine = parts[t];
        mine.resize(active.size());
        for (std::size_t i = 0; i < active.size(); ++i) {
          const Eigen::MatrixXcd& g = values[index_of(active[i])];
          auto& out = mine[i];
          const bool complex_node = node_is_complex(active[i]);
          out.reserve(static_cast<std::size_t>(2 * g.size()));
          for (Eigen::Index e = 0; e < g.size(); ++e) {
            out.push_back(std::abs(g(e).real()));
            if (complex_node) out.push_back(std::abs(g(e).imag()));
          }
        }
      },
      progress);

  range_results out;
  out.scenario_name = scen.name;
  out.num_trials = static_cast<std::size_t>(num_trials);
  out.overflow_prob = overflow_prob;
  for (std::size_t i = 0; i < active.size(); ++i) {
    node_range r;
    r.id = active[i];
    std::vector<double> all;
    for (const auto& t : parts)
      all.insert(all.end(), t[i].begin(), t[i].end());
    r.num_values = all.size();
    r.log2_histogram.assign(static_cast<std::size_t>(hist_max - hist_min + 1), 0);
    for (double v : all) {
      if (v == 0.0) continue;
      r.max_abs = std::max(r.max_abs, v);
      const int e = std::clamp(static_cast<int>(std::floor(std::log2(v))), hist_min, hist_max);
      ++r.log2_histogram[static_cast<std::size_t>(e - hist_min)];
    }
    r.p99 = quantile(all, 0.99);
    r.p9999 = quantile(all, 0.9999);
    r.p999999 = quantile(all, 0.999999);
    // A quantile at probability p is trustworthy with at least 10 / p values; otherwise the
    // maximum observed plus one guard bit.
    if (static_cast<double>(all.size()) * overflow_prob >= 10.0) {
      r.proposed_int_bits = int_bits_for(quantile(all, 1.0 - overflow_prob));
      r.proposal_basis = "quantile";
    } else {
      r.proposed_int_bits = int_bits_for(r.max_abs) + 1;
      r.proposal_basis = "max+1";
    }
    out.nodes.push_back(std::move(r));
  }
  // Worst-case analytic growth of the accumulating nodes, from the configured formats of their
  // inputs (common practice: a sum of n terms needs log2(n) more integer bits). A part of a
  // complex product, re(a) re(b) -/+ im(a) im(b), reaches 2^(ma + mb + 1) when every part is the
  // most negative word, and a signed Qm.n holds only |v| < 2^m: hence + 2, not + 1.
  auto int_of = [&](node_id id) { return config[id].spec.fmt.int_bits(); };
  const int num_ant = scen.array.num_antennas, num_users = scen.cells.num_users, tau = scen.pilots.length;
  for (node_range& r : out.nodes) {
    switch (r.id) {
      case node_id::pilot_acc:
        r.analytic_int_bits = int_of(node_id::adc) + int_of(node_id::pilot_rom) + 2 + ceil_log2(tau);
        r.analytic_rule = "adc + pilot_rom + 2 + log2(tau_p)";
        break;
      case node_id::chan_est:
        r.analytic_int_bits = int_of(node_id::pilot_acc) + int_of(node_id::est_scale) + 1;
        r.analytic_rule = "pilot_acc + est_scale + 1";
        break;
      case node_id::gram:
        r.analytic_int_bits = 2 * int_of(node_id::chan_est) + 2 + ceil_log2(num_ant);
        r.analytic_rule = "2 chan_est + 2 + log2(M)";
        break;
      case node_id::power_acc:
        r.analytic_int_bits = 2 * int_of(node_id::precoder) + 2 + ceil_log2(num_ant * num_users);
        r.analytic_rule = "2 precoder + 2 + log2(M K)";
        break;
      case node_id::tx_acc:
        r.analytic_int_bits = int_of(node_id::weights) + int_of(node_id::symbols) + 2 + ceil_log2(num_users);
        r.analytic_rule = "weights + symbols + 2 + log2(K)";
        break;
      default:
        break;
    }
  }
  return out;
}

datapath_config apply_proposal(const datapath_config& config, const range_results& ranges) {
  datapath_config out = config;
  for (const node_range& r : ranges.nodes) {
    fp::format& f = out[r.id].spec.fmt;
    const int frac = f.frac_bits;
    const int word = std::clamp(1 + r.proposed_int_bits + frac, 2, max_node_word_bits);
    f = {true, word, word - 1 - r.proposed_int_bits};
    out[r.id].is_default = false;
  }
  return out;
}

std::string format_range_table(const range_results& r) {
  std::string out = fmt::format("scenario {}, {} golden trials, target overflow probability {:g}\n\n", r.scenario_name,
                                r.num_trials, r.overflow_prob);
  out += fmt::format("{:<15} {:>10} {:>11} {:>11} {:>11} {:>11} {:>9} {:<9} {:>9}  {}\n", "node", "values", "max|v|",
                     "p99", "p99.99", "p99.9999", "int bits", "basis", "analytic", "analytic rule");
  for (const node_range& n : r.nodes) {
    out += fmt::format("{:<15} {:>10} {:>11.4g} {:>11.4g} {:>11.4g} {:>11.4g} {:>9} {:<9} {:>9}  {}\n", node_name(n.id),
                       n.num_values, n.max_abs, n.p99, n.p9999, n.p999999, n.proposed_int_bits, n.proposal_basis,
                       n.analytic_int_bits ? std::to_string(*n.analytic_int_bits) : "-", n.analytic_rule);
  }
  out += "(int bits m of a signed Qm.n: values up to 2^m; 'max+1' = too few values for the quantile, the\n"
         " largest observed value plus one guard bit; analytic = worst-case growth from the configured inputs)\n";
  return out;
}

nlohmann::json to_json(const range_results& r) {
  nlohmann::json out;
  out["kind"] = "range";
  out["scenario"] = {{"name", r.scenario_name}};
  out["trials"] = r.num_trials;
  out["overflow_prob"] = r.overflow_prob;
  out["nodes"] = nlohmann::json::object();
  for (const node_range& n : r.nodes) {
    out["nodes"][std::string(node_name(n.id))] = {
        {"values", n.num_values},
        {"max_abs", n.max_abs},
        {"p99", n.p99},
        {"p99_99", n.p9999},
        {"p99_9999", n.p999999},
        {"proposed_int_bits", n.proposed_int_bits},
        {"proposal_basis", n.proposal_basis},
        {"analytic_int_bits", n.analytic_int_bits ? nlohmann::json(*n.analytic_int_bits) : nlohmann::json(nullptr)},
        {"analytic_rule", n.analytic_rule},
        {"hist_min_exp", n.hist_min_exp},
        {"log2_histogram", n.log2_histogram},
    };
  }
  return out;
}

}  // namespace fxmimo::harness
