// The [nodes] tables of a scenario (datapath/src/config.cpp): accumulation orders, their errors
// (one line naming file, line and key), the documented default and the TOML written back.
#include "fxmimo/datapath/config.hpp"

#include <gtest/gtest.h>

#include "fxmimo/golden/scenario.hpp"

namespace d = fxmimo::datapath;
namespace fp = fxmimo::fixedpoint;
namespace g = fxmimo::golden;

namespace {

TEST(config, default_constructed_is_the_documented_default) {
  const d::datapath_config c;
  ASSERT_EQ(c.nodes.size(), d::node_count());
  for (const d::node_setting& s : c.nodes) {
    EXPECT_EQ(fp::to_q_string(s.spec.fmt), "Q20.43");
    EXPECT_EQ(s.spec.rounding, fp::rounding_mode::half_even);
    EXPECT_EQ(s.spec.overflow, fp::overflow_mode::saturate);
    EXPECT_EQ(s.order.order, fp::accumulation_order::sequential);
    EXPECT_TRUE(s.is_default);
  }
}

TEST(config, reads_orders_and_lanes_and_writes_them_back) {
  const char* text = R"([nodes.tx_acc]
format = "Q1.14"
rounding = "floor"
overflow = "wrap"
order = "pairwise"

[nodes.gram]
format = "Q9.10"
rounding = "half_even"
overflow = "saturate"
order = "lanes"
lanes = 4
)";
  const d::datapath_config c = d::parse_datapath_config(text, "orders.toml");
  EXPECT_EQ(c[d::node_id::tx_acc].order.order, fp::accumulation_order::pairwise);
  EXPECT_EQ(c[d::node_id::gram].order.order, fp::accumulation_order::lanes);
  EXPECT_EQ(c[d::node_id::gram].order.lanes, 4);
  EXPECT_EQ(c[d::node_id::pilot_acc].order.order, fp::accumulation_order::sequential);
  // Written back and read again: the same settings.
  const d::datapath_config again = d::parse_datapath_config(d::to_toml(c), "written.toml");
  for (d::node_id id : d::all_nodes()) {
    EXPECT_EQ(again[id].order, c[id].order) << d::node_name(id);
    EXPECT_EQ(again[id].spec.fmt, c[id].spec.fmt) << d::node_name(id);
  }
  EXPECT_NE(d::node_table_toml(d::node_id::gram, c[d::node_id::gram]).find("order = \"lanes\"\nlanes = 4\n"),
            std::string::npos);
}

TEST(config, reads_term_formats_and_writes_them_back) {
  const char* text = R"([nodes.tx_acc]
format = "Q1.14"
term_format = "Q1.10"

[nodes.gram]
format = "Q9.10"
order = "pairwise"
term_format = "Q9.8"
term_rounding = "half_even"
)";
  const d::datapath_config c = d::parse_datapath_config(text, "terms.toml");
  ASSERT_TRUE(c[d::node_id::tx_acc].order.term_format.has_value());
  EXPECT_EQ(*c[d::node_id::tx_acc].order.term_format, fp::parse_format("Q1.10"));
  EXPECT_EQ(c[d::node_id::tx_acc].order.term_rounding, fp::rounding_mode::floor);  // the default: a truncated port
  EXPECT_EQ(c[d::node_id::gram].order.term_rounding, fp::rounding_mode::half_even);
  EXPECT_FALSE(c[d::node_id::pilot_acc].order.term_format.has_value());
  const d::datapath_config again = d::parse_datapath_config(d::to_toml(c), "written.toml");
  for (d::node_id id : d::all_nodes()) EXPECT_EQ(again[id].order, c[id].order) << d::node_name(id);
  EXPECT_NE(d::node_table_toml(d::node_id::tx_acc, c[d::node_id::tx_acc])
                .find("term_format = \"Q1.10\"\nterm_rounding = \"floor\"\n"),
            std::string::npos);
}

struct bad_table {
  const char* name;
  const char* text;
  const char* message;  ///< the whole one-line error
};

class config_errors : public testing::TestWithParam<bad_table> {};

TEST_P(config_errors, one_line_naming_file_line_and_key) {
  try {
    (void)d::parse_datapath_config(GetParam().text, "s.toml");
    FAIL() << "accepted";
  } catch (const g::scenario_error& e) {
    EXPECT_EQ(std::string(e.what()), GetParam().message);
  }
}

INSTANTIATE_TEST_SUITE_P(
    cases, config_errors,
    testing::Values(
        bad_table{"order_on_a_register", "[nodes.weights]\nformat = \"Q1.14\"\norder = \"pairwise\"\n",
                  "s.toml:3: nodes.weights.order: unknown key (expected format, rounding, overflow: weights is not an "
                  "accumulator)"},
        bad_table{"unknown_order", "[nodes.gram]\nformat = \"Q1.14\"\norder = \"tree\"\n",
                  "s.toml:3: nodes.gram.order: bad order 'tree' (expected sequential, pairwise, lanes)"},
        bad_table{"lanes_without_lanes_order", "[nodes.gram]\nformat = \"Q1.14\"\nlanes = 2\n",
                  "s.toml:3: nodes.gram.lanes: only used with order = \"lanes\""},
        bad_table{"lanes_order_without_count", "[nodes.tx_acc]\nformat = \"Q1.14\"\norder = \"lanes\"\n",
                  "s.toml:1: nodes.tx_acc.lanes: missing: order = \"lanes\" needs lanes = P (e.g. lanes = 4)"},
        bad_table{"zero_lanes", "[nodes.tx_acc]\nformat = \"Q1.14\"\norder = \"lanes\"\nlanes = 0\n",
                  "s.toml:4: nodes.tx_acc.lanes: must be an integer in [1, 4096]"},
        bad_table{"lanes_on_a_register", "[nodes.norm]\nformat = \"Q1.14\"\nlanes = 2\n",
                  "s.toml:3: nodes.norm.lanes: unknown key (expected format, rounding, overflow: norm is not an "
                  "accumulator)"},
        bad_table{"term_format_on_a_register", "[nodes.weights]\nformat = \"Q1.14\"\nterm_format = \"Q1.8\"\n",
                  "s.toml:3: nodes.weights.term_format: unknown key (expected format, rounding, overflow: weights is "
                  "not an accumulator)"},
        bad_table{"bad_term_format", "[nodes.gram]\nformat = \"Q1.14\"\nterm_format = \"Q1.x\"\n",
                  "s.toml:3: nodes.gram.term_format: bad format 'Q1.x': expected Qm.n with integers m and n, "
                  "e.g. Q1.14"},
        bad_table{"term_rounding_alone", "[nodes.gram]\nformat = \"Q1.14\"\nterm_rounding = \"floor\"\n",
                  "s.toml:3: nodes.gram.term_rounding: only used with a term_format"}),
    [](const testing::TestParamInfo<bad_table>& i) { return std::string(i.param.name); });

}  // namespace

namespace {

TEST(config, writing_back_edits_the_users_document_in_place) {
  const std::string text = R"(# my scenario
name = "mine"
[array]
antennas = 4   # keep me
gains = [
  [1.0, 2.0],
]
# The datapath
[nodes.adc]   # 10-bit converter
format = "Q0.9"     # from the datasheet
rounding = "half_up"
overflow = "saturate"

[nodes.tx_acc]
format = "Q1.14"
rounding = "floor"
overflow = "wrap"
order = "lanes"
lanes = 4

[nodes.inv_term]   # not written: stays as it is
format = "Q-3.16"
rounding = "floor"
overflow = "saturate"
)";
  d::datapath_config c = d::parse_datapath_config(text, "mine.toml");
  c[d::node_id::adc].spec.fmt = fp::parse_format("UQ1.11");
  c[d::node_id::tx_acc].order = {};  // back to sequential: order and lanes go
  c[d::node_id::dac].spec = {fp::parse_format("Q0.13"), fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  c[d::node_id::dac].order = {};
  const std::string out =
      d::scenario_with_nodes(text, c, {d::node_id::adc, d::node_id::tx_acc, d::node_id::dac}, "tuned for me");
  EXPECT_EQ(out, R"(# tuned for me
# my scenario
name = "mine"
[array]
antennas = 4   # keep me
gains = [
  [1.0, 2.0],
]
# The datapath
[nodes.adc]   # 10-bit converter
format = "UQ1.11"  # from the datasheet
rounding = "half_up"
overflow = "saturate"

[nodes.tx_acc]
format = "Q1.14"
rounding = "floor"
overflow = "wrap"

[nodes.inv_term]   # not written: stays as it is
format = "Q-3.16"
rounding = "floor"
overflow = "saturate"

[nodes.dac]
format = "Q0.13"
rounding = "half_even"
overflow = "saturate"

)");
  // And it reads back as the configuration it was written from.
  const d::datapath_config back = d::parse_datapath_config(out, "out.toml");
  for (d::node_id id : {d::node_id::adc, d::node_id::tx_acc, d::node_id::dac, d::node_id::inv_term}) {
    EXPECT_EQ(back[id].spec.fmt, c[id].spec.fmt) << d::node_name(id);
    EXPECT_EQ(back[id].order, c[id].order) << d::node_name(id);
  }
  EXPECT_FALSE(back[d::node_id::adc].spec.fmt.is_signed) << "an unsigned format stays unsigned";
}

}  // namespace
