// tune among the divide and root units a scenario lists ([units.NODE] alternatives): every
// combination is enumerated, each is tuned exactly as a plain tune of that combination would be
// (compared with tune_widths_at_corners run on its own), the cheapest that meets the limits is
// chosen, and the tuned scenario file names it; the area model's cost of an exact unit is the
// stated digit-recurrence array (hand-computed from the formats).
#include <gtest/gtest.h>

#include <string>

#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/golden/checked_table.hpp"

namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

// 8 antennas, 2 users, ZF with LDL^H (our own invention, for this check).
const std::string variants_text = R"(name = "variants-8x2"
seed = 7
trials = 2
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
[units.inv_diag_recip]      # the unit in use; tune compares the alternatives too
kind = "newton"
seed_bits = 4
steps = 1
alternatives = [{ kind = "exact" },
                { kind = "newton", seed_bits = 6, steps = 2 }]
[units.norm]
kind = "exact"
alternatives = [{ kind = "newton", seed_bits = 5, steps = 1 }]
[data]
modulation = "qpsk"
symbols = 32
snr_db = 20.0
)";

TEST(unit_variants, every_combination_in_order) {
  const g::scenario scen = g::parse_scenario_text(variants_text, "variants.toml");
  ASSERT_EQ(scen.units.alternatives.size(), 2U);
  const auto v = h::unit_variants(scen);
  ASSERT_EQ(v.size(), 6U);  // 3 reciprocal units x 2 root units
  EXPECT_EQ(v[0].first, "inv_diag_recip: newton a=4 n=1, norm: exact");
  EXPECT_EQ(v[1].first, "inv_diag_recip: exact, norm: exact");
  EXPECT_EQ(v[2].first, "inv_diag_recip: newton a=6 n=2, norm: exact");
  EXPECT_EQ(v[3].first, "inv_diag_recip: newton a=4 n=1, norm: newton a=5 n=1");
  EXPECT_EQ(v[5].first, "inv_diag_recip: newton a=6 n=2, norm: newton a=5 n=1");
  EXPECT_FALSE(v[1].second.inv_diag_recip.newton);
  EXPECT_EQ(v[5].second.inv_diag_recip.seed_bits, 6);
  EXPECT_EQ(v[5].second.norm.steps, 1);
}

TEST(unit_variants, the_cheapest_that_meets_the_limits_is_chosen) {
  // Only the reciprocal varies here (3 tunes).
  std::string text = variants_text;
  text.erase(text.find("[units.norm]"), text.find("[data]") - text.find("[units.norm]"));
  const g::scenario scen = g::parse_scenario_text(text, "variants.toml");
  const d::datapath_config start = d::parse_datapath_config(text, "variants.toml");
  const h::tune_limits limits{0.3, 3.0, 1e-2};
  const std::vector<h::tune_corner> corners{{"", scen, {4, 60, 8}}};
  const h::tune_results r = h::tune_unit_variants(corners, start, limits, h::cost_model::area, 2, 1e-3, 0.5);
  ASSERT_EQ(r.variants.size(), 3U);
  // Each variant's outcome is a plain tune of that combination.
  const auto variants = h::unit_variants(scen);
  std::size_t chosen = 0;
  for (std::size_t i = 0; i < variants.size(); ++i) {
    std::vector<h::tune_corner> these = corners;
    these[0].scen.units = variants[i].second;
    const h::tune_results alone = h::tune_widths_at_corners(these, start, limits, h::cost_model::area, 2, 1e-3, 0.5);
    EXPECT_EQ(r.variants[i].label, variants[i].first);
    EXPECT_DOUBLE_EQ(r.variants[i].cost, alone.cost) << variants[i].first;
    EXPECT_EQ(r.variants[i].met, alone.met) << variants[i].first;
    if (r.variants[i].chosen) chosen = i;
  }
  int num_chosen = 0;
  for (const h::variant_outcome& o : r.variants) num_chosen += o.chosen ? 1 : 0;
  EXPECT_EQ(num_chosen, 1);
  ASSERT_TRUE(r.variants[chosen].met) << "a variant meets these loose limits";
  for (const h::variant_outcome& o : r.variants)
    if (o.met) {
      EXPECT_LE(r.variants[chosen].cost, o.cost) << o.label;
    }
  EXPECT_EQ(r.cost, r.variants[chosen].cost);
  EXPECT_EQ(r.units.inv_diag_recip, variants[chosen].second.inv_diag_recip);
  std::printf("unit variants (area): %s %g, %s %g, %s %g; chosen %s\n", r.variants[0].label.c_str(), r.variants[0].cost,
              r.variants[1].label.c_str(), r.variants[1].cost, r.variants[2].label.c_str(), r.variants[2].cost,
              r.variants[chosen].label.c_str());
}

TEST(unit_variants, the_written_scenario_names_the_chosen_unit) {
  const g::scenario scen = g::parse_scenario_text(variants_text, "variants.toml");
  g::units_config units = scen.units;
  units.inv_diag_recip = {};  // exact
  units.norm = {
      true,
      5,
      1,
  };
  const std::string written = g::scenario_with_units(variants_text, units);
  const g::scenario back = g::parse_scenario_text(written, "written.toml");
  EXPECT_FALSE(back.units.inv_diag_recip.newton);
  EXPECT_TRUE(back.units.norm.newton);
  EXPECT_EQ(back.units.norm.seed_bits, 5);
  EXPECT_EQ(back.units.norm.steps, 1);
  // The other choices become the alternatives, so a second tune compares the same set.
  ASSERT_EQ(back.units.alternatives.size(), 2U);
  ASSERT_EQ(back.units.alternatives[0].choices.size(), 2U);
  EXPECT_EQ(back.units.alternatives[0].choices[0].label(), "newton a=4 n=1");
  EXPECT_EQ(back.units.alternatives[0].choices[1].label(), "newton a=6 n=2");
  ASSERT_EQ(back.units.alternatives[1].choices.size(), 1U);
  EXPECT_EQ(back.units.alternatives[1].choices[0].label(), "exact");
  EXPECT_EQ(h::unit_variants(back).size(), h::unit_variants(scen).size());
  // The table's comment and the other tables are untouched.
  EXPECT_NE(written.find("[units.inv_diag_recip]      # the unit in use"), std::string::npos);
  EXPECT_NE(written.find("symbols = 32"), std::string::npos);
}

TEST(unit_variants, an_exact_unit_costs_its_digit_recurrence_array) {
  std::string text = variants_text;
  text.erase(text.find("[units.inv_diag_recip]"), text.find("[data]") - text.find("[units.inv_diag_recip]"));
  text +=
      "[nodes.ldl_acc]\nformat = \"Q6.13\"\n[nodes.inv_diag_recip]\nformat = \"Q1.18\"\n"
      "[nodes.inv_factor]\nformat = \"Q1.14\"\n[nodes.power_acc]\nformat = \"Q4.15\"\n[nodes.norm]\n"
      "format = \"Q3.12\"\n[nodes.precoder]\nformat = \"Q1.12\"\n";
  const g::scenario scen = g::parse_scenario_text(text, "v.toml");
  const d::datapath_config c = d::parse_datapath_config(text, "v.toml");
  const d::datapath_plan plan = d::stages_for(scen);
  // LDL^H: one complex multiplier of inv_factor words (4 x 16 x 16) and the exact reciprocal,
  // W_out x W_in = 20 x 20 cells.
  EXPECT_DOUBLE_EQ(plan.producer(d::node_id::inv_factor)->multiplier_cost(c, plan.dims), 4 * 16 * 16 + 20 * 20);
  // Power: |W|^2 (2 x 14 x 14) and the exact reciprocal root, twice W_out x W_in = 2 x 16 x 20.
  EXPECT_DOUBLE_EQ(plan.producer(d::node_id::norm)->multiplier_cost(c, plan.dims), 2 * 14 * 14 + 2 * 16 * 20);
}

TEST(unit_variants, scenario_errors_name_the_key) {
  const auto error_of = [](const std::string& text) -> std::string {
    try {
      (void)g::parse_scenario_text(text, "v.toml");
    } catch (const g::scenario_error& e) {
      return e.what();
    }
    return "no error";
  };
  std::string twice = variants_text;
  twice.replace(twice.find("{ kind = \"exact\" }"), 18, "{ kind = \"newton\", seed_bits = 4, steps = 1 }");
  EXPECT_NE(error_of(twice).find("units.inv_diag_recip.alternatives: newton a=4 n=1 is listed twice"),
            std::string::npos)
      << error_of(twice);
  std::string bad_key = variants_text;
  bad_key.replace(bad_key.find("{ kind = \"exact\" }"), 18, "{ kind = \"exact\", bits = 3 }");
  EXPECT_NE(error_of(bad_key).find("units.inv_diag_recip.alternatives.bits: unknown key"), std::string::npos)
      << error_of(bad_key);
  std::string not_tables = variants_text;
  not_tables.replace(not_tables.find("{ kind = \"exact\" }"), 18, "\"exact\"");
  EXPECT_NE(error_of(not_tables).find("every element must be a table"), std::string::npos) << error_of(not_tables);
}

}  // namespace
