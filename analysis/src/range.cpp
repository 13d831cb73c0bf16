#include "fxmimo/analysis/range.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::analysis {

namespace fp = fxmimo::fixedpoint;

namespace {

constexpr int hist_min = -40, hist_max = 40;

/// The q-quantile (0..1) of sorted-on-demand values (nth_element), 0 for no values.
double quantile(std::vector<double>& v, double q) {
  if (v.empty()) return 0.0;
  const auto k = static_cast<std::size_t>(
      std::min<double>(static_cast<double>(v.size()) - 1, std::floor(q * static_cast<double>(v.size() - 1))));
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
  return v[k];
}

}  // namespace

int int_bits_for(double value) {
  if (!(value > 0)) return -30;
  // Smallest m with 2^m > value.
  int m = static_cast<int>(std::floor(std::log2(value))) + 1;
  while (std::ldexp(1.0, m - 1) > value) --m;
  return std::max(m, -30);
}

range_results profile_ranges(const golden::scenario& scen, const datapath::datapath_config& config, int num_trials,
                             unsigned num_threads, double overflow_prob,
                             const std::function<void(std::size_t, std::size_t)>& progress) {
  if (num_trials < 1) throw std::invalid_argument("range profiling needs at least one trial");
  if (!(overflow_prob > 0 && overflow_prob < 1)) throw std::invalid_argument("overflow probability must lie in (0, 1)");
  const datapath::datapath_plan plan = datapath::stages_for(scen);
  const std::vector<datapath::node_id> active = plan.nodes();
  // Per trial, per node: the |parts|, kept in trial order so the result is thread-independent.
  std::vector<std::vector<std::vector<double>>> parts(static_cast<std::size_t>(num_trials));
  for_each_index_parallel(
      static_cast<std::size_t>(num_trials), num_threads,
      [&](std::size_t t) {
        const golden::trial_data trial = golden::run_trial(scen, t);
        const auto values = datapath::golden_node_values(plan, scen, trial);
        auto& mine = parts[t];
        mine.resize(active.size());
        for (std::size_t i = 0; i < active.size(); ++i) {
          const Eigen::MatrixXcd& g = values[datapath::index_of(active[i])];
          auto& out = mine[i];
          const bool complex_node = datapath::node_is_complex(active[i]);
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
    for (const auto& t : parts) all.insert(all.end(), t[i].begin(), t[i].end());
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
  // Worst-case analytic growth, from each stage's rule on the configured formats of its inputs.
  for (node_range& r : out.nodes) {
    if (const std::optional<datapath::growth_rule> g = plan.producer(r.id)->growth(r.id, config, plan.dims)) {
      r.analytic_int_bits = g->int_bits;
      r.analytic_rule = g->rule;
    }
  }
  return out;
}

datapath::datapath_config apply_proposal(const datapath::datapath_config& config, const range_results& ranges) {
  datapath::datapath_config out = config;
  for (const node_range& r : ranges.nodes) {
    fp::format& f = out[r.id].spec.fmt;
    // The proposed integer bits with the fraction bits kept, signed or unsigned as configured;
    // the word clamped to [sign + 1, 64] bits (63 unsigned: its container needs a sign bit),
    // fraction bits giving way first.
    const int sign = f.is_signed ? 1 : 0;
    const int word =
        std::clamp(sign + r.proposed_int_bits + f.frac_bits, sign + 1, datapath::max_node_word_bits - 1 + sign);
    f = f.with_int_frac(r.proposed_int_bits, word - sign - r.proposed_int_bits);
    out[r.id].is_default = false;
  }
  return out;
}

}  // namespace fxmimo::analysis
