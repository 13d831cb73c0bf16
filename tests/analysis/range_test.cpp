// Range profiling (harness/src/range.cpp) against facts from outside the project: the ADC
// samples of an i.i.d. Rayleigh scenario are Gaussian with a variance fixed by the AGC, so their
// percentiles and log2 histogram follow the half-normal law; the proposed integer bits are
// checked by running the bit-true datapath on fresh trials; int_bits_for against std::frexp;
// the analytic growth rules against an exhaustive search over every word of small formats.
#include "fxmimo/analysis/range.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <complex>
#include <limits>
#include <numbers>
#include <ostream>
#include <stdexcept>
#include <string>
#include <vector>

#include "fxmimo/analysis/runner.hpp"

namespace fp = fxmimo::fixedpoint;
namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

// One cell, equal user gains and tau_p = K with Walsh pilots: the pilot block of an antenna is
// sqrt(rho_p) h Phi^T + n with Phi^T Phi^* = tau_p I, so (textbook fact: a unitary map of an
// i.i.d. circular Gaussian vector is i.i.d. circular Gaussian) the tau_p samples of an antenna are
// independent, and so are antennas and trials. Every real or imaginary part of the adc node is
// then an independent N(0, sigma^2 / 2) draw, sigma^2 = 10^(-agc_backoff_db / 10); the binomial
// standard errors below assume exactly that independence.
constexpr double agc_backoff_db = 12.0;
constexpr int num_antennas = 32, num_users = 4;

std::string gaussian_scenario_text() {
  return R"(
name = "range-gauss-32x4"
seed = 20240611
trials = 4
[array]
antennas = 32
[cells]
count = 1
users_per_cell = 4
user_gains_db = [0.0, 0.0, 0.0, 0.0]
[pilots]
length = 4
sequence = "walsh"
snr_db = 10.0
[estimator]
kind = "ls"
[precoder]
kind = "mf"
[data]
modulation = "qpsk"
symbols = 8
snr_db = 10.0
[frontend]
agc_backoff_db = 12.0
)";
}

/// Standard deviation of one real or imaginary part of an adc sample.
double part_sigma() { return std::sqrt(std::pow(10.0, -agc_backoff_db / 10.0) / 2.0); }

/// P(|X| > x) for X ~ N(0, s^2): 2 Q(x / s) = erfc(x / (s sqrt 2)) (textbook fact).
double half_normal_tail(double x, double s) { return std::erfc(x / (s * std::numbers::sqrt2)); }

/// Density of |X| at x: (2 / s) phi(x / s) (textbook fact).
double half_normal_density(double x, double s) {
  const double z = x / s;
  return 2.0 / s * std::exp(-0.5 * z * z) / std::sqrt(2.0 * std::numbers::pi);
}

const h::node_range& find_node(const h::range_results& r, d::node_id id) {
  for (const h::node_range& n : r.nodes)
    if (n.id == id) return n;
  throw std::runtime_error("node not profiled");
}

const h::node_result& find_node(const h::run_results& r, d::node_id id) {
  for (const h::node_result& n : r.nodes)
    if (n.id == id) return n;
  throw std::runtime_error("node not run");
}

std::vector<std::uint64_t> trials_from(int first, int count) {
  std::vector<std::uint64_t> out;
  for (int t = first; t < first + count; ++t) out.push_back(static_cast<std::uint64_t>(t));
  return out;
}

constexpr int profile_trials = 1000;  // 1000 x 32 x 4 x 2 = 256000 adc parts

/// Profiled once and shared (profiling is deterministic: fixed seed, trial-ordered reduction).
const h::range_results& gaussian_profile() {
  static const h::range_results r = [] {
    const g::scenario scen = g::parse_scenario_text(gaussian_scenario_text(), "range-gauss.toml");
    const d::datapath_config config = d::parse_datapath_config(gaussian_scenario_text(), "range-gauss.toml");
    return h::profile_ranges(scen, config, profile_trials, 2, 1e-3);
  }();
  return r;
}

TEST(range, adc_percentiles_match_half_normal_quantiles) {
  const h::node_range& adc = find_node(gaussian_profile(), d::node_id::adc);
  const double n = static_cast<double>(adc.num_values);
  ASSERT_EQ(adc.num_values, std::uint64_t{profile_trials} * num_antennas * num_users * 2);
  const double s = part_sigma();
  // Two-sided standard normal quantiles (standard normal table): P(|X| > s z) = 2 Q(z) = 1 - p.
  struct quantile_case {
    const char* name;
    double p, z, got;
  };
  const quantile_case cases[] = {{"p99", 0.99, 2.5758, adc.p99}, {"p99.99", 0.9999, 3.8906, adc.p9999}};
  for (const quantile_case& c : cases) {
    const double expected = s * c.z;
    // Asymptotic standard error of an empirical p-quantile (textbook fact, order statistics):
    // sqrt(p (1 - p) / n) / f(x_p), f the density of |part|. Five standard errors: a false
    // failure has probability below 1e-6 (normal approximation), while a wrong quantile level
    // (e.g. 99.9 % for 99.99 %) moves the estimate by more than 15 % (> 10 standard errors).
    const double se = std::sqrt(c.p * (1.0 - c.p) / n) / half_normal_density(expected, s);
    EXPECT_NEAR(c.got, expected, 5.0 * se) << c.name << ": sigma_part " << s << ", " << n << " values, seed 20240611";
  }
  // The table values themselves (z) agree with erfc to the printed four decimals.
  EXPECT_NEAR(half_normal_tail(2.5758, 1.0), 0.01, 1e-5);
  EXPECT_NEAR(half_normal_tail(3.8906, 1.0), 1e-4, 1e-7);
  // The 99.9999 % point lies between the 99.99 % point and the maximum.
  EXPECT_LE(adc.p9999, adc.p999999);
  EXPECT_LE(adc.p999999, adc.max_abs);
}

TEST(range, adc_log2_histogram_matches_half_normal_bins) {
  // Bin e counts 2^e <= |part| < 2^(e+1): probability tail(2^e) - tail(2^(e+1)). Each count is
  // binomial (independent parts, see above); tolerance five binomial standard errors plus one
  // count.
  const h::node_range& adc = find_node(gaussian_profile(), d::node_id::adc);
  const double n = static_cast<double>(adc.num_values);
  const double s = part_sigma();
  std::uint64_t total = 0;
  for (std::size_t i = 0; i < adc.log2_histogram.size(); ++i) {
    const int e = adc.hist_min_exp + static_cast<int>(i);
    const double prob = half_normal_tail(std::ldexp(1.0, e), s) - half_normal_tail(std::ldexp(1.0, e + 1), s);
    const double expected = n * prob;
    const double got = static_cast<double>(adc.log2_histogram[i]);
    EXPECT_NEAR(got, expected, 5.0 * std::sqrt(n * prob * (1.0 - prob)) + 1.0) << "bin 2^" << e;
    total += adc.log2_histogram[i];
  }
  EXPECT_EQ(total, adc.num_values) << "a Gaussian sample is never exactly 0";
}

TEST(range, proposed_int_bits_meet_the_overflow_target_on_fresh_trials) {
  // Target overflow probability p = 1e-3 on 256000 values: n p = 256 >= 10, so the proposal
  // rests on the empirical quantile.
  const double p = 1e-3;
  const h::range_results& ranges = gaussian_profile();
  const h::node_range& adc = find_node(ranges, d::node_id::adc);
  ASSERT_EQ(adc.proposal_basis, "quantile");
  const int m = adc.proposed_int_bits;
  // For sigma_part = 0.1775 the 1 - 1e-3 point of |part| is 3.2905 sigma_part = 0.584 (standard
  // normal table), so the smallest m with 2^m above it is 0.
  EXPECT_EQ(m, 0);

  const g::scenario scen = g::parse_scenario_text(gaussian_scenario_text(), "range-gauss.toml");
  const d::datapath_config base = d::parse_datapath_config(gaussian_scenario_text(), "range-gauss.toml");
  const d::datapath_config proposed = h::apply_proposal(base, ranges);
  ASSERT_EQ(proposed[d::node_id::adc].spec.fmt.int_bits(), m);
  ASSERT_EQ(proposed[d::node_id::adc].spec.fmt.frac_bits, base[d::node_id::adc].spec.fmt.frac_bits)
      << "apply_proposal keeps the fraction bits";

  // Fresh trials: indices after the profiled ones, so a different sample of the same law.
  const int num_fresh = 400;  // 400 x 256 = 102400 adc parts
  const auto fresh = trials_from(profile_trials, num_fresh);
  const double n = static_cast<double>(num_fresh) * num_antennas * num_users * 2;
  const double s = part_sigma();

  const h::node_result at_m = find_node(h::run_trials(scen, proposed, fresh, 2), d::node_id::adc);
  ASSERT_EQ(static_cast<double>(at_m.counters.requantized), n);
  // The target, with a binomial margin: rate <= p + 5 sqrt(p (1 - p) / n).
  EXPECT_LE(at_m.overflow_rate(), p + 5.0 * std::sqrt(p * (1.0 - p) / n)) << "Q" << m << " on fresh trials";
  // And what the half-normal law predicts for |part| >= 2^m (2 Q(5.63) = 1.8e-8: none expected;
  // five binomial standard errors of that rate plus one count of slack).
  const double q_m = half_normal_tail(std::ldexp(1.0, m), s);
  EXPECT_LE(at_m.overflow_rate(), q_m + 5.0 * std::sqrt(q_m / n) + 1.0 / n);

  // One integer bit fewer: 2^(m-1) lies below the 1 - p point, so the rate must exceed p; here
  // it is 2 Q(0.5 / 0.1775) = 4.85e-3, about 5 p. What this shows: the proposal is not wasteful
  // by a whole bit for this node (the next narrower format misses the target by far).
  d::datapath_config narrower = proposed;
  fp::format& f = narrower[d::node_id::adc].spec.fmt;
  f = {true, f.word_bits - 1, f.frac_bits};
  const h::node_result at_m1 = find_node(h::run_trials(scen, narrower, fresh, 2), d::node_id::adc);
  const double q_m1 = half_normal_tail(std::ldexp(1.0, m - 1), s);
  EXPECT_GT(at_m1.overflow_rate(), p + 5.0 * std::sqrt(p * (1.0 - p) / n)) << "Q" << m - 1 << " on fresh trials";
  EXPECT_NEAR(at_m1.overflow_rate(), q_m1, 5.0 * std::sqrt(q_m1 * (1.0 - q_m1) / n));
}

TEST(range, int_bits_for_corners_and_definition) {
  // Definition in range.hpp: the smallest m with 2^m > v. std::frexp writes v = f 2^e with
  // 0.5 <= f < 1, so 2^(e-1) <= v < 2^e: that m is e (C standard library fact).
  auto by_frexp = [](double v) {
    int e = 0;
    (void)std::frexp(v, &e);
    return e;
  };
  EXPECT_EQ(h::int_bits_for(0.0), -30);
  EXPECT_EQ(h::int_bits_for(-1.0), -30);
  EXPECT_EQ(h::int_bits_for(std::numeric_limits<double>::quiet_NaN()), -30);
  EXPECT_EQ(h::int_bits_for(std::ldexp(1.0, -60)), -30) << "clamped at -30";
  EXPECT_EQ(h::int_bits_for(1.0), 1) << "Q0.n stops just below 1, so 1 needs m = 1";
  EXPECT_EQ(h::int_bits_for(std::nextafter(1.0, 0.0)), 0);
  EXPECT_EQ(h::int_bits_for(0.5), 0);
  EXPECT_EQ(h::int_bits_for(std::nextafter(0.5, 0.0)), -1);
  EXPECT_EQ(h::int_bits_for(3.0), 2);
  for (int e = -29; e <= 62; ++e) {
    const double pow2 = std::ldexp(1.0, e);
    EXPECT_EQ(h::int_bits_for(pow2), e + 1) << "2^" << e;
    EXPECT_EQ(h::int_bits_for(std::nextafter(pow2, 0.0)), e) << "just below 2^" << e;
    EXPECT_EQ(h::int_bits_for(std::nextafter(pow2, 1e300)), e + 1) << "just above 2^" << e;
    EXPECT_EQ(h::int_bits_for(1.5 * pow2), by_frexp(1.5 * pow2)) << "1.5 * 2^" << e;
  }
}

// ---- analytic worst-case growth ----

/// Every value of a signed format (a few bits): k 2^-F for -2^(W-1) <= k < 2^(W-1).
std::vector<double> all_values(const fp::format& f) {
  std::vector<double> out;
  const long long half = 1LL << (f.word_bits - 1);
  for (long long k = -half; k < half; ++k) out.push_back(std::ldexp(static_cast<double>(k), -f.frac_bits));
  return out;
}

/// Largest |real or imaginary part| of a * conj(b) (or a * b) over every pair of complex words.
double max_part_of_product(const fp::format& fa, const fp::format& fb, bool conjugate) {
  const std::vector<double> va = all_values(fa), vb = all_values(fb);
  double best = 0;
  for (double ar : va)
    for (double ai : va)
      for (double br : vb)
        for (double bi : vb) {
          const std::complex<double> b(br, bi);
          const std::complex<double> prod = std::complex<double>(ar, ai) * (conjugate ? std::conj(b) : b);
          best = std::max({best, std::abs(prod.real()), std::abs(prod.imag())});
        }
  return best;
}

struct growth_case {
  const char* name;
  const char* adc;
  const char* pilot_rom;
  const char* chan_est;
  const char* precoder;
  const char* weights;
  const char* symbols;
  int antennas, pilot_length;
};

void PrintTo(const growth_case& c, std::ostream* os) { *os << c.name; }

class range_analytic : public ::testing::TestWithParam<growth_case> {};

TEST_P(range_analytic, worst_case_rule_holds_every_reachable_accumulator) {
  // The analytic integer bits are a worst case: a signed Qm.n must hold every value the
  // accumulator can reach from words of its input formats (|v| < 2^m). The largest term is found
  // by exhaustive search over every pair of input words (formats of at most 5 bits); all terms of
  // a sum can be that term at once, so the reachable maximum is the number of terms times it. The
  // integer bits needed are int_bits_for of that (definition checked above); the rule may not be
  // smaller, and, being a simple rule, at most one bit larger.
  const growth_case& c = GetParam();
  auto table = [](const char* node, const char* q) {
    return std::string("[nodes.") + node + "]\nformat = \"" + q + "\"\n";
  };
  const std::string text = std::string("name = \"growth\"\nseed = 5\ntrials = 1\n[array]\nantennas = ") +
                           std::to_string(c.antennas) + R"(
[cells]
count = 1
users_per_cell = 2
user_gains_db = [0.0, 0.0]
[pilots]
length = )" + std::to_string(c.pilot_length) +
                           R"(
sequence = "dft"
snr_db = 10.0
[precoder]
kind = "zf"
inversion = "ldl"
normalization = "total"
[data]
modulation = "qpsk"
symbols = 4
snr_db = 10.0
)" + table("adc", c.adc) + table("pilot_rom", c.pilot_rom) +
                           table("chan_est", c.chan_est) + table("precoder", c.precoder) + table("weights", c.weights) +
                           table("symbols", c.symbols);
  const g::scenario scen = g::parse_scenario_text(text, c.name);
  const d::datapath_config config = d::parse_datapath_config(text, c.name);
  const h::range_results r = h::profile_ranges(scen, config, 1, 1, 1e-3);

  auto q = [](const char* s) { return fp::parse_format(s); };
  const int growth_users = 2;
  struct check {
    d::node_id id;
    double worst;
  };
  const check checks[] = {
      // pilot_acc[m,k] = sum over tau_p of adc[m,t] conj(pilot[t,k])
      {d::node_id::pilot_acc, c.pilot_length * max_part_of_product(q(c.adc), q(c.pilot_rom), true)},
      // gram[i,j] = sum over M of conj(h[m,i]) h[m,j] (the diagonal is the case i = j)
      {d::node_id::gram, c.antennas * max_part_of_product(q(c.chan_est), q(c.chan_est), true)},
      // power_acc = sum over M K of |W[m,k]|^2 (total normalisation)
      {d::node_id::power_acc, c.antennas * growth_users * max_part_of_product(q(c.precoder), q(c.precoder), true)},
      // tx_acc[m,n] = sum over K of weights[m,k] symbols[k,n]
      {d::node_id::tx_acc, growth_users * max_part_of_product(q(c.weights), q(c.symbols), false)},
  };
  for (const check& k : checks) {
    const h::node_range& n = find_node(r, k.id);
    ASSERT_TRUE(n.analytic_int_bits.has_value()) << d::node_name(k.id);
    const int needed = h::int_bits_for(k.worst);
    EXPECT_GE(*n.analytic_int_bits, needed)
        << c.name << ": " << d::node_name(k.id) << " reaches " << k.worst << " (rule " << n.analytic_rule << ")";
    EXPECT_LE(*n.analytic_int_bits, needed + 1) << c.name << ": " << d::node_name(k.id) << " rule " << n.analytic_rule;
  }
}

// Term counts at and around powers of two: at a power of two the worst sum is exactly 2^m.
INSTANTIATE_TEST_SUITE_P(
    formats, range_analytic,
    ::testing::Values(growth_case{"tau2_m8", "Q1.2", "Q1.1", "Q1.2", "Q0.3", "Q0.3", "Q1.2", 8, 2},
                      growth_case{"tau3_m9", "Q0.3", "Q1.1", "Q0.3", "Q-1.4", "Q1.1", "Q0.2", 9, 3},
                      growth_case{"tau4_m16", "Q2.1", "Q0.2", "Q2.2", "Q1.2", "Q-1.4", "Q2.1", 16, 4},
                      growth_case{"tau5_m7", "Q-1.4", "Q1.0", "Q-1.5", "Q0.4", "Q0.2", "Q1.3", 7, 5}),
    [](const ::testing::TestParamInfo<growth_case>& test) { return std::string(test.param.name); });

}  // namespace

namespace {

TEST(range, proposal_keeps_an_unsigned_node_unsigned) {
  // power_acc holds a sum of squares (never negative): a team stores it unsigned. The proposal
  // changes the integer bits only: UQm.n with the same n, m + n bits (no sign bit).
  std::string text = gaussian_scenario_text();
  text += "\n[nodes.power_acc]\nformat = \"UQ3.20\"\nrounding = \"floor\"\noverflow = \"saturate\"\n";
  const d::datapath_config base = d::parse_datapath_config(text, "unsigned.toml");
  h::range_results ranges;
  h::node_range r;
  r.id = d::node_id::power_acc;
  r.proposed_int_bits = -2;
  ranges.nodes.push_back(r);
  const fxmimo::fixedpoint::format f = h::apply_proposal(base, ranges)[d::node_id::power_acc].spec.fmt;
  EXPECT_FALSE(f.is_signed);
  EXPECT_EQ(f.frac_bits, 20);
  EXPECT_EQ(f.int_bits(), -2);
  EXPECT_EQ(f.word_bits, 18);
  EXPECT_EQ(fxmimo::fixedpoint::to_q_string(f), "UQ-2.20");
  // Written back into the scenario, it reads as the same unsigned format.
  const std::string written =
      d::scenario_with_nodes(text, h::apply_proposal(base, ranges), {d::node_id::power_acc}, "proposed");
  EXPECT_EQ(d::parse_datapath_config(written, "written.toml")[d::node_id::power_acc].spec.fmt, f);
}

}  // namespace
