// Block floating point on the channel estimate ([block_float.chan_est], README "Block floating
// point"): the estimate's mantissas and exponents recomputed from pilot_acc and est_scale with
// exact rationals (Boost.Multiprecision cpp_rational) and the round-half-even rule written out
// here; the power-of-two invariance (scaling the estimate's input by 2^k changes only the
// exponent words, bit for bit, down to the inverse); every exponent law checked against the
// golden values at wide formats; the exponent's range limits; the scenario errors.
#include "fxmimo/datapath/block_float.hpp"

#include <fmt/core.h>
#include <gtest/gtest.h>

#include <boost/multiprecision/cpp_int.hpp>
#include <cmath>
#include <string>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/golden/checked_table.hpp"

namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;
namespace mp = boost::multiprecision;

namespace {

// Three cells, 32 antennas, 4 users each, 8 dB shadowing: user gains a few decades apart (our
// own invention, for these checks only).
std::string scenario_text(const std::string& extra) {
  return R"(name = "bfp-check"
seed = 4242
trials = 2
[array]
antennas = 32
[cells]
count = 3
users_per_cell = 4
radius_m = 400.0
min_distance_m = 30.0
pathloss_exponent = 3.6
shadowing_db = 8.0
[channel]
model = "rayleigh"
[pilots]
length = 4
sequence = "walsh"
snr_db = 10.0
reuse = 1
[estimator]
kind = "mmse"
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "16qam"
symbols = 16
snr_db = 20.0
[block_float.chan_est]
block = "user"
top = 12
[nodes.pilot_acc]
format = "Q3.24"
[nodes.est_scale]
format = "Q8.20"
[nodes.chan_est]
format = "Q0.15"
rounding = "half_even"
[nodes.est_exp]
format = "UQ5.0"
)" + extra;
}

struct loaded {
  g::scenario scen;
  d::datapath_config config;
};

loaded load(const std::string& text) {
  const g::scenario_document doc = g::parse_scenario_document(text, "bfp.toml");
  return {g::parse_scenario(doc), d::parse_datapath_config(doc)};
}

const d::word_matrix& words(const d::fixed_trial& f, d::node_id id) { return f.words[d::index_of(id)]; }

/// round(x) to an integer, ties to even (the node's mode in the scenario above), on exact rationals.
mp::cpp_int round_half_even(const mp::cpp_rational& x) {
  mp::cpp_int fl = mp::numerator(x) / mp::denominator(x);
  if (fl * mp::denominator(x) > mp::numerator(x)) --fl;  // floor for negatives
  const mp::cpp_rational rest = x - mp::cpp_rational(fl);
  if (rest > mp::cpp_rational(1, 2) || (rest == mp::cpp_rational(1, 2) && (fl % 2) != 0)) return fl + 1;
  return fl;
}

mp::cpp_rational pow2(int e) {
  return e >= 0 ? mp::cpp_rational(mp::cpp_int(1) << e) : mp::cpp_rational(1, mp::cpp_int(1) << -e);
}

TEST(block_float, estimate_words_are_the_exact_rule) {
  const loaded l = load(scenario_text(""));
  const d::datapath_plan plan = d::stages_for(l.scen);
  ASSERT_TRUE(d::has_block_float(plan));
  ASSERT_TRUE(plan.has(d::node_id::est_exp));
  const g::trial_data trial = g::run_trial(l.scen, 0);
  const d::fixed_trial f = d::run_fixed_datapath(plan, l.scen, l.config, trial);
  const d::word_matrix &acc = words(f, d::node_id::pilot_acc), &scale = words(f, d::node_id::est_scale),
                       &est = words(f, d::node_id::chan_est), &ex = words(f, d::node_id::est_exp);
  const int f_acc = l.config[d::node_id::pilot_acc].spec.fmt.frac_bits,
            f_scale = l.config[d::node_id::est_scale].spec.fmt.frac_bits;
  const int f_est = 15, top = 12, u_max = 31;
  int columns_below_top = 0;
  for (int k = 0; k < acc.cols; ++k) {
    // The exponent: the smallest e in [top - 31, top] at which every rounded part is in [-1, 1).
    const auto mantissa = [&](int m, bool imag, int e) {
      const std::int64_t a = imag ? acc.im[acc.at(m, k)] : acc.re[acc.at(m, k)];
      const mp::cpp_rational value = mp::cpp_rational(mp::cpp_int(a) * scale.re[static_cast<std::size_t>(k)]) *
                                     pow2(-(f_acc + f_scale)) * pow2(-e);
      return round_half_even(value * pow2(f_est));
    };
    const auto fits = [&](int e) {
      for (int m = 0; m < acc.rows; ++m)
        for (bool imag : {false, true}) {
          const mp::cpp_int w = mantissa(m, imag, e);
          if (w >= (mp::cpp_int(1) << f_est) || w < -(mp::cpp_int(1) << f_est)) return false;
        }
      return true;
    };
    int e = top;
    while (e > top - u_max && fits(e - 1)) --e;
    ASSERT_TRUE(fits(e)) << "column " << k;
    EXPECT_EQ(ex.re[static_cast<std::size_t>(k)], top - e) << "column " << k;
    for (int m = 0; m < acc.rows; ++m) {
      EXPECT_EQ(mp::cpp_int(est.re[est.at(m, k)]), mantissa(m, false, e)) << m << "," << k;
      EXPECT_EQ(mp::cpp_int(est.im[est.at(m, k)]), mantissa(m, true, e)) << m << "," << k;
    }
    columns_below_top += e < top ? 1 : 0;
  }
  // The users' gains span decades: the exponents differ (otherwise the check above is weak).
  const auto [lo, hi] = std::minmax_element(ex.re.begin(), ex.re.end());
  EXPECT_GE(*hi - *lo, 3);
  EXPECT_EQ(columns_below_top, acc.cols);
  EXPECT_EQ(f.counters[d::index_of(d::node_id::chan_est)].overflowed, 0U);
}

/// Runs the block stages with the words of `scaled` replaced by base * 2^k after its stage.
d::fixed_trial run_scaled(const d::datapath_plan& plan, const loaded& l, const g::trial_data& trial, int k,
                          d::node_id scaled = d::node_id::pilot_acc) {
  d::fixed_trial out;
  out.words.resize(d::node_count());
  out.counters.resize(d::node_count());
  d::fixed_context ctx{l.scen, trial, l.config, out.words, out.counters};
  const std::vector<bool> data = plan.data_stages();
  for (std::size_t i = 0; i < plan.stages.size(); ++i) {
    if (data[i]) continue;
    plan.stages[i]->compute(ctx);
    if (!plan.stages[i]->outputs(scaled)) continue;
    d::word_matrix& w = out.words[d::index_of(scaled)];
    for (auto* part : {&w.re, &w.im})
      for (std::int64_t& v : *part) {
        v &= ~std::int64_t{7};  // the base: low bits cleared, so that 2^-3 is exact too
        v = k >= 0 ? v * (std::int64_t{1} << k) : v / (std::int64_t{1} << -k);
      }
  }
  return out;
}

TEST(block_float, scaling_the_input_by_a_power_of_two_changes_only_the_exponents) {
  const loaded l = load(scenario_text(""));
  const d::datapath_plan plan = d::stages_for(l.scen);
  const g::trial_data trial = g::run_trial(l.scen, 1);
  const d::fixed_trial base = run_scaled(plan, l, trial, 0);
  for (int k : {-3, -1, 1, 2, 3}) {
    const d::fixed_trial scaled = run_scaled(plan, l, trial, k);
    // Every node that carries the exponents (estimate to inverse) is the same, bit for bit.
    int same = 0;
    for (d::node_id id : plan.nodes()) {
      if (id == d::node_id::est_exp || !(d::index_of(id) < d::index_of(d::node_id::precoder))) continue;
      if (id == d::node_id::pilot_acc) continue;
      EXPECT_EQ(words(scaled, id).re, words(base, id).re) << d::node_name(id) << " k=" << k;
      EXPECT_EQ(words(scaled, id).im, words(base, id).im) << d::node_name(id) << " k=" << k;
      ++same;
    }
    EXPECT_GE(same, 8);
    // The exponents move by k: u_k = top - e_k falls by k.
    const d::word_matrix &u0 = words(base, d::node_id::est_exp), &u1 = words(scaled, d::node_id::est_exp);
    for (std::size_t i = 0; i < u0.re.size(); ++i) EXPECT_EQ(u1.re[i], u0.re[i] - k) << "user " << i << " k=" << k;
  }
}

TEST(block_float, scaling_the_inverse_by_a_power_of_two_changes_only_the_precoder_exponent) {
  const loaded l = load(scenario_text("[block_float.precoder]\nblock = \"whole\"\ntop = 6\n"));
  const d::datapath_plan plan = d::stages_for(l.scen);
  ASSERT_TRUE(plan.has(d::node_id::pre_exp));
  const g::trial_data trial = g::run_trial(l.scen, 1);
  const d::fixed_trial base = run_scaled(plan, l, trial, 0, d::node_id::inv_out);
  for (int k : {-3, -1, 1, 3}) {
    const d::fixed_trial scaled = run_scaled(plan, l, trial, k, d::node_id::inv_out);
    // W = H G^-1 scales by 2^k: its mantissas, the power, its reciprocal root and the weights
    // stay the same, bit for bit; only the exponent moves (f = top - u rises by k).
    for (d::node_id id : {d::node_id::precoder, d::node_id::power_acc, d::node_id::norm, d::node_id::weights}) {
      EXPECT_EQ(words(scaled, id).re, words(base, id).re) << d::node_name(id) << " k=" << k;
      EXPECT_EQ(words(scaled, id).im, words(base, id).im) << d::node_name(id) << " k=" << k;
    }
    EXPECT_EQ(d::fixed_block_exponents(plan, l.config, scaled.words).whole,
              d::fixed_block_exponents(plan, l.config, base.words).whole + k)
        << k;
  }
  // The precoder's mantissas use the format: the largest part lies in [1/2, 1).
  std::int64_t largest = 0;
  for (const auto* part : {&words(base, d::node_id::precoder).re, &words(base, d::node_id::precoder).im})
    for (std::int64_t w : *part) largest = std::max(largest, std::abs(w));
  const int f = l.config[d::node_id::precoder].spec.fmt.frac_bits;
  EXPECT_GE(largest, std::int64_t{1} << (f - 1));
  EXPECT_LE(largest, std::int64_t{1} << f);
}

TEST(block_float, every_exponent_law_matches_the_golden_values_at_wide_formats) {
  // Each case: the [precoder] table, and whether the precoder is block-scaled too.
  const std::string whole = "[block_float.precoder]\nblock = \"whole\"\ntop = 6\n";
  const std::vector<std::pair<std::string, bool>> cases{
      {"[precoder]\nkind = \"zf\"\ninversion = \"ldl\"\n", false},
      {"[precoder]\nkind = \"rzf\"\n", false},
      {"[precoder]\nkind = \"zf\"\ninversion = \"neumann\"\nneumann_terms = 6\n", false},
      {"[precoder]\nkind = \"mf\"\n", false},
      {"[precoder]\nkind = \"zf\"\ninversion = \"ldl\"\n", true},
      {"[precoder]\nkind = \"rzf\"\nnormalization = \"per_antenna\"\n", true},
      {"[precoder]\nkind = \"mf\"\n", true}};
  for (const auto& [precoder, whole_block] : cases) {
    const std::string variant = precoder + (whole_block ? whole : "");
    std::string text = scenario_text("");
    {
      // Replace the [precoder] table by the case's.
      const auto at = text.find("[precoder]"), end = text.find("[data]");
      text = text.substr(0, at) + variant + text.substr(end);
    }
    // Wide mantissas: everything but the estimate stays at the default Q20.43.
    text.replace(text.find("format = \"Q0.15\""), 16, "format = \"Q0.40\"");
    const loaded l = load(text);
    const d::datapath_plan plan = d::stages_for(l.scen);
    const g::trial_data trial = g::run_trial(l.scen, 0);
    const d::fixed_trial f = d::run_fixed_datapath(plan, l.scen, l.config, trial);
    const std::vector<Eigen::MatrixXcd> golden = d::golden_node_values(plan, l.scen, trial);
    const d::block_exponents e = d::fixed_block_exponents(plan, l.config, f.words);
    const d::block_exponents eg = d::golden_block_exponents(plan, golden);
    EXPECT_EQ(e.user, eg.user);
    EXPECT_EQ(e.whole, eg.whole);
    int carrying = 0;
    for (d::node_id id : plan.nodes()) {
      if (plan.data_nodes()[d::index_of(id)]) continue;
      Eigen::MatrixXcd value = d::to_values(words(f, id), l.config[id].spec.fmt.frac_bits);
      d::apply_exponent_law(plan, id, value, e, +1);
      const Eigen::MatrixXcd& want = golden[d::index_of(id)];
      ASSERT_EQ(value.rows(), want.rows()) << d::node_name(id);
      const double rel = (value - want).norm() / std::max(want.norm(), 1e-300);
      EXPECT_LT(rel, 1e-3) << d::node_name(id) << " law {" << plan.law_of(id).row << ", " << plan.law_of(id).col
                           << "} in " << variant;
      carrying += plan.law_of(id).carries() ? 1 : 0;
    }
    // The estimate alone with MF; with an inverter also the Gram and the inverter's nodes; with
    // a block-scaled precoder also the precoder, power_acc and norm.
    EXPECT_GE(carrying, (l.scen.precoder.kind == g::precoder_kind::mf ? 1 : 4) + (whole_block ? 3 : 0)) << variant;
    if (whole_block) {
      EXPECT_EQ(plan.law_of(d::node_id::power_acc), (d::exponent_law{0, 0, 2}));
      EXPECT_FALSE(plan.law_of(d::node_id::weights).carries());
    }
  }
}

TEST(block_float, precoder_of_scaled_estimate_matches_the_fixed_point_chain) {
  // With wide formats, block floating point and fixed binary points give the same precoder to
  // a few LSB of Q20.43 (the precoder undoes the exponents).
  std::string text = scenario_text("");
  text.replace(text.find("format = \"Q0.15\""), 16, "format = \"Q0.40\"");
  const loaded with = load(text);
  std::string plain_text = text;
  plain_text.erase(plain_text.find("[block_float.chan_est]"),
                   plain_text.find("[nodes.pilot_acc]") - plain_text.find("[block_float.chan_est]"));
  plain_text.replace(plain_text.find("format = \"Q0.40\""), 16, "format = \"Q12.40\"");
  const loaded without = load(plain_text);
  EXPECT_FALSE(d::has_block_float(d::stages_for(without.scen)));
  const g::trial_data trial = g::run_trial(with.scen, 0);
  const d::fixed_trial a = d::run_fixed_datapath(d::stages_for(with.scen), with.scen, with.config, trial);
  const d::fixed_trial b = d::run_fixed_datapath(d::stages_for(without.scen), without.scen, without.config, trial);
  const Eigen::MatrixXcd wa = d::to_values(words(a, d::node_id::precoder), 43),
                         wb = d::to_values(words(b, d::node_id::precoder), 43);
  EXPECT_LT((wa - wb).norm() / wb.norm(), 1e-6);
  EXPECT_GT(wb.norm(), 0.0);
}

TEST(block_float, exponent_width_limits_the_shift_and_top_limits_the_range) {
  // est_exp of two bits: u <= 3, so columns whose values are small keep mantissas below 1/2.
  std::string text = scenario_text("");
  text.replace(text.find("format = \"UQ5.0\""), 16, "format = \"UQ2.0\"");
  const loaded narrow = load(text);
  const g::trial_data trial = g::run_trial(narrow.scen, 0);
  const d::datapath_plan plan = d::stages_for(narrow.scen);
  const d::fixed_trial f = d::run_fixed_datapath(plan, narrow.scen, narrow.config, trial);
  const d::word_matrix &u = words(f, d::node_id::est_exp), &est = words(f, d::node_id::chan_est);
  int clamped = 0;
  for (int k = 0; k < est.cols; ++k) {
    EXPECT_LE(u.re[static_cast<std::size_t>(k)], 3);
    std::int64_t largest = 0;
    for (int m = 0; m < est.rows; ++m)
      largest = std::max({largest, std::abs(est.re[est.at(m, k)]), std::abs(est.im[est.at(m, k)])});
    if (u.re[static_cast<std::size_t>(k)] == 3 && largest < (1 << 14)) ++clamped;
  }
  EXPECT_GE(clamped, 1);  // at top = 12 every column here needs more than 3 shifts
  // A top below the values: the estimate overflows by its mode and counts it.
  std::string low = scenario_text("");
  low.replace(low.find("top = 12"), 8, "top = -30");
  const loaded l = load(low);
  const d::fixed_trial o = d::run_fixed_datapath(d::stages_for(l.scen), l.scen, l.config, trial);
  EXPECT_GT(o.counters[d::index_of(d::node_id::chan_est)].overflowed, 0U);
  for (std::int64_t w : words(o, d::node_id::est_exp).re) EXPECT_EQ(w, 0);
}

TEST(block_float, scenario_errors_name_the_key) {
  const auto error_of = [](const std::string& text) -> std::string {
    try {
      (void)g::parse_scenario_text(text, "bfp.toml");
    } catch (const g::scenario_error& e) {
      return e.what();
    }
    return "no error";
  };
  std::string no_top = scenario_text("");
  no_top.replace(no_top.find("top = 12\n"), 9, "");
  EXPECT_NE(error_of(no_top).find("block_float.chan_est.top: missing required key"), std::string::npos)
      << error_of(no_top);
  std::string block = scenario_text("");
  block.replace(block.find("block = \"user\""), 14, "block = \"antenna\"");
  EXPECT_NE(error_of(block).find("block_float.chan_est.block"), std::string::npos) << error_of(block);
  std::string other = scenario_text("[block_float.gram]\nblock = \"user\"\n");
  EXPECT_NE(error_of(other).find("block_float.gram: unknown key"), std::string::npos) << error_of(other);
  std::string perfect = scenario_text("");
  perfect.replace(perfect.find("kind = \"mmse\""), 13, "kind = \"perfect\"");
  EXPECT_NE(error_of(perfect).find("block_float.chan_est: a block exponent is found by the estimate stage"),
            std::string::npos)
      << error_of(perfect);
  std::string cholesky = scenario_text("");
  cholesky.replace(cholesky.find("inversion = \"ldl\""), 17, "inversion = \"cholesky\"");
  EXPECT_NE(error_of(cholesky).find("LDL^H and Neumann inverters only"), std::string::npos) << error_of(cholesky);
  const std::string by_user = scenario_text("[block_float.precoder]\nblock = \"user\"\ntop = 3\n");
  EXPECT_NE(error_of(by_user).find("block_float.precoder.block"), std::string::npos) << error_of(by_user);
  std::string far = scenario_text("");
  far.replace(far.find("top = 12"), 8, "top = 99");
  EXPECT_NE(error_of(far).find("block_float.chan_est.top: 99 is out of range [-64, 64]"), std::string::npos)
      << error_of(far);
}

}  // namespace
