// Operating points and statistics (analysis/src/statistics.cpp, sweep.cpp's key sweep, tune.cpp's
// corners, golden::with_overrides) against outside facts:
// - percentile: definition 7 of Hyndman & Fan (1996), numpy.percentile's default; the values of
//   the worked example are numpy's (from memory: numpy.percentile([1, 2, 3, 4, 10], 90) = 7.6).
// - rate_upper_bound: Garwood's (1936) one-sided 95 % Poisson upper limits for k = 0, 1, 2, 5
//   events, 2.996, 4.744, 6.296, 10.513 (standard tables, e.g. Gehrels, ApJ 303, 1986, Table 1;
//   from memory); k = 0 is the rule of three (common practice).
// - the matched filter's interference: with perfect CSI in i.i.d. Rayleigh fading at equal gains,
//   user k's interference over signal in a block is sum_j |h_k^T h_j^*|^2 / ||h_k||^4, whose mean is
//   (K - 1) E[1 / ||h_k||^2] = (K - 1) / (M - 1) (||h_k||^2 is Gamma(M, 1), E[1/X] = 1/(M - 1);
//   a handbook fact of the chi-square law, e.g. Papoulis & Pillai 2002): it falls as 1/M.
// - a corner tune meets the limits at every corner, and its integer bits are the largest of the
//   corners' own range proposals.
#include <gtest/gtest.h>

#include <cmath>
#include <string>
#include <vector>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/statistics.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/checked_table.hpp"

namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

/// Our own small scenario: one cell, 4 users at equal gain, perfect CSI, i.i.d. Rayleigh, MF.
const char* mf_text = R"(name = "mf-equal-4"
seed = 99
trials = 100
[array]
antennas = 16
[cells]
count = 1
users_per_cell = 4
user_gains_db = [0.0, 0.0, 0.0, 0.0]
[channel]
model = "rayleigh"
[pilots]
length = 4
sequence = "walsh"
snr_db = 10.0
[estimator]
kind = "perfect"
[precoder]
kind = "mf"
[data]
modulation = "qpsk"
symbols = 64
snr_db = 20.0
)";

/// Our own: 8 antennas, 2 users, ZF with LDL^H, every node at the wide default.
const char* zf_text = R"(name = "corner-8x2"
seed = 515
trials = 6
[array]
antennas = 8
[cells]
count = 1
users_per_cell = 2
user_gains_db = [0.0, -3.0]
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

/// Our own: one hexagonal cell of 16 antennas, users dropped with 3 dB shadowing, ZF with LDL^H.
const char* hex_text = R"(name = "corner-hex"
seed = 616
trials = 12
[array]
antennas = 16
[cells]
count = 1
users_per_cell = 2
radius_m = 200.0
min_distance_m = 60.0
shadowing_db = 3.0
[pilots]
length = 4
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

}  // namespace

TEST(statistics, percentile_is_numpys_default) {
  EXPECT_DOUBLE_EQ(h::percentile({1, 2, 3, 4, 10}, 0.9), 7.6);
  EXPECT_DOUBLE_EQ(h::percentile({10, 4, 3, 2, 1}, 0.5), 3.0);
  EXPECT_DOUBLE_EQ(h::percentile({1, 2, 3, 4}, 0.5), 2.5);
  EXPECT_DOUBLE_EQ(h::percentile({5}, 0.95), 5.0);
  EXPECT_DOUBLE_EQ(h::percentile({1, 2}, 0.0), 1.0);
  EXPECT_DOUBLE_EQ(h::percentile({1, 2}, 1.0), 2.0);
}

TEST(statistics, rate_bound_is_garwoods_and_the_rule_of_three) {
  EXPECT_NEAR(h::rate_upper_bound(0, 1000) * 1000, 2.9957, 1e-4);
  EXPECT_NEAR(h::rate_upper_bound(1, 1), 4.744, 1e-3);
  EXPECT_NEAR(h::rate_upper_bound(2, 1), 6.296, 1e-3);
  EXPECT_NEAR(h::rate_upper_bound(5, 10) * 10, 10.513, 1e-3);
  EXPECT_TRUE(std::isinf(h::rate_upper_bound(0, 0)));
}

TEST(statistics, sample_plans_follow_the_sparsest_node_and_the_budget) {
  const g::scenario scen = g::parse_scenario_text(zf_text, "corner-8x2.toml");
  const auto sizes = h::values_per_trial(scen);
  std::uint64_t sparsest = UINT64_MAX;
  for (const auto& [id, v] : sizes) sparsest = std::min(sparsest, v);
  EXPECT_EQ(sparsest, 1U) << "power_acc, norm and tx_gain hold one value per trial with total normalisation";
  // 10 / p values at p = 1e-3: 10^4 trials, affordable within a day's budget.
  const h::sample_plan a = h::range_trial_plan(scen, 1e-3, 0, 6, 86400);
  EXPECT_EQ(a.needed, 10000U);
  EXPECT_EQ(a.trials, 10000U);
  EXPECT_FALSE(a.capped);
  // A budget of 0 s gives the floor; a given count is taken as given.
  const h::sample_plan b = h::range_trial_plan(scen, 1e-3, 0, 6, 0.0);
  EXPECT_EQ(b.trials, 6U);
  EXPECT_TRUE(b.capped);
  EXPECT_EQ(h::range_trial_plan(scen, 1e-3, 123, 6, 0.0).trials, 123U);
  // Verification: -ln(0.05) / limit values, ceil(2995.7) = 2996 trials for a 1e-3 limit.
  EXPECT_EQ(h::verify_trial_plan(scen, 1e-3, 0, 6, 86400).trials, 2996U);
}

TEST(overrides, set_keys_and_name_them_in_errors) {
  const g::scenario_document doc = g::parse_scenario_document(zf_text, "corner-8x2.toml");
  const g::scenario s = g::parse_scenario(g::with_overrides(doc, {{"data.snr_db", "7.5"},
                                                                  {"cells.user_gains_db", "[1.0, 2.0, 3.0]"},
                                                                  {"cells.users_per_cell", "3"},
                                                                  {"pilots.length", "4"}}));
  EXPECT_EQ(s.data.snr_db, 7.5);
  EXPECT_EQ(s.cells.num_users, 3);
  EXPECT_EQ(s.cells.user_gains_db, (std::vector<double>{1.0, 2.0, 3.0}));
  // A table the file lacks is created.
  const g::scenario c =
      g::parse_scenario(g::with_overrides(doc, {{"channel.model", "\"correlated\""}, {"channel.correlation", "0.25"}}));
  EXPECT_EQ(c.channel.model, g::channel_model::correlated);
  EXPECT_EQ(c.channel.correlation, 0.25);
  // 3 users with 2 gains: the scenario's own check, naming the override.
  try {
    (void)g::parse_scenario(g::with_overrides(doc, {{"cells.users_per_cell", "3"}}));
    ADD_FAILURE() << "no error";
  } catch (const g::scenario_error& e) {
    EXPECT_NE(std::string(e.what()).find("corner-8x2.toml [cells.users_per_cell=3]"), std::string::npos) << e.what();
  }
  EXPECT_THROW((void)g::with_overrides(doc, {{"data.snr_db", "ten"}}), g::scenario_error);
  EXPECT_THROW((void)g::with_overrides(doc, {{"data", "1"}}), g::scenario_error);
  EXPECT_THROW((void)g::parse_override("data.snr_db"), std::invalid_argument);
  EXPECT_EQ(g::parse_override("a.b=[1, 2]").value, "[1, 2]");
}

TEST(key_sweep, matched_filter_interference_falls_as_k_minus_1_over_m_minus_1) {
  const g::scenario_document doc = g::parse_scenario_document(mf_text, "mf-equal-4.toml");
  const std::vector<std::string> values{"16", "64", "256"};
  std::vector<g::scenario> scenarios;
  for (const std::string& v : values)
    scenarios.push_back(g::parse_scenario(g::with_overrides(doc, {{"array.antennas", v}})));
  const d::datapath_config config = d::parse_datapath_config(doc);
  const h::key_sweep_results r = h::run_key_sweep(scenarios, values, "array.antennas", config, h::first_trials(100), 2);
  ASSERT_EQ(r.points.size(), 3U);
  for (std::size_t i = 0; i < r.points.size(); ++i) {
    const double m = std::stod(values[i]);
    const double expected = (4.0 - 1.0) / (m - 1.0);
    const double measured = std::pow(10.0, r.points[i].interference_db / 10.0);
    // 100 trials x 4 users: the mean of the per-block ratio within 10 % (its spread over blocks is
    // about that of 1/chi-square; the LS gain over 64 symbols adds O(1/N)).
    EXPECT_NEAR(measured / expected, 1.0, 0.10) << "M = " << m;
    if (i > 0) {
      EXPECT_LT(r.points[i].interference_db, r.points[i - 1].interference_db - 5.0) << "M = " << m;
    }
    // The same point as a plain run of the overridden scenario.
    const h::run_results plain = h::run_trials(scenarios[i], config, h::first_trials(100), 2);
    EXPECT_EQ(plain.summary.sinr_loss_db, r.points[i].summary.sinr_loss_db);
    // The precoding accumulator sums K products per antenna: its growth does not depend on M,
    // while power_acc (a sum over M K terms) needs more integer bits as M grows.
    double power_max = -1;
    for (const h::node_result& n : plain.nodes) {
      if (n.id == d::node_id::power_acc) power_max = n.max_abs_golden;
    }
    bool power_found = false;
    for (const auto& [id, bits] : r.points[i].growth_int_bits) {
      if (id != d::node_id::power_acc) continue;
      power_found = true;
      EXPECT_EQ(bits, h::int_bits_for(power_max));
      if (i > 0) {
        for (const auto& [id0, bits0] : r.points[i - 1].growth_int_bits) {
          if (id0 == id) {
            EXPECT_GT(bits, bits0) << "power_acc's growth with M";
          }
        }
      }
    }
    EXPECT_TRUE(power_found);
  }
}

TEST(key_sweep, refuses_a_value_that_changes_the_algorithm) {
  const g::scenario_document doc = g::parse_scenario_document(mf_text, "mf-equal-4.toml");
  std::vector<g::scenario> scenarios{g::parse_scenario(doc),
                                     g::parse_scenario(g::with_overrides(doc, {{"precoder.kind", "\"zf\""}}))};
  EXPECT_THROW((void)h::run_key_sweep(scenarios, {"\"mf\"", "\"zf\""}, "precoder.kind", d::parse_datapath_config(doc),
                                      h::first_trials(2), 1),
               std::invalid_argument);
}

TEST(corners, one_set_of_widths_meets_the_limits_at_every_corner) {
  // Three SNRs and two user counts of one scenario (hexagonal gains, so the user count is one key).
  const g::scenario_document doc = g::parse_scenario_document(hex_text, "corner-hex.toml");
  const d::datapath_config start = d::parse_datapath_config(doc);
  std::vector<h::tune_corner> corners;
  for (const char* snr : {"5", "15", "25"}) {
    for (const char* users : {"2", "4"}) {
      const std::string name = std::string("data.snr_db=") + snr + ", cells.users_per_cell=" + users;
      corners.push_back(
          {name,
           g::parse_scenario(g::with_overrides(doc, {{"data.snr_db", snr}, {"cells.users_per_cell", users}})),
           {12, 200, 30}});
    }
  }
  const h::tune_limits limits{0.25, 2.0, 1e-2};
  const h::tune_results r = h::tune_widths_at_corners(corners, start, limits, h::cost_model::bits, 2, 1e-3, 0.4);
  ASSERT_EQ(r.corners.size(), 6U);
  EXPECT_TRUE(r.met) << r.note;
  for (const h::corner_outcome& c : r.corners) {
    EXPECT_TRUE(c.met) << c.name;
    // Each corner's verification is a plain run of the tuned widths on its fresh trials.
    std::size_t i = 0;
    while (corners[i].name != c.name) ++i;
    const h::tune_figures again = h::figures_of(h::run_trials(corners[i].scen, r.config, c.verify_trials, 1), limits);
    EXPECT_EQ(again.evm_pct, c.verification.evm_pct) << c.name;
    EXPECT_TRUE(again.meets(limits)) << c.name;
    for (std::uint64_t t : c.verify_trials) EXPECT_GE(t, 200U) << "trial " << t << " was range-profiled";
  }
  // Integer bits: the largest of the corners' own proposals, and the corner named is one that
  // proposes them.
  for (std::size_t n = 0; n < r.nodes.size(); ++n) {
    int largest = -1000;
    for (const h::tune_corner& c : corners) {
      const h::range_results own = h::profile_ranges(c.scen, start, 200, 1, 1e-3);
      largest = std::max(largest, own.nodes[n].proposed_int_bits);
      if (c.name == r.int_bits_corner[n]) {
        EXPECT_EQ(own.nodes[n].proposed_int_bits, r.config[r.nodes[n]].spec.fmt.int_bits()) << d::node_name(r.nodes[n]);
      }
    }
    EXPECT_EQ(r.config[r.nodes[n]].spec.fmt.int_bits(), largest) << d::node_name(r.nodes[n]);
  }
  // The worst figures are the maxima over the corners.
  double worst_evm = 0;
  for (const h::corner_outcome& c : r.corners) worst_evm = std::max(worst_evm, c.verification.evm_pct);
  EXPECT_EQ(r.verification.evm_pct, worst_evm);
  // At least one node's last fraction bit is for some corner (the limits bind somewhere).
  bool some_binding = false;
  for (const std::string& name : r.frac_bits_corner) some_binding = some_binding || !name.empty();
  EXPECT_TRUE(some_binding);
}
