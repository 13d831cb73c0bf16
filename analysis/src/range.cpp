#include "fxmimo/analysis/range.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <mutex>

#include "fxmimo/analysis/processes.hpp"
#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/statistics.hpp"
#include "fxmimo/analysis/tail.hpp"
#include "fxmimo/datapath/block_float.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/trial.hpp"
#include "wire.hpp"

namespace fxmimo::analysis {

namespace fp = fxmimo::fixedpoint;

namespace {

constexpr int hist_min = -40, hist_max = 40;

/// Largest values kept per node: enough for the 99 % percentile, the (1 - p) quantile and the
/// tail fit, at most 2^19 (beyond, the 99 % percentile reads as the smallest kept value, a lower
/// bound).
std::size_t values_to_keep(std::size_t num_values, double overflow_prob) {
  const auto n = static_cast<double>(num_values);
  const double wanted = std::max({std::ceil(0.01 * n) + 2, std::ceil(overflow_prob * n) + 2,
                                  static_cast<double>(tail_exceedance_count(num_values)) + 1});
  return static_cast<std::size_t>(std::min(wanted, static_cast<double>(std::size_t{1} << 19)));
}

/// The q-quantile (0..1) of n values (the value of ascending rank floor(q (n - 1))), read from
/// the largest of them sorted in descending order; 0 for no values.
double quantile_from_largest(const std::vector<double>& largest, std::uint64_t n, double q) {
  if (n == 0 || largest.empty()) return 0.0;
  const auto rank = static_cast<std::uint64_t>(
      std::min<double>(static_cast<double>(n) - 1, std::floor(q * static_cast<double>(n - 1))));
  const std::uint64_t from_top = n - 1 - rank;
  return from_top < largest.size() ? largest[from_top] : largest.back();
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
  const auto trials = static_cast<std::size_t>(num_trials);
  // Per node: the count, the largest value, the log2 histogram and the largest values the
  // percentiles and the tail fit read. Counts, maxima and histograms are sums and maxima; the
  // kept values are the `keep` largest of all, a multiset that does not depend on the order the
  // trials finish in, so the profile is the same for any thread count.
  auto trim = [](std::vector<double>& v, std::size_t keep) {
    if (v.size() <= keep) return;
    std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(keep), v.end(), std::greater<>());
    v.resize(keep);
  };
  struct node_profile {
    std::uint64_t count = 0;
    double max_abs = 0.0;
    std::vector<std::uint64_t> histogram = std::vector<std::uint64_t>(hist_max - hist_min + 1, 0);
    std::size_t keep = 0;
    std::vector<double> largest;
    /// Adds another part's profile of the same node (a trial's, or a process's share).
    void absorb(const node_profile& other, std::size_t keep_count, const decltype(trim)& trim_to) {
      keep = keep_count;
      count += other.count;
      max_abs = std::max(max_abs, other.max_abs);
      for (std::size_t b = 0; b < histogram.size(); ++b) histogram[b] += other.histogram[b];
      largest.insert(largest.end(), other.largest.begin(), other.largest.end());
      if (largest.size() > 2 * keep) trim_to(largest, keep);
    }
  };
  std::vector<node_profile> profile(active.size());
  std::vector<double> conditions(trials, 0.0);  // per trial; 0 without a Gram
  std::mutex mutex;
  // Values per trial of each node (a data node's over all N symbols), for how many to keep.
  std::vector<std::size_t> keep(active.size());
  {
    const auto sizes = values_per_trial(scen);
    for (std::size_t i = 0; i < active.size(); ++i) keep[i] = values_to_keep(sizes[i].second * trials, overflow_prob);
  }
  // In a process group (processes.hpp) this process profiles its share of the trials and the
  // profiles are merged as the threads' are: sums, maxima and the largest values of all.
  const index_range share = own_share(trials);
  auto profile_share = [&] {
    for_each_index_parallel(
        share.size(), num_threads,
        [&](std::size_t k) {
          const std::size_t t = share.begin + k;
          const golden::trial_data trial = golden::run_trial(scen, t);
          // A block-scaled node's words hold mantissas: its range is that of its words' scale.
          std::vector<Eigen::MatrixXcd> extents;
          auto values = datapath::golden_block_values(plan, scen, trial, &extents);
          if (trial.gram.size() > 0) conditions[t] = golden::condition_number(datapath::inverter_gram(plan, values));
          datapath::golden_to_word_scale(plan, values);
          // This trial's profile of each node, over its values (a data node's block by block).
          std::vector<node_profile> mine(active.size());
          auto add_values = [&](std::size_t i, const Eigen::MatrixXcd& g) {
            const bool complex_node = datapath::node_is_complex(active[i]);
            node_profile& p = mine[i];
            for (Eigen::Index e = 0; e < g.size(); ++e) {
              for (const double v : {std::abs(g(e).real()), complex_node ? std::abs(g(e).imag()) : -1.0}) {
                if (v < 0) continue;
                ++p.count;
                p.largest.push_back(v);
                if (v == 0.0) continue;
                p.max_abs = std::max(p.max_abs, v);
                ++p.histogram[static_cast<std::size_t>(
                    std::clamp(static_cast<int>(std::floor(std::log2(v))), hist_min, hist_max) - hist_min)];
              }
            }
            if (p.largest.size() > 2 * keep[i]) trim(p.largest, keep[i]);
          };
          const std::vector<bool> data_node = plan.data_nodes();
          {
            golden::data_stream stream(scen, trial);
            golden::data_block block;
            std::vector<Eigen::MatrixXcd> data_values;
            while (stream.next(block)) {
              datapath::golden_data_values(plan, scen, trial, block, values, data_values);
              for (std::size_t i = 0; i < active.size(); ++i) {
                const Eigen::MatrixXcd& g = data_values[datapath::index_of(active[i])];
                if (data_node[datapath::index_of(active[i])]) add_values(i, g);
              }
            }
          }
          // An accumulator that records its register's extent is profiled on it (the partial sums
          // its register holds), not on its result.
          for (std::size_t i = 0; i < active.size(); ++i) {
            const std::size_t id = datapath::index_of(active[i]);
            if (!data_node[id]) add_values(i, extents[id].size() > 0 ? extents[id] : values[id]);
          }
          const std::lock_guard lock(mutex);
          for (std::size_t i = 0; i < active.size(); ++i) {
            trim(mine[i].largest, keep[i]);
            profile[i].absorb(mine[i], keep[i], trim);
          }
        },
        progress);
  };
  if (!spread_over_processes()) {
    profile_share();
  } else {
    const std::vector<std::string> shares = exchange_shares([&] {
      profile_share();
      wire::writer w;
      for (std::size_t i = 0; i < active.size(); ++i) {
        trim(profile[i].largest, keep[i]);
        w.put(profile[i].count);
        w.put(profile[i].max_abs);
        w.put_vector(profile[i].histogram);
        w.put_vector(profile[i].largest);
      }
      w.put_vector(std::vector<double>(conditions.begin() + static_cast<std::ptrdiff_t>(share.begin),
                                       conditions.begin() + static_cast<std::ptrdiff_t>(share.end)));
      return w.take();
    });
    std::vector<node_profile> merged(active.size());
    std::size_t at = 0;
    for (const std::string& bytes : shares) {
      wire::reader r(bytes);
      for (std::size_t i = 0; i < active.size(); ++i) {
        node_profile theirs;
        theirs.count = r.get<std::uint64_t>();
        theirs.max_abs = r.get<double>();
        const std::size_t bins = theirs.histogram.size();
        theirs.histogram = r.get_vector<std::uint64_t>();
        if (theirs.histogram.size() != bins) throw std::logic_error("a range share has another histogram");
        theirs.largest = r.get_vector<double>();
        merged[i].absorb(theirs, keep[i], trim);
      }
      for (const double c : r.get_vector<double>()) conditions.at(at++) = c;
      if (!r.at_end()) throw std::logic_error("a range share has bytes after its profile");
    }
    if (at != trials) throw std::logic_error("the range shares do not hold every trial once");
    profile = std::move(merged);
  }

  range_results out;
  out.scenario_name = scen.name;
  out.num_trials = trials;
  out.overflow_prob = overflow_prob;
  std::erase(conditions, 0.0);
  if (!conditions.empty()) {
    out.gram_condition_p50 = percentile(conditions, 0.50);
    out.gram_condition_p95 = percentile(conditions, 0.95);
    out.gram_condition_max = *std::max_element(conditions.begin(), conditions.end());
  }
  for (std::size_t i = 0; i < active.size(); ++i) {
    node_profile& p = profile[i];
    trim(p.largest, p.keep);
    std::sort(p.largest.begin(), p.largest.end(), std::greater<>());
    node_range r;
    r.id = active[i];
    r.num_values = p.count;
    r.max_abs = p.max_abs;
    r.log2_histogram = p.histogram;
    r.p99 = quantile_from_largest(p.largest, r.num_values, 0.99);
    r.p9999 = quantile_from_largest(p.largest, r.num_values, 0.9999);
    r.p999999 = quantile_from_largest(p.largest, r.num_values, 0.999999);
    // A quantile at probability p is estimated from at least 10 / p values; below that, the
    // upper confidence bound of a tail fit; where no fit is possible, the largest value seen
    // plus one guard bit.
    if (static_cast<double>(r.num_values) * overflow_prob >= 10.0) {
      r.proposed_int_bits = int_bits_for(quantile_from_largest(p.largest, r.num_values, 1.0 - overflow_prob));
      r.proposal_basis = "quantile";
    } else if ((r.tail = fit_tail_quantile(p.largest, r.num_values, overflow_prob))) {
      // The bound lies beyond the data; it is never taken below the largest value seen.
      r.proposed_int_bits = int_bits_for(std::max(r.tail->upper_bound, r.max_abs));
      r.proposal_basis = "tail";
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
      // A worst-case bound below the statistical proposal holds for every value: nothing more is
      // needed (a block-scaled mantissa, for one).
      if (g->int_bits < r.proposed_int_bits) {
        r.proposed_int_bits = g->int_bits;
        r.proposal_basis = "bound";
      }
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
