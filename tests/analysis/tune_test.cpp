// Word-length search (harness/src/tune.cpp): the greedy search against exhaustive search on
// synthetic separable cost surfaces small enough to enumerate (15^3 points); the behaviour when
// no setting can meet the limits; and tune_widths on a tiny scenario, whose verification must use
// trials of its own and whose verdict must agree with its figures.
#include "fxmimo/analysis/tune.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <ostream>
#include <random>
#include <string>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/report/report.hpp"

namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;
namespace fp = fxmimo::fixedpoint;

namespace {

constexpr int num_vars = 3, bits_lo = 0, bits_hi = 14;

/// A synthetic surface: variable i rounds with 2^-x_i, adding noise a_i 4^-x_i (rounding noise
/// power falls 6.02 dB per bit, common practice); the noises add (independent stages). The EVM
/// is 100 sqrt(noise) % (EVM is the RMS error over the RMS signal, unit signal), the SINR loss
/// 10 log10(1 + noise / 0.01) dB (a receiver at 20 dB SNR losing to the added noise), no
/// overflow. Both figures rise strictly with the noise, so they are monotone in every x_i.
struct surface {
  std::vector<double> a, c;  ///< noise weights, cost per bit
  h::tune_limits limits;

  [[nodiscard]] double noise(const std::vector<int>& x) const {
    double n = 0;
    for (std::size_t i = 0; i < x.size(); ++i) n += a[i] * std::pow(4.0, -x[i]);
    return n;
  }
  [[nodiscard]] h::tune_figures figures(const std::vector<int>& x) const {
    const double n = noise(x);
    return {10.0 * std::log10(1.0 + n / 0.01), 100.0 * std::sqrt(n), 0.0};
  }
  [[nodiscard]] double cost(const std::vector<int>& x) const {
    double s = 0;
    for (std::size_t i = 0; i < x.size(); ++i) s += c[i] * x[i];
    return s;
  }
};

struct surface_case {
  std::string name;
  surface s;
  bool within_one_bit = true;  ///< checked strictly (named cases) or reported (random cases)
};

void PrintTo(const surface_case& c, std::ostream* os) { *os << c.name; }

std::string describe(const std::vector<int>& x) {
  std::string out = "(";
  for (std::size_t i = 0; i < x.size(); ++i) out += (i ? ", " : "") + std::to_string(x[i]);
  return out + ")";
}

/// Every cheapest point meeting the limits, by enumeration of all 15^3 points.
std::vector<std::vector<int>> exhaustive_optima(const surface& s, double& best_cost) {
  std::vector<std::vector<int>> optima;
  best_cost = 1e300;
  std::vector<int> x(num_vars, bits_lo);
  for (x[0] = bits_lo; x[0] <= bits_hi; ++x[0])
    for (x[1] = bits_lo; x[1] <= bits_hi; ++x[1])
      for (x[2] = bits_lo; x[2] <= bits_hi; ++x[2]) {
        if (!s.figures(x).meets(s.limits)) continue;
        const double cost = s.cost(x);
        if (cost < best_cost - 1e-9) {
          best_cost = cost;
          optima.clear();
        }
        if (cost <= best_cost + 1e-9) optima.push_back(x);
      }
  return optima;
}

std::vector<surface_case> surface_cases() {
  std::vector<surface_case> out;
  // Named cases: equal weights and costs; one noisy stage; one expensive stage; the SINR limit
  // binding rather than the EVM limit.
  out.push_back({"equal", {{1, 1, 1}, {1, 1, 1}, {10.0, 0.5, 1e-6}}, true});
  out.push_back({"one_noisy_stage", {{100, 1, 1}, {1, 1, 1}, {10.0, 0.2, 1e-6}}, true});
  out.push_back({"one_expensive_stage", {{1, 1, 1}, {8, 1, 1}, {10.0, 0.3, 1e-6}}, true});
  // Exhaustive optimum (14, 14, 11), cost 358: two cheap bits buy what one costly bit would.
  out.push_back({"very_expensive_stage", {{1, 1, 1}, {1, 1, 30}, {10.0, 0.05, 1e-6}}, true});
  out.push_back({"noisy_cheap_costly_quiet", {{100, 0.01, 0.01}, {1, 12, 12}, {10.0, 0.2, 1e-6}}, true});
  out.push_back({"sinr_limit_binds", {{3, 0.3, 30}, {2, 5, 1}, {0.01, 100.0, 1e-6}}, true});
  // Random cases from a fixed seed: a_i log-uniform over [0.01, 100], c_i in [1, 8], the EVM
  // limit 2 to 300 times (log-uniform) what 14 bits everywhere give, so every case is feasible.
  std::mt19937_64 rng(20240611);
  std::uniform_real_distribution<double> u01(0.0, 1.0);
  for (int i_case = 0; i_case < 24; ++i_case) {
    surface s;
    for (int i = 0; i < num_vars; ++i) {
      s.a.push_back(std::pow(10.0, -2.0 + 4.0 * u01(rng)));
      s.c.push_back(1.0 + 7.0 * u01(rng));
    }
    const double widest_evm = s.figures(std::vector<int>(num_vars, bits_hi)).evm_pct;
    s.limits = {10.0, widest_evm * std::pow(10.0, std::log10(2.0) + std::log10(150.0) * u01(rng)), 1e-6};
    out.push_back({"seed20240611_case" + std::to_string(i_case), s, false});
  }
  return out;
}

class tune_greedy : public ::testing::TestWithParam<surface_case> {};

TEST_P(tune_greedy, within_one_bit_of_an_exhaustive_optimum_and_meets_limits) {
  const surface& s = GetParam().s;
  double best_cost = 0;
  const std::vector<std::vector<int>> optima = exhaustive_optima(s, best_cost);
  ASSERT_FALSE(optima.empty()) << "case must be feasible";
  int evaluations = 0;
  const std::vector<int> lo(num_vars, bits_lo), hi(num_vars, bits_hi);
  const std::vector<int> x = h::greedy_search(
      lo, hi, [&](const std::vector<int>& v) { return s.figures(v); },
      [&](const std::vector<int>& v) { return s.cost(v); }, s.limits, evaluations);
  ASSERT_EQ(x.size(), static_cast<std::size_t>(num_vars));
  EXPECT_TRUE(s.figures(x).meets(s.limits)) << "greedy " << describe(x);
  bool near_one = false;
  for (const std::vector<int>& o : optima) {
    bool near = true;
    for (int i = 0; i < num_vars; ++i)
      near = near && std::abs(x[static_cast<std::size_t>(i)] - o[static_cast<std::size_t>(i)]) <= 1;
    near_one = near_one || near;
  }
  const std::string report = "greedy " + describe(x) + " cost " + std::to_string(s.cost(x)) + "; exhaustive optimum " +
                             describe(optima.front()) + " cost " + std::to_string(best_cost) + " (" +
                             std::to_string(optima.size()) + " optima)";
  if (GetParam().within_one_bit) {
    EXPECT_TRUE(near_one) << report;
  } else if (!near_one) {
    // Seen on 2 of the 24 random cases: a near tie in cost whose optimum lies several bits away
    // (a 3-variable exchange no add/remove pass makes). Reported, and bounded in cost below.
    std::printf("note: %s: not within one bit per variable: %s\n", GetParam().name.c_str(), report.c_str());
  }
  // Being within one bit per variable of an optimum costs at most sum_i c_i more; the greedy result
  // must never cost more than that.
  double one_bit_each = 0;
  for (double c : s.c) one_bit_each += c;
  EXPECT_LE(s.cost(x), best_cost + one_bit_each + 1e-9) << report;
  EXPECT_GE(s.cost(x), best_cost - 1e-9) << "no point meeting the limits is cheaper than the exhaustive optimum";
  EXPECT_GT(evaluations, 0);
  EXPECT_LT(evaluations, 15 * 15 * 15) << "the search should not cost an enumeration";
}

INSTANTIATE_TEST_SUITE_P(surfaces, tune_greedy, ::testing::ValuesIn(surface_cases()),
                         [](const ::testing::TestParamInfo<surface_case>& test) { return test.param.name; });

TEST(tune, greedy_returns_the_widest_setting_when_even_it_fails) {
  // EVM limit below what 14 bits everywhere give (100 sqrt(3 * 4^-14) % = 0.0106 %).
  const surface s{{1, 1, 1}, {1, 2, 3}, {10.0, 0.01, 1e-6}};
  int evaluations = 0;
  const std::vector<int> lo(num_vars, bits_lo), hi(num_vars, bits_hi);
  const std::vector<int> x = h::greedy_search(
      lo, hi, [&](const std::vector<int>& v) { return s.figures(v); },
      [&](const std::vector<int>& v) { return s.cost(v); }, s.limits, evaluations);
  EXPECT_EQ(x, hi);
  EXPECT_EQ(evaluations, 1) << "one look at the widest setting decides it";
}

/// A tiny scenario of our own: 8 antennas, 2 users, ZF with LDL^H, QPSK.
const char* tiny_scenario_text = R"(
name = "tune-8x2"
seed = 99
trials = 2
[array]
antennas = 8
[cells]
count = 1
users_per_cell = 2
user_gains_db = [0.0, -2.0]
[pilots]
length = 2
sequence = "walsh"
snr_db = 15.0
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "qpsk"
symbols = 32
snr_db = 20.0
)";

TEST(tune, impossible_limits_say_so) {
  const g::scenario scen = g::parse_scenario_text(tiny_scenario_text, "tune-8x2.toml");
  const d::datapath_config start = d::parse_datapath_config(tiny_scenario_text, "tune-8x2.toml");
  // A negative SINR loss of 1 dB would need the fixed datapath to beat the double one by 1 dB.
  const h::tune_limits limits{-1.0, 1.0, 1e-3};
  const h::tune_results r = h::tune_widths(scen, start, limits, h::cost_model::bits, {2, 2, 2}, 1, 1e-2, 0.2);
  EXPECT_FALSE(r.met);
  EXPECT_FALSE(r.note.empty());
  EXPECT_FALSE(r.verification.meets(limits));
  // The widest setting: 40 fraction bits, or what fills a 64-bit word.
  for (d::node_id id : r.nodes) {
    const auto& f = r.config[id].spec.fmt;
    EXPECT_EQ(f.frac_bits, std::min(40, 63 - f.int_bits())) << d::node_name(id);
  }
}

TEST(tune, tiny_scenario_meets_limits_on_fresh_trials) {
  const g::scenario scen = g::parse_scenario_text(tiny_scenario_text, "tune-8x2.toml");
  const d::datapath_config start = d::parse_datapath_config(tiny_scenario_text, "tune-8x2.toml");
  const h::tune_limits limits{0.2, 2.0, 1e-3};
  const int num_trials = 8;
  const std::size_t range_trials = 300, verify_trials = 40;
  const h::tune_results r =
      h::tune_widths(scen, start, limits, h::cost_model::bits, {num_trials, range_trials, verify_trials}, 2, 1e-6, 0.5);
  EXPECT_TRUE(r.met) << r.note;
  std::printf("tune-8x2: %d evaluations, cost %g, verification SINR loss %g dB, EVM %g %%\n", r.evaluations, r.cost,
              r.verification.sinr_loss_db, r.verification.evm_pct);
  EXPECT_EQ(r.met, r.verification.meets(limits)) << "the verdict is the verification's";
  EXPECT_TRUE(r.verification.meets(limits))
      << "SINR loss " << r.verification.sinr_loss_db << " dB, EVM " << r.verification.evm_pct << " %, overflow "
      << r.verification.max_overflow_rate;
  EXPECT_TRUE(r.met == r.note.empty()) << r.note;
  // Verification trials: as many as asked, none of them searched or profiled (range trials are
  // 0 .. range_trials - 1).
  EXPECT_EQ(r.search_trials.size(), static_cast<std::size_t>(num_trials));
  EXPECT_EQ(r.verify_trials.size(), verify_trials);
  EXPECT_EQ(r.range_trials, range_trials);
  for (std::uint64_t t : r.verify_trials) {
    EXPECT_EQ(std::count(r.search_trials.begin(), r.search_trials.end(), t), 0) << "trial " << t << " in both sets";
    EXPECT_GE(t, range_trials) << "trial " << t << " was range-profiled";
  }
  // The verification figures are run_trials of the result on those trials; the proven bound is
  // the largest node bound there, 2.996 / n for a node with no overflow in n values.
  const h::run_results fresh = h::run_trials(scen, r.config, r.verify_trials, 1);
  const h::tune_figures again = h::figures_of(fresh, limits);
  double largest_bound = 0;
  for (const h::node_result& n : fresh.nodes) largest_bound = std::max(largest_bound, n.overflow_rate_bound());
  EXPECT_EQ(r.proven_overflow_bound, largest_bound);
  for (const h::node_result& n : fresh.nodes) {
    if (n.id == r.weakest_node && n.counters.overflowed == 0) {
      EXPECT_NEAR(r.proven_overflow_bound * static_cast<double>(n.counters.requantized), -std::log(0.05), 1e-9);
    }
  }
  EXPECT_EQ(again.sinr_loss_db, r.verification.sinr_loss_db);
  EXPECT_EQ(again.evm_pct, r.verification.evm_pct);
  EXPECT_EQ(again.max_overflow_rate, r.verification.max_overflow_rate);
  // Cost model bits: the sum of the active nodes' word bits.
  double word_bits = 0;
  for (d::node_id id : d::active_nodes(scen)) word_bits += r.config[id].spec.fmt.word_bits;
  EXPECT_EQ(h::datapath_cost(scen, r.config, h::cost_model::bits), word_bits);
  EXPECT_EQ(r.cost, word_bits);
  // Narrower than the wide start: the search did remove bits.
  EXPECT_LT(word_bits, 64.0 * static_cast<double>(r.nodes.size()));
}

// LLR clipping (common practice: a soft decoder takes LLRs in a fixed range, and clipping them
// at it is the design): the ul_llr node at a deliberately small saturating range (Q1.1, clip at
// 2 grid units squared; 16-QAM distance differences reach 4 (L - 1) |x| = 12 |x|) clips most of
// its values. tune keeps it as the scenario sets it, holds its clips to no overflow-rate limit
// and proves its bound on the other nodes; run does not warn about it. With overflow = "wrap"
// the same overflows are overflows: ul_llr is a variable again and run warns.
TEST(tune, llr_clipping_is_the_scenario_choice_not_an_overflow) {
  const std::string text = std::string(tiny_scenario_text) +
                           "[uplink]\nsnr_db = 10.0\nmodulation = \"16qam\"\nsymbols = 24\ncombiner = \"zf\"\n"
                           "[nodes.ul_llr]\nformat = \"Q1.1\"\nrounding = \"half_even\"\noverflow = \"saturate\"\n";
  const g::scenario scen = g::parse_scenario_text(text, "tune-llr.toml");
  const d::datapath_config start = d::parse_datapath_config(text, "tune-llr.toml");
  ASSERT_TRUE(d::clips_by_design(d::node_id::ul_llr, start[d::node_id::ul_llr].spec));
  const h::run_results before = h::run_trials(scen, start, h::first_trials(2), 1);
  const h::node_result* llr = nullptr;
  for (const h::node_result& n : before.nodes)
    if (n.id == d::node_id::ul_llr) llr = &n;
  ASSERT_NE(llr, nullptr);
  EXPECT_GT(llr->overflow_rate(), 0.2) << "the test needs an LLR node that clips";
  EXPECT_TRUE(llr->clips());
  for (const std::string& w : before.warnings) EXPECT_EQ(w.find("ul_llr"), std::string::npos) << w;

  const h::tune_limits limits{0.3, 3.0, 1e-3};
  const h::tune_results r = h::tune_widths(scen, start, limits, h::cost_model::bits, {4, 200, 20}, 2, 1e-4, 0.3);
  EXPECT_EQ(r.kept_nodes, std::vector<d::node_id>{d::node_id::ul_llr});
  EXPECT_EQ(std::count(r.nodes.begin(), r.nodes.end(), d::node_id::ul_llr), 0);
  EXPECT_EQ(r.config[d::node_id::ul_llr].spec, start[d::node_id::ul_llr].spec);
  // The verification's overflow figure and proven bound are those of the other nodes.
  const h::run_results fresh = h::run_trials(scen, r.config, r.verify_trials, 1);
  double other_rate = 0, other_bound = 0;
  for (const h::node_result& n : fresh.nodes) {
    if (n.id == d::node_id::ul_llr) {
      EXPECT_GT(n.counters.overflowed, 0U) << "still clipping on the fresh trials";
      continue;
    }
    other_rate = std::max(other_rate, n.overflow_rate());
    other_bound = std::max(other_bound, n.overflow_rate_bound());
  }
  EXPECT_EQ(r.verification.max_overflow_rate, other_rate);
  EXPECT_EQ(r.proven_overflow_bound, other_bound);
  EXPECT_NE(r.weakest_node, d::node_id::ul_llr);
  // The table shows the kept node with its reason.
  const std::string table = fxmimo::report::format_tune_table(r);
  EXPECT_NE(table.find("ul_llr          Q1.1           3         1         1  kept as the scenario sets it"),
            std::string::npos)
      << table;

  // Wrapping LLRs are not clipped: an overflow like any other.
  d::datapath_config wrapping = start;
  wrapping[d::node_id::ul_llr].spec.overflow = fp::overflow_mode::wrap;
  EXPECT_FALSE(d::clips_by_design(d::node_id::ul_llr, wrapping[d::node_id::ul_llr].spec));
  const h::run_results wrapped = h::run_trials(scen, wrapping, h::first_trials(2), 1);
  bool warned = false;
  for (const std::string& w : wrapped.warnings)
    warned = warned || w.find("node ul_llr overflowed") != std::string::npos;
  EXPECT_TRUE(warned);
  EXPECT_GT(h::figures_of(wrapped, limits).max_overflow_rate, 0.2);
}

}  // namespace
