// The divide and root nodes built as table + Newton-Raphson units ([units.NODE], README "Divide
// and root units"): the words of inv_diag_recip (LDL^H and Neumann) and norm, and of the units'
// own nodes, recomputed independently from their input nodes' words by the fixedpoint core's
// unit (whose definition tests/fixedpoint/newton_test.cpp checks against Boost.Multiprecision),
// and the exact units when [units] asks for them; the golden views at their limits; the
// scenario errors.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/fixedpoint/divide.hpp"
#include "fxmimo/fixedpoint/newton.hpp"
#include "fxmimo/golden/checked_table.hpp"

namespace fp = fxmimo::fixedpoint;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

std::string example_text() {
  std::ifstream in(std::string(FXMIMO_SOURCE_DIR) + "/examples/quay-96-newton.toml", std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

struct loaded {
  g::scenario scen;
  d::datapath_config config;
};

loaded load(const std::string& text, const std::vector<g::scenario_override>& overrides = {}) {
  const g::scenario_document doc = g::with_overrides(g::parse_scenario_document(text, "quay.toml"), overrides);
  return {g::parse_scenario(doc), d::parse_datapath_config(doc)};
}

/// A unit's output and intermediate nodes (README "Divide and root units").
struct unit_node_ids {
  d::node_id out, rom, mant, square, prod, iter;
};
const unit_node_ids recip_ids{d::node_id::inv_diag_recip, d::node_id::recip_rom,  d::node_id::recip_mant,
                              d::node_id::recip_prod,     d::node_id::recip_prod, d::node_id::recip_iter};
const unit_node_ids norm_ids{d::node_id::norm,     d::node_id::rsqrt_rom,  d::node_id::rsqrt_mant,
                             d::node_id::rsqrt_sq, d::node_id::rsqrt_prod, d::node_id::rsqrt_iter};
const unit_node_ids chol_ids{d::node_id::chol_diag_rsqrt, d::node_id::chol_rsqrt_rom,  d::node_id::chol_rsqrt_mant,
                             d::node_id::chol_rsqrt_sq,   d::node_id::chol_rsqrt_prod, d::node_id::chol_rsqrt_iter};

fp::newton_unit unit_of(const d::datapath_config& c, fp::newton_function f, const g::unit_choice& choice,
                        const unit_node_ids& ids) {
  fp::newton_unit u;
  u.function = f;
  u.seed_bits = choice.seed_bits;
  u.steps = choice.steps;
  u.rom = c[ids.rom].spec;
  u.mant = c[ids.mant].spec;
  u.prod = c[ids.prod].spec;
  u.iter = c[ids.iter].spec;
  if (f == fp::newton_function::rsqrt) u.square = c[ids.square].spec;
  return u;
}

const d::word_matrix& words(const d::fixed_trial& f, d::node_id id) { return f.words[d::index_of(id)]; }

/// Every input word of the unit through the core's unit; the stage's words must be the same.
void expect_unit_words(const d::fixed_trial& f, const d::datapath_config& c, fp::newton_function fn,
                       const g::unit_choice& choice, d::node_id input, bool diagonal, const unit_node_ids& ids) {
  const bool recip = fn == fp::newton_function::reciprocal;
  const fp::newton_unit u = unit_of(c, fn, choice, ids);
  fp::counters rc;
  const std::vector<std::int64_t> rom = fp::newton_rom(u, rc);
  EXPECT_EQ(words(f, ids.rom).re, rom);
  const d::word_matrix& in = words(f, input);
  const int n = diagonal ? in.rows : in.rows * in.cols;
  ASSERT_EQ(words(f, ids.out).rows, n);
  for (int i = 0; i < n; ++i) {
    const std::int64_t x = diagonal ? in.re[in.at(i, i)] : in.re[static_cast<std::size_t>(i)];
    fp::counters oc;
    fp::newton_counters nc;
    fp::newton_trace t;
    const std::int64_t y = fp::newton_evaluate(u, rom, x, c[input].spec.fmt.frac_bits, c[ids.out].spec, oc, nc, t);
    EXPECT_EQ(words(f, ids.out).re[static_cast<std::size_t>(i)], y) << d::node_name(ids.out) << " " << i;
    EXPECT_EQ(words(f, ids.mant).re[static_cast<std::size_t>(i)], t.mant);
    for (int k = 0; k < choice.steps; ++k) {
      const auto ks = static_cast<std::size_t>(k);
      const d::word_matrix& prod = words(f, ids.prod);
      const d::word_matrix& iter = words(f, ids.iter);
      EXPECT_EQ(prod.re[prod.at(i, k)], t.prod[ks]);
      EXPECT_EQ(iter.re[iter.at(i, k)], t.iter[ks]);
      if (!recip) {
        EXPECT_EQ(words(f, ids.square).re[prod.at(i, k)], t.square[ks]);
      }
    }
  }
}

void expect_unit_words(const d::fixed_trial& f, const d::datapath_config& c, fp::newton_function fn,
                       const g::unit_choice& choice, d::node_id input, bool diagonal) {
  expect_unit_words(f, c, fn, choice, input, diagonal, fn == fp::newton_function::reciprocal ? recip_ids : norm_ids);
}

TEST(units, newton_words_of_the_ldl_and_power_stages_are_the_core_units) {
  const loaded l = load(example_text());
  ASSERT_TRUE(l.scen.units.inv_diag_recip.newton);
  ASSERT_TRUE(l.scen.units.norm.newton);
  const d::datapath_plan plan = d::stages_for(l.scen);
  for (std::uint64_t trial = 0; trial < 3; ++trial) {
    const g::trial_data td = g::run_trial(l.scen, trial);
    const d::fixed_trial f = d::run_block_stages(plan, l.scen, l.config, td);
    expect_unit_words(f, l.config, fp::newton_function::reciprocal, l.scen.units.inv_diag_recip, d::node_id::ldl_acc,
                      true);
    expect_unit_words(f, l.config, fp::newton_function::rsqrt, l.scen.units.norm, d::node_id::power_acc, false);
    // The unit's counters counted: one mantissa per user, one product and one iterate per step.
    const auto& mant = f.counters[d::index_of(d::node_id::recip_mant)];
    EXPECT_EQ(mant.requantized, static_cast<std::uint64_t>(l.scen.cells.num_users));
  }
}

TEST(units, newton_in_the_neumann_stage_and_per_antenna_norms) {
  std::ifstream in(std::string(FXMIMO_SOURCE_DIR) + "/examples/tower-128-neumann.toml", std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  const loaded l = load(s.str(), {{"units.inv_diag_recip.kind", "\"newton\""},
                                  {"units.inv_diag_recip.seed_bits", "4"},
                                  {"units.inv_diag_recip.steps", "3"},
                                  {"units.norm.kind", "\"newton\""},
                                  {"units.norm.steps", "1"},
                                  {"precoder.normalization", "\"per_antenna\""}});
  const d::datapath_plan plan = d::stages_for(l.scen);
  EXPECT_EQ(plan.dims.recip_entry, 16);
  EXPECT_EQ(plan.dims.recip_step, 3);
  EXPECT_EQ(plan.dims.rsqrt_entry, 64);
  EXPECT_EQ(plan.dims.rsqrt_step, 1);
  const g::trial_data td = g::run_trial(l.scen, 0);
  const d::fixed_trial f = d::run_block_stages(plan, l.scen, l.config, td);
  expect_unit_words(f, l.config, fp::newton_function::reciprocal, l.scen.units.inv_diag_recip, d::node_id::gram, true);
  expect_unit_words(f, l.config, fp::newton_function::rsqrt, l.scen.units.norm, d::node_id::power_acc, false);
  EXPECT_EQ(words(f, d::node_id::norm).rows, l.scen.array.num_antennas);
}

/// The example with its [units] tables replaced by `units`.
std::string with_units(const std::string& units) {
  std::string text = example_text();
  const auto at = text.find("[units.inv_diag_recip]");
  const auto end = text.find("[data]");
  text.replace(at, end - at, units + "\n");
  return text;
}

TEST(units, exact_units_have_no_nodes_of_their_own_and_divide_exactly) {
  const loaded l = load(with_units("[units.inv_diag_recip]\nkind = \"exact\"\n[units.norm]\nkind = \"exact\""));
  const d::datapath_plan plan = d::stages_for(l.scen);
  for (d::node_id id : {d::node_id::recip_rom, d::node_id::recip_mant, d::node_id::recip_prod, d::node_id::recip_iter,
                        d::node_id::rsqrt_rom, d::node_id::rsqrt_sq})
    EXPECT_FALSE(plan.has(id)) << d::node_name(id);
  const g::trial_data td = g::run_trial(l.scen, 0);
  const d::fixed_trial f = d::run_block_stages(plan, l.scen, l.config, td);
  const d::word_matrix& ldl = words(f, d::node_id::ldl_acc);
  for (int j = 0; j < ldl.rows; ++j) {
    fp::counters c;
    EXPECT_EQ(words(f, d::node_id::inv_diag_recip).re[static_cast<std::size_t>(j)],
              fp::divide<std::int64_t>(1, 0, ldl.re[ldl.at(j, j)], l.config[d::node_id::ldl_acc].spec.fmt.frac_bits,
                                       l.config[d::node_id::inv_diag_recip].spec, c));
  }
  fp::counters c;
  EXPECT_EQ(
      words(f, d::node_id::norm).re[0],
      fp::rsqrt<std::int64_t>(words(f, d::node_id::power_acc).re[0], l.config[d::node_id::power_acc].spec.fmt.frac_bits,
                              l.config[d::node_id::norm].spec, c));
}

TEST(units, golden_views_are_the_limits_of_the_iteration) {
  const loaded l = load(example_text());
  const d::datapath_plan plan = d::stages_for(l.scen);
  const g::trial_data td = g::run_trial(l.scen, 0);
  const std::vector<Eigen::MatrixXcd> v = d::golden_node_values(plan, l.scen, td);
  const Eigen::MatrixXcd& ldl = v[d::index_of(d::node_id::ldl_acc)];
  for (int j = 0; j < ldl.rows(); ++j) {
    int e = 0;
    const double m = std::frexp(ldl(j, j).real(), &e);
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::recip_mant)](j, 0).real(), m);
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::recip_iter)](j, 0).real(), 1.0 / m);
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::recip_prod)](j, 0).real(), 1.0);
  }
  // ROM entry i of the reciprocal holds 1 / (midpoint of [1/2 + i 2^-7, 1/2 + (i+1) 2^-7)).
  const Eigen::MatrixXcd& rom = v[d::index_of(d::node_id::recip_rom)];
  ASSERT_EQ(rom.rows(), 64);
  EXPECT_DOUBLE_EQ(rom(0, 0).real(), 1.0 / (0.5 + 0.5 / 128));
  EXPECT_DOUBLE_EQ(rom(63, 0).real(), 1.0 / (1.0 - 0.5 / 128));
}

TEST(units, scenario_errors_name_the_line_and_key) {
  const auto error_of = [](const std::string& units) {
    try {
      (void)load(with_units(units));
    } catch (const g::scenario_error& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  const std::string text = example_text();
  const auto before = text.substr(0, text.find("[units.inv_diag_recip]"));
  const int line = static_cast<int>(std::count(before.begin(), before.end(), '\n')) + 1;
  EXPECT_EQ(error_of("[units.inv_diag_recip]\nkind = \"exact\"\nsteps = 2"),
            fmt::format("quay.toml:{}: units.inv_diag_recip.steps: only used with kind = \"newton\"", line + 2));
  EXPECT_EQ(error_of("[units.inv_diag_recip]\nkind = \"newton\"\nseed_bits = 17"),
            fmt::format("quay.toml:{}: units.inv_diag_recip.seed_bits: 17 is out of range [1, 16]", line + 2));
  EXPECT_EQ(error_of("[units.inv_diag_recip]\nsteps = 1"),
            fmt::format("quay.toml:{}: units.inv_diag_recip.kind: missing required key", line));
  EXPECT_NE(error_of("[units.divider]\nkind = \"newton\"").find("units.divider: unknown key"), std::string::npos);
  EXPECT_NE(error_of("[units.norm]\nkind = \"table\"").find("units.norm.kind"), std::string::npos);
}

TEST(units, newton_rsqrt_on_the_cholesky_diagonal_is_the_core_unit) {
  // The example with inversion = "cholesky" and the Cholesky diagonal's reciprocal root built as a
  // table + Newton unit (4-bit seed, two steps), its intermediates in formats of their own.
  std::string text = with_units(
      "[units.chol_diag_rsqrt]\nkind = \"newton\"\nseed_bits = 4\nsteps = 2\n[units.norm]\nkind = \"exact\"");
  text.replace(text.find("inversion = \"ldl\""), 17, "inversion = \"cholesky\"");
  text += R"(
[nodes.chol_acc]
format = "Q10.13"
[nodes.chol_rsqrt_rom]
format = "UQ1.11"
[nodes.chol_rsqrt_mant]
format = "UQ1.15"
[nodes.chol_rsqrt_sq]
format = "UQ3.15"
[nodes.chol_rsqrt_prod]
format = "UQ1.17"
[nodes.chol_rsqrt_iter]
format = "UQ2.16"
[nodes.chol_diag_rsqrt]
format = "Q0.20"
[nodes.chol_factor]
format = "Q5.14"
)";
  const loaded l = load(text);
  ASSERT_EQ(l.scen.precoder.inversion, g::inversion_kind::cholesky);
  ASSERT_TRUE(l.scen.units.chol_diag_rsqrt.newton);
  const d::datapath_plan plan = d::stages_for(l.scen);
  EXPECT_EQ(plan.dims.chol_rsqrt_entry, 16);
  EXPECT_EQ(plan.dims.chol_rsqrt_step, 2);
  for (d::node_id id : {d::node_id::recip_rom, d::node_id::inv_diag_recip, d::node_id::rsqrt_rom, d::node_id::ldl_acc})
    EXPECT_FALSE(plan.has(id)) << d::node_name(id);
  for (std::uint64_t trial = 0; trial < 2; ++trial) {
    const g::trial_data td = g::run_trial(l.scen, trial);
    const d::fixed_trial f = d::run_block_stages(plan, l.scen, l.config, td);
    expect_unit_words(f, l.config, fp::newton_function::rsqrt, l.scen.units.chol_diag_rsqrt, d::node_id::chol_acc, true,
                      chol_ids);
    // One mantissa per user; per step one square, one product and one iterate per user.
    const auto users = static_cast<std::uint64_t>(l.scen.cells.num_users);
    EXPECT_EQ(f.counters[d::index_of(d::node_id::chol_rsqrt_mant)].requantized, users);
    EXPECT_EQ(f.counters[d::index_of(d::node_id::chol_rsqrt_sq)].requantized, 2 * users);
    // The factor is computed from the unit's words: l_ij = Q(n_ij s_j) recomputed here.
    const d::word_matrix& acc = words(f, d::node_id::chol_acc);
    const d::word_matrix& s = words(f, d::node_id::chol_diag_rsqrt);
    const d::word_matrix& fac = words(f, d::node_id::chol_factor);
    const fp::requantizer<fp::int128> q(l.config[d::node_id::chol_factor].spec);
    const int frac =
        l.config[d::node_id::chol_acc].spec.fmt.frac_bits + l.config[d::node_id::chol_diag_rsqrt].spec.fmt.frac_bits;
    for (int j = 0; j < acc.rows; ++j) {
      for (int i = j + 1; i < acc.rows; ++i) {
        fp::counters c;
        const fp::int128 sj = s.re[static_cast<std::size_t>(j)];
        EXPECT_EQ(fac.re[fac.at(i, j)], static_cast<std::int64_t>(q(acc.re[acc.at(i, j)] * sj, frac, c)));
        EXPECT_EQ(fac.im[fac.at(i, j)], static_cast<std::int64_t>(q(acc.im[acc.at(i, j)] * sj, frac, c)));
      }
    }
  }
  // Exact unit when asked: the rounded exact 1/sqrt of each residual word, and no unit nodes.
  std::string exact_text = text;
  exact_text.replace(exact_text.find("[units.chol_diag_rsqrt]\nkind = \"newton\"\nseed_bits = 4\nsteps = 2"),
                     std::string("[units.chol_diag_rsqrt]\nkind = \"newton\"\nseed_bits = 4\nsteps = 2").size(),
                     "[units.chol_diag_rsqrt]\nkind = \"exact\"");
  const loaded e = load(exact_text);
  const d::datapath_plan exact_plan = d::stages_for(e.scen);
  EXPECT_FALSE(exact_plan.has(d::node_id::chol_rsqrt_rom));
  const d::fixed_trial f = d::run_block_stages(exact_plan, e.scen, e.config, g::run_trial(e.scen, 0));
  const d::word_matrix& acc = words(f, d::node_id::chol_acc);
  for (int j = 0; j < acc.rows; ++j) {
    fp::counters c;
    EXPECT_EQ(words(f, d::node_id::chol_diag_rsqrt).re[static_cast<std::size_t>(j)],
              fp::rsqrt<std::int64_t>(acc.re[acc.at(j, j)], e.config[d::node_id::chol_acc].spec.fmt.frac_bits,
                                      e.config[d::node_id::chol_diag_rsqrt].spec, c));
  }
}

TEST(units, cholesky_golden_views_are_the_limits_of_the_iteration) {
  std::string text = with_units(
      "[units.chol_diag_rsqrt]\nkind = \"newton\"\nseed_bits = 5\nsteps = 1\n[units.norm]\nkind = \"exact\"");
  text.replace(text.find("inversion = \"ldl\""), 17, "inversion = \"cholesky\"");
  const loaded l = load(text);
  const d::datapath_plan plan = d::stages_for(l.scen);
  const g::trial_data td = g::run_trial(l.scen, 0);
  const std::vector<Eigen::MatrixXcd> v = d::golden_node_values(plan, l.scen, td);
  const Eigen::MatrixXcd& acc = v[d::index_of(d::node_id::chol_acc)];
  for (int j = 0; j < acc.rows(); ++j) {
    // frexp's mantissa, halved for an odd exponent, in [1/4, 1); the iterates' limit 1/sqrt(m),
    // the squares' 1/m, the products' 1 (README "Divide and root units").
    int e = 0;
    double m = std::frexp(acc(j, j).real(), &e);
    if (e % 2 != 0) m /= 2;
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::chol_rsqrt_mant)](j, 0).real(), m);
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::chol_rsqrt_iter)](j, 0).real(), 1.0 / std::sqrt(m));
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::chol_rsqrt_sq)](j, 0).real(), 1.0 / m);
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::chol_rsqrt_prod)](j, 0).real(), 1.0);
    EXPECT_DOUBLE_EQ(v[d::index_of(d::node_id::chol_diag_rsqrt)](j, 0).real(), 1.0 / std::sqrt(acc(j, j).real()));
  }
  EXPECT_EQ(v[d::index_of(d::node_id::chol_rsqrt_rom)].rows(), 32);
}

}  // namespace
