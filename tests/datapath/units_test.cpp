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

fp::newton_unit unit_of(const d::datapath_config& c, fp::newton_function f, const g::unit_choice& choice) {
  const bool recip = f == fp::newton_function::reciprocal;
  fp::newton_unit u;
  u.function = f;
  u.seed_bits = choice.seed_bits;
  u.steps = choice.steps;
  u.rom = c[recip ? d::node_id::recip_rom : d::node_id::rsqrt_rom].spec;
  u.mant = c[recip ? d::node_id::recip_mant : d::node_id::rsqrt_mant].spec;
  u.prod = c[recip ? d::node_id::recip_prod : d::node_id::rsqrt_prod].spec;
  u.iter = c[recip ? d::node_id::recip_iter : d::node_id::rsqrt_iter].spec;
  if (!recip) u.square = c[d::node_id::rsqrt_sq].spec;
  return u;
}

const d::word_matrix& words(const d::fixed_trial& f, d::node_id id) { return f.words[d::index_of(id)]; }

/// Every input word of the unit through the core's unit; the stage's words must be the same.
void expect_unit_words(const d::fixed_trial& f, const d::datapath_config& c, fp::newton_function fn,
                       const g::unit_choice& choice, d::node_id input, bool diagonal) {
  const bool recip = fn == fp::newton_function::reciprocal;
  const fp::newton_unit u = unit_of(c, fn, choice);
  fp::counters rc;
  const std::vector<std::int64_t> rom = fp::newton_rom(u, rc);
  const d::node_id out = recip ? d::node_id::inv_diag_recip : d::node_id::norm;
  EXPECT_EQ(words(f, recip ? d::node_id::recip_rom : d::node_id::rsqrt_rom).re, rom);
  const d::word_matrix& in = words(f, input);
  const int n = diagonal ? in.rows : in.rows * in.cols;
  ASSERT_EQ(words(f, out).rows, n);
  for (int i = 0; i < n; ++i) {
    const std::int64_t x = diagonal ? in.re[in.at(i, i)] : in.re[static_cast<std::size_t>(i)];
    fp::counters oc;
    fp::newton_counters nc;
    fp::newton_trace t;
    const std::int64_t y = fp::newton_evaluate(u, rom, x, c[input].spec.fmt.frac_bits, c[out].spec, oc, nc, t);
    EXPECT_EQ(words(f, out).re[static_cast<std::size_t>(i)], y) << d::node_name(out) << " " << i;
    EXPECT_EQ(words(f, recip ? d::node_id::recip_mant : d::node_id::rsqrt_mant).re[static_cast<std::size_t>(i)],
              t.mant);
    for (int k = 0; k < choice.steps; ++k) {
      const auto ks = static_cast<std::size_t>(k);
      const d::word_matrix& prod = words(f, recip ? d::node_id::recip_prod : d::node_id::rsqrt_prod);
      const d::word_matrix& iter = words(f, recip ? d::node_id::recip_iter : d::node_id::rsqrt_iter);
      EXPECT_EQ(prod.re[prod.at(i, k)], t.prod[ks]);
      EXPECT_EQ(iter.re[iter.at(i, k)], t.iter[ks]);
      if (!recip) {
        EXPECT_EQ(words(f, d::node_id::rsqrt_sq).re[prod.at(i, k)], t.square[ks]);
      }
    }
  }
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

}  // namespace
