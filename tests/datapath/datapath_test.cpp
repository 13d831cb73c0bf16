// The bit-true datapath (harness/src/datapath.cpp) against a case worked out by hand, against
// the golden model with wide formats, and against quantisation theory (6.02 dB per bit, common
// practice; Widrow & Kollár 2008) and independent overflow counts.
#include "fxmimo/datapath/datapath.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/report/records.hpp"

namespace fp = fxmimo::fixedpoint;
namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace rep = fxmimo::report;
namespace g = fxmimo::golden;

namespace {

/// A test scenario of our own invention: 32 antennas, 4 users with fixed gains, two cells
/// sharing pilots, ZF with LDL^H.
const char* small_scenario = R"(
name = "test-32x4"
seed = 77
trials = 6
[array]
antennas = 32
[cells]
count = 2
users_per_cell = 4
user_gains_db = [0.0, 3.0, 6.0, 1.5]
cross_gain_db = -10.0
[pilots]
length = 4
sequence = "walsh"
snr_db = 10.0
[estimator]
kind = "mmse"
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "16qam"
symbols = 64
snr_db = 15.0
)";

d::datapath_config all_nodes(const fp::target& t) {
  d::datapath_config c;
  for (d::node_setting& s : c.nodes) s = {t, {}, false};
  return c;
}

/// Every node with `frac` fraction bits and integer bits from the golden range of the trials
/// (plus a guard bit), so nothing overflows.
d::datapath_config wide_config(const g::scenario& scen, int frac) {
  d::datapath_config c = all_nodes(d::default_target());
  const h::run_results probe = h::run_trials(scen, c, h::first_trials(scen.num_trials), 1);
  for (const h::node_result& n : probe.nodes) {
    const int int_bits = std::max(1, static_cast<int>(std::ceil(std::log2(n.max_abs_golden + 1e-30))) + 1);
    c[n.id].spec = {{true, 1 + int_bits + frac, frac}, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  }
  return c;
}

TEST(datapath, hand_computed_two_antenna_case) {
  // M = 2, K = 1, tau_p = 1, N = 2, LS estimate, ZF with LDL^H, DAC back-off 0 dB (tx_gain =
  // sqrt(2)). Inputs are set by hand; every expected word below was worked out by hand from the
  // README's arithmetic ("How it computes"), half_even rounding and saturation everywhere.
  const g::scenario scen = g::parse_scenario_text(R"(
name = "hand"
seed = 1
trials = 1
[array]
antennas = 2
[cells]
count = 1
users_per_cell = 1
user_gains_db = [0.0]
[pilots]
length = 1
sequence = "walsh"
snr_db = 0.0
[estimator]
kind = "ls"
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "qpsk"
symbols = 2
snr_db = 10.0
[frontend]
dac_backoff_db = 0.0
)",
                                                  "hand.toml");
  g::trial_data trial;
  trial.adc.resize(2, 1);
  trial.adc << std::complex<double>(1, 2), std::complex<double>(3, -1);
  trial.pilots = Eigen::MatrixXcd::Constant(1, 1, 1.0);
  trial.est_scale = Eigen::VectorXd::Constant(1, 0.5);
  g::data_block block;  // the whole data phase as one block
  block.symbols.resize(1, 2);
  block.symbols << std::complex<double>(1, 1), std::complex<double>(-1, 0);
  d::datapath_config c;
  auto set = [&](d::node_id id, const char* q) {
    c[id] = {{fp::parse_format(q), fp::rounding_mode::half_even, fp::overflow_mode::saturate}, {}, false};
  };
  set(d::node_id::adc, "Q3.4");
  set(d::node_id::pilot_rom, "Q1.2");
  set(d::node_id::pilot_acc, "Q4.4");
  set(d::node_id::est_scale, "Q1.4");
  set(d::node_id::chan_est, "Q4.4");
  set(d::node_id::gram, "Q6.4");
  set(d::node_id::ldl_acc, "Q6.4");
  set(d::node_id::inv_diag_recip, "Q0.8");
  set(d::node_id::inv_factor, "Q0.8");
  set(d::node_id::inv_fwd, "Q1.6");
  set(d::node_id::inv_out, "Q0.8");
  set(d::node_id::precoder, "Q1.6");
  set(d::node_id::power_acc, "Q2.8");
  set(d::node_id::norm, "Q2.8");
  set(d::node_id::tx_gain, "Q2.4");
  set(d::node_id::weights, "Q1.8");
  set(d::node_id::symbols, "Q1.4");
  set(d::node_id::tx_acc, "Q2.8");
  set(d::node_id::dac, "Q0.6");
  const d::datapath_plan plan = d::stages_for(scen);
  d::fixed_trial f = d::run_block_stages(plan, scen, c, trial);
  d::run_data_stages(plan, scen, c, trial, block, f);
  auto words = [&](d::node_id id) { return f.words[d::index_of(id)]; };
  auto expect_words = [&](d::node_id id, std::vector<std::int64_t> re, std::vector<std::int64_t> im) {
    const d::word_matrix& w = f.words[d::index_of(id)];
    EXPECT_EQ(w.re, re) << d::node_name(id) << " real parts";
    if (w.is_complex) {
      EXPECT_EQ(w.im, im) << d::node_name(id) << " imaginary parts";
    }
  };
  expect_words(d::node_id::adc, {16, 48}, {32, -16});        // 1+2j, 3-1j in LSBs of 1/16
  expect_words(d::node_id::pilot_rom, {4}, {0});             // 1 in Q1.2
  expect_words(d::node_id::pilot_acc, {16, 48}, {32, -16});  // y * conj(1)
  expect_words(d::node_id::est_scale, {8}, {});              // 0.5
  expect_words(d::node_id::chan_est, {8, 24}, {16, -8});     // 0.5+1j, 1.5-0.5j
  expect_words(d::node_id::gram, {60}, {0});                 // 1.25 + 2.5 = 3.75
  expect_words(d::node_id::ldl_acc, {60}, {0});              // d = 3.75
  expect_words(d::node_id::inv_diag_recip, {68}, {});        // 256/3.75 = 68.27 -> 68
  expect_words(d::node_id::inv_fwd, {64}, {0});              // y = 1
  expect_words(d::node_id::inv_out, {68}, {0});              // 1 * 68/256
  expect_words(d::node_id::precoder, {8, 26}, {-17, 8});     // 8.5 -> 8 and 25.5 -> 26 (ties to even)
  expect_words(d::node_id::power_acc, {68}, {});             // Q(353/16) + Q(740/16) = 22 + 46
  expect_words(d::node_id::norm, {497}, {});                 // 256/sqrt(68/256) = 496.7
  expect_words(d::node_id::tx_gain, {23}, {});               // 16 sqrt(2) = 22.6
  expect_words(d::node_id::weights, {89, 290}, {-190, 89});  // W * 497 * 23 / 1024
  expect_words(d::node_id::symbols, {16, -16}, {16, 0});
  expect_words(d::node_id::tx_acc, {279, -89, 201, -290}, {-101, 190, 379, -89});
  // dac from frac 8 to 6: 69.75 -> 70 saturates to 63; -25.25 -> -25; -22.25 -> -22; 47.5 -> 48;
  // 50.25 -> 50; 94.75 -> 95 saturates to 63; -72.5 -> -72 saturates to -64; -22.25 -> -22.
  expect_words(d::node_id::dac, {63, -22, 50, -64}, {-25, 48, 63, -22});
  EXPECT_EQ(f.counters[d::index_of(d::node_id::dac)].overflowed, 3U);
  EXPECT_EQ(f.counters[d::index_of(d::node_id::dac)].requantized, 8U);
  EXPECT_TRUE(words(d::node_id::inv_factor).re == std::vector<std::int64_t>{0});
}

// The data nodes of every example scenario's plan are exactly the stage outputs with the symbol
// dimension (README "The datapath as data": they exist one symbol block at a time); the rest of
// the plan runs once per trial.
TEST(datapath, data_nodes_are_the_outputs_with_the_symbol_dimension) {
  for (const char* name : {"rooftop-64.toml", "tower-128-neumann.toml", "village-16-mf.toml", "campus-3-hex.toml",
                           "metro-7-shadowed.toml"}) {
    const g::scenario scen = g::load_scenario_file(std::string(FXMIMO_SOURCE_DIR) + "/examples/" + name);
    const d::datapath_plan plan = d::stages_for(scen);
    const std::vector<bool> data_node = plan.data_nodes();
    int num_data = 0;
    for (const auto& s : plan.stages) {
      for (const d::port& p : s->ports()) {
        const auto dims = d::dims_of(p.node);
        EXPECT_EQ(data_node[d::index_of(p.node)], dims[0] == d::dim::symbol || dims[1] == d::dim::symbol)
            << name << ": " << d::node_name(p.node);
        num_data += data_node[d::index_of(p.node)] ? 1 : 0;
      }
    }
    EXPECT_GE(num_data, 3) << name << ": symbols, tx_acc and dac at least";
  }
}

TEST(datapath, wide_formats_converge_to_the_golden_model) {
  // With 50 fraction bits everywhere the fixed datapath must compute the golden algorithm.
  // Bound on SQNR (derived): each value carries at most ~10^3 rounding errors of one LSB
  // (2^-50) each after error propagation through a Gram matrix with condition number kappa < 100
  // here; the smallest node RMS is above 2^-10. So SQNR >= 20 log10(2^-10 / 2^-50) - 10 log10(10^3)
  // - 20 log10(100) = 240.8 - 30 - 40 = 170 dB; we require 150 dB. The golden model's own double
  // rounding (2^-53 relative) is below that bound.
  const g::scenario scen = g::parse_scenario_text(small_scenario, "test.toml");
  const d::datapath_config c = wide_config(scen, 50);
  const h::run_results r = h::run_trials(scen, c, h::first_trials(scen.num_trials), 2);
  for (const h::node_result& n : r.nodes) {
    EXPECT_GT(n.sqnr_db(), 150.0) << d::node_name(n.id);
    EXPECT_EQ(n.counters.overflowed, 0U) << d::node_name(n.id);
  }
  for (std::size_t k = 0; k < r.users.size(); ++k) {
    EXPECT_NEAR(r.users[k].sinr_fixed_db, r.users[k].sinr_golden_db, 0.001) << "user " << k;
  }
  EXPECT_LT(r.summary.evm_impl_pct, 1e-9);
}

TEST(datapath, sqnr_rises_6_db_per_fraction_bit) {
  // Granular region (common practice: 6.02 dB per bit). Two nodes, each narrowed alone while all
  // others stay wide; 4 extra bits must add 24.1 dB within 1.5 dB (the rounding error of a busy
  // signal is uniform: Widrow & Kollár 2008).
  const g::scenario scen = g::parse_scenario_text(small_scenario, "test.toml");
  const d::datapath_config wide = wide_config(scen, 50);
  for (d::node_id id : {d::node_id::adc, d::node_id::weights}) {
    double sqnr[2] = {};
    for (int i = 0; i < 2; ++i) {
      d::datapath_config c = wide;
      fp::format& f = c[id].spec.fmt;
      const int int_bits = f.int_bits();
      f.frac_bits = 10 + 4 * i;
      f.word_bits = 1 + int_bits + f.frac_bits;
      const h::run_results r = h::run_trials(scen, c, h::first_trials(scen.num_trials), 2);
      for (const h::node_result& n : r.nodes)
        if (n.id == id) sqnr[i] = n.sqnr_db();
    }
    EXPECT_NEAR(sqnr[1] - sqnr[0], 4 * 6.02, 1.5) << d::node_name(id) << ": " << sqnr[0] << " -> " << sqnr[1];
  }
}

TEST(datapath, overflow_counts_match_an_independent_count) {
  // The ADC given too few integer bits (Q-1.12: range [-0.5, 0.5)): the number of overflowing
  // parts is counted here from the golden values alone, in double: a part v overflows when
  // round(v 2^12) leaves [-2048, 2047], i.e. v >= 2047.5 / 4096 or v < -2048.5 / 4096.
  const g::scenario scen = g::parse_scenario_text(small_scenario, "test.toml");
  d::datapath_config c = wide_config(scen, 40);
  std::uint64_t expected = 0;
  for (std::uint64_t t = 0; t < 3; ++t) {
    const g::trial_data trial = g::run_trial(scen, t);
    for (Eigen::Index i = 0; i < trial.adc.size(); ++i) {
      for (double v : {trial.adc(i).real(), trial.adc(i).imag()})
        expected += (v >= 2047.5 / 4096 || v < -2048.5 / 4096);
    }
  }
  ASSERT_GT(expected, 0U) << "the test needs some overflow";
  double sqnr_saturate = 0, sqnr_wrap = 0;
  for (fp::overflow_mode mode : {fp::overflow_mode::saturate, fp::overflow_mode::wrap}) {
    c[d::node_id::adc].spec = {{true, 12, 12}, fp::rounding_mode::half_even, mode};
    const h::run_results r = h::run_trials(scen, c, h::first_trials(3), 1);
    EXPECT_EQ(r.nodes.front().counters.overflowed, expected) << fp::to_string(mode);
    (mode == fp::overflow_mode::wrap ? sqnr_wrap : sqnr_saturate) = r.nodes.front().sqnr_db();
  }
  EXPECT_LT(sqnr_wrap, sqnr_saturate) << "wrapping makes a larger error than clipping";
}

TEST(datapath, bit_identical_for_any_thread_count_and_trial_order) {
  const g::scenario scen = g::parse_scenario_text(small_scenario, "test.toml");
  d::datapath_config c = wide_config(scen, 20);
  const h::run_results one = h::run_trials(scen, c, h::first_trials(6), 1);
  const h::run_results two = h::run_trials(scen, c, h::first_trials(6), 2);
  EXPECT_EQ(rep::to_json(rep::make_record(one)).dump(), rep::to_json(rep::make_record(two)).dump());
  // A trial's words do not depend on which trials ran before it.
  const g::trial_data t3 = g::run_trial(scen, 3);
  const d::fixed_trial a = d::run_fixed_datapath(scen, c, t3);
  (void)d::run_fixed_datapath(scen, c, g::run_trial(scen, 1));
  const d::fixed_trial b = d::run_fixed_datapath(scen, c, g::run_trial(scen, 3));
  for (d::node_id id : d::all_nodes()) {
    EXPECT_EQ(a.words[d::index_of(id)], b.words[d::index_of(id)]) << d::node_name(id);
    EXPECT_EQ(a.counters[d::index_of(id)], b.counters[d::index_of(id)]) << d::node_name(id);
  }
  // Reversed trial order gives the same per-trial summaries.
  const h::run_results reversed = h::run_trials(scen, c, {5, 4, 3, 2, 1, 0}, 2);
  const h::run_results forward = h::run_trials(scen, c, {0, 1, 2, 3, 4, 5}, 1);
  for (std::size_t i = 0; i < forward.nodes.size(); ++i) {
    EXPECT_EQ(forward.nodes[i].counters, reversed.nodes[i].counters);
    EXPECT_EQ(forward.nodes[i].max_err_lsb, reversed.nodes[i].max_err_lsb);
  }
}

// The same with both directions: the shared-inverse ZF uplink and the own-inverse MMSE uplink
// (their nodes, figures, bit counts and LLR decisions in the record) for 1, 2 and 3 threads and
// either trial order.
TEST(datapath, uplink_bit_identical_for_any_thread_count_and_trial_order) {
  for (const char* uplink : {"combiner = \"zf\"\n", "combiner = \"mmse\"\ninverse = \"own\"\n"}) {
    const std::string text =
        std::string(small_scenario) + "[uplink]\nsnr_db = 6.0\nmodulation = \"16qam\"\nsymbols = 48\n" + uplink;
    const g::scenario scen = g::parse_scenario_text(text, "test.toml");
    ASSERT_TRUE(scen.uplink.on);
    const d::datapath_config c = wide_config(scen, 14);
    const std::string one = rep::to_json(rep::make_record(h::run_trials(scen, c, h::first_trials(6), 1))).dump();
    ASSERT_NE(one.find("\"uplink\""), std::string::npos) << "the record carries the uplink";
    for (unsigned threads : {2U, 3U})
      EXPECT_EQ(rep::to_json(rep::make_record(h::run_trials(scen, c, h::first_trials(6), threads))).dump(), one)
          << uplink << threads << " threads";
    const h::run_results reversed = h::run_trials(scen, c, {5, 4, 3, 2, 1, 0}, 2);
    const h::run_results forward = h::run_trials(scen, c, {0, 1, 2, 3, 4, 5}, 1);
    ASSERT_TRUE(forward.uplink && reversed.uplink);
    EXPECT_EQ(forward.uplink->bit_errors_fixed, reversed.uplink->bit_errors_fixed);
    EXPECT_EQ(forward.uplink->llr_sign_flips, reversed.uplink->llr_sign_flips);
    EXPECT_EQ(forward.uplink->sinr_fixed_db, reversed.uplink->sinr_fixed_db);
    for (std::size_t i = 0; i < forward.nodes.size(); ++i)
      EXPECT_EQ(forward.nodes[i].counters, reversed.nodes[i].counters) << d::node_name(forward.nodes[i].id);
  }
}

}  // namespace

namespace {

/// tx_acc in the pairwise order, recomputed here from the weights and symbols words: exact
/// products, each requantised to tx_acc's target, then the tree built level by level exactly as
/// README "How it computes" defines it (adjacent pairs, overflow at every adder, an odd last
/// element passed up), with the saturation written out as a clamp.
std::vector<fp::cword<std::int64_t>> tree_tx_acc(const d::fixed_trial& f, const d::datapath_config& c) {
  const d::word_matrix& w = f.words[d::index_of(d::node_id::weights)];
  const d::word_matrix& s = f.words[d::index_of(d::node_id::symbols)];
  const fp::target acc = c[d::node_id::tx_acc].spec;
  const fp::requantizer<fp::big_int> q(acc);
  const int product_frac = c[d::node_id::weights].spec.fmt.frac_bits + c[d::node_id::symbols].spec.fmt.frac_bits;
  const std::int64_t hi = (std::int64_t{1} << (acc.fmt.word_bits - 1)) - 1, lo = -hi - 1;
  auto clamp = [&](std::int64_t v) { return std::min(hi, std::max(lo, v)); };
  std::vector<fp::cword<std::int64_t>> out;
  for (int m = 0; m < w.rows; ++m) {
    for (int n = 0; n < s.cols; ++n) {
      std::vector<std::int64_t> re, im;
      for (int k = 0; k < w.cols; ++k) {
        const fp::big_int wr = w.re[w.at(m, k)], wi = w.im[w.at(m, k)], sr = s.re[s.at(k, n)], si = s.im[s.at(k, n)];
        fp::counters unused;
        re.push_back(static_cast<std::int64_t>(q(fp::big_int(wr * sr - wi * si), product_frac, unused)));
        im.push_back(static_cast<std::int64_t>(q(fp::big_int(wr * si + wi * sr), product_frac, unused)));
      }
      for (auto* v : {&re, &im}) {
        while (v->size() > 1) {
          std::vector<std::int64_t> next;
          for (std::size_t j = 0; j + 1 < v->size(); j += 2) next.push_back(clamp((*v)[j] + (*v)[j + 1]));
          if (v->size() % 2 == 1) next.push_back(v->back());
          *v = next;
        }
      }
      out.push_back({re[0], im[0]});
    }
  }
  return out;
}

TEST(datapath, pairwise_tx_acc_matches_the_tree_built_by_hand_and_differs_from_sequential) {
  // village-16-mf (examples/, K = 2) widened to K = 5 users with a narrow saturating tx_acc, so
  // that the tree has an odd level and partial sums saturate.
  std::string text = R"(
name = "tree-test"
seed = 31
trials = 1
[array]
antennas = 6
[cells]
count = 1
users_per_cell = 5
user_gains_db = [0.0, 0.0, 0.0, 0.0, 0.0]
[pilots]
length = 5
snr_db = 20.0
[estimator]
kind = "perfect"
[precoder]
kind = "mf"
[data]
modulation = "qpsk"
symbols = 40
snr_db = 20.0
[nodes.weights]
format = "Q0.10"
rounding = "half_even"
overflow = "saturate"
[nodes.symbols]
format = "Q0.8"
rounding = "half_even"
overflow = "saturate"
[nodes.tx_acc]
format = "Q-2.12"
rounding = "half_even"
overflow = "saturate"
order = "pairwise"
)";
  const g::scenario scen = g::parse_scenario_text(text, "tree-test");
  const d::datapath_config tree = d::parse_datapath_config(text, "tree-test");
  d::datapath_config seq = tree;
  seq[d::node_id::tx_acc].order = {};
  const g::trial_data trial = g::run_trial(scen, 0);
  const d::fixed_trial ft = d::run_fixed_datapath(scen, tree, trial);
  const d::fixed_trial fs = d::run_fixed_datapath(scen, seq, trial);
  const std::vector<fp::cword<std::int64_t>> want = tree_tx_acc(ft, tree);
  const d::word_matrix& got = ft.words[d::index_of(d::node_id::tx_acc)];
  ASSERT_EQ(got.size(), want.size());
  for (std::size_t i = 0; i < want.size(); ++i) {
    ASSERT_EQ(got.re[i], want[i].re) << "word " << i;
    ASSERT_EQ(got.im[i], want[i].im) << "word " << i;
  }
  ASSERT_GT(ft.counters[d::index_of(d::node_id::tx_acc)].overflowed, 0U) << "the case must saturate";
  EXPECT_NE(got, fs.words[d::index_of(d::node_id::tx_acc)]) << "saturation order should change some words";
  // Upstream of tx_acc nothing changes.
  EXPECT_EQ(ft.words[d::index_of(d::node_id::weights)], fs.words[d::index_of(d::node_id::weights)]);
}

TEST(datapath, narrow_terms_in_tx_acc_and_gram_match_the_definition_written_out) {
  // tx_acc and gram with term formats (README "How it computes": p' = Q_term(p), then the
  // sequential MAC of Q_acc(p')): recomputed here from the node's input words with unbounded
  // integers, the saturation written out as a clamp. The same configuration without term
  // formats must differ (the narrowing must matter), and upstream words must not.
  std::string text = R"(
name = "terms-test"
seed = 41
trials = 1
[array]
antennas = 12
[cells]
count = 1
users_per_cell = 3
user_gains_db = [0.0, 2.0, 4.0]
[pilots]
length = 4
sequence = "walsh"
snr_db = 15.0
[estimator]
kind = "ls"
[precoder]
kind = "zf"
[data]
modulation = "16qam"
symbols = 24
snr_db = 20.0
[nodes.chan_est]
format = "Q4.11"
rounding = "half_even"
overflow = "saturate"
[nodes.gram]
format = "Q9.13"
rounding = "half_even"
overflow = "saturate"
term_format = "Q9.6"
[nodes.weights]
format = "Q0.12"
rounding = "half_even"
overflow = "saturate"
[nodes.symbols]
format = "Q1.10"
rounding = "half_even"
overflow = "saturate"
[nodes.tx_acc]
format = "Q1.16"
rounding = "half_even"
overflow = "saturate"
term_format = "Q1.9"
term_rounding = "toward_zero"
)";
  const g::scenario scen = g::parse_scenario_text(text, "terms-test");
  const d::datapath_config narrow = d::parse_datapath_config(text, "terms-test");
  d::datapath_config plain = narrow;
  plain[d::node_id::tx_acc].order = {};
  plain[d::node_id::gram].order = {};
  const g::trial_data trial = g::run_trial(scen, 0);
  const d::fixed_trial fn = d::run_fixed_datapath(scen, narrow, trial);
  const d::fixed_trial fp_plain = d::run_fixed_datapath(scen, plain, trial);

  // One sum of the definition: terms p (exact, at p_frac) through Q_term, then Q_acc, summed
  // sequentially with a clamp (saturate).
  const auto mac = [](const std::vector<fp::big_int>& terms, int p_frac, const d::node_setting& s) {
    const fp::requantizer<fp::big_int> q_acc(s.spec);
    const fp::requantizer<fp::big_int> q_term(fp::target{*s.order.term_format, s.order.term_rounding, s.spec.overflow});
    fp::counters unused;
    const fp::big_int hi = fp::pow2<fp::big_int>(s.spec.fmt.word_bits - 1) - 1, lo = -hi - 1;
    fp::big_int acc = 0;
    for (const fp::big_int& p : terms) {
      acc += q_acc(q_term(p, p_frac, unused), s.order.term_format->frac_bits, unused);
      acc = acc > hi ? hi : acc < lo ? lo : acc;
    }
    return static_cast<std::int64_t>(acc);
  };
  const d::word_matrix& w = fn.words[d::index_of(d::node_id::weights)];
  const d::word_matrix& sy = fn.words[d::index_of(d::node_id::symbols)];
  const d::word_matrix& tx = fn.words[d::index_of(d::node_id::tx_acc)];
  const int tx_frac = narrow[d::node_id::weights].spec.fmt.frac_bits + narrow[d::node_id::symbols].spec.fmt.frac_bits;
  for (int m = 0; m < w.rows; ++m) {
    for (int n = 0; n < sy.cols; ++n) {
      std::vector<fp::big_int> re, im;
      for (int k = 0; k < w.cols; ++k) {
        const fp::big_int wr = w.re[w.at(m, k)], wi = w.im[w.at(m, k)], sr = sy.re[sy.at(k, n)],
                          si = sy.im[sy.at(k, n)];
        re.push_back(wr * sr - wi * si);
        im.push_back(wr * si + wi * sr);
      }
      ASSERT_EQ(tx.re[tx.at(m, n)], mac(re, tx_frac, narrow[d::node_id::tx_acc])) << "tx_acc " << m << "," << n;
      ASSERT_EQ(tx.im[tx.at(m, n)], mac(im, tx_frac, narrow[d::node_id::tx_acc])) << "tx_acc " << m << "," << n;
    }
  }
  // gram[i,j], j <= i: terms chan_est[m,j] conj(chan_est[m,i]) over m.
  const d::word_matrix& h = fn.words[d::index_of(d::node_id::chan_est)];
  const d::word_matrix& gr = fn.words[d::index_of(d::node_id::gram)];
  const int g_frac = 2 * narrow[d::node_id::chan_est].spec.fmt.frac_bits;
  for (int i = 0; i < h.cols; ++i) {
    for (int j = 0; j <= i; ++j) {
      std::vector<fp::big_int> re, im;
      for (int m = 0; m < h.rows; ++m) {
        const fp::big_int ar = h.re[h.at(m, j)], ai = h.im[h.at(m, j)], br = h.re[h.at(m, i)], bi = h.im[h.at(m, i)];
        re.push_back(ar * br + ai * bi);
        im.push_back(ai * br - ar * bi);
      }
      EXPECT_EQ(gr.re[gr.at(i, j)], mac(re, g_frac, narrow[d::node_id::gram])) << "gram " << i << "," << j;
      EXPECT_EQ(gr.im[gr.at(i, j)], mac(im, g_frac, narrow[d::node_id::gram])) << "gram " << i << "," << j;
    }
  }
  EXPECT_NE(tx, fp_plain.words[d::index_of(d::node_id::tx_acc)]) << "narrow terms should change some tx_acc words";
  EXPECT_NE(gr, fp_plain.words[d::index_of(d::node_id::gram)]) << "narrow terms should change some gram words";
  EXPECT_EQ(h, fp_plain.words[d::index_of(d::node_id::chan_est)]);
}

}  // namespace
