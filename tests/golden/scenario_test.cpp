// Scenario files: defaults, the one-line errors naming file, line and key, unknown keys, and the
// harness-owned `nodes` table.
#include "fxmimo/golden/scenario.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <string>

#include "fxmimo/golden/checked_table.hpp"

namespace fxmimo::golden {
namespace {

// Line numbers below refer to this text (line 1 = name).
const std::string base_text = R"(name = "unit"
seed = 3
trials = 2
[array]
antennas = 8
[cells]
users_per_cell = 2
[pilots]
snr_db = 5
[data]
snr_db = 10
)";

// Replaces `from` (which must occur once) by `to` in the base text.
std::string edit(const std::string& from, const std::string& to) {
  std::string text = base_text;
  const auto pos = text.find(from);
  EXPECT_NE(pos, std::string::npos) << from;
  text.replace(pos, from.size(), to);
  return text;
}

TEST(scenario, defaults_are_the_documented_ones) {
  const scenario s = parse_scenario_text(base_text, "unit.toml");
  EXPECT_EQ(s.name, "unit");
  EXPECT_EQ(s.seed, 3U);
  EXPECT_EQ(s.num_trials, 2);
  EXPECT_EQ(s.array.num_antennas, 8);
  EXPECT_EQ(s.array.layout, array_layout::ula);
  EXPECT_DOUBLE_EQ(s.array.spacing, 0.5);
  EXPECT_EQ(s.cells.num_cells, 1);
  EXPECT_EQ(s.cells.source, gain_source::hexagonal);
  EXPECT_DOUBLE_EQ(s.cells.radius_m, 500.0);
  EXPECT_DOUBLE_EQ(s.cells.min_distance_m, 35.0);
  EXPECT_DOUBLE_EQ(s.cells.pathloss_exponent, 3.76);
  EXPECT_DOUBLE_EQ(s.cells.shadowing_db, 8.0);
  EXPECT_EQ(s.channel.model, channel_model::rayleigh);
  EXPECT_EQ(s.pilots.length, 2);
  EXPECT_EQ(s.pilots.sequence, pilot_sequence::dft);
  EXPECT_EQ(s.pilots.reuse, 1);
  EXPECT_EQ(s.estimator.kind, estimator_kind::mmse);
  EXPECT_EQ(s.precoder.kind, precoder_kind::zf);
  EXPECT_EQ(s.precoder.inversion, inversion_kind::ldl);
  EXPECT_EQ(s.precoder.normalization, power_normalization::total);
  EXPECT_EQ(s.data.mod, modulation::qam16);
  EXPECT_EQ(s.data.num_symbols, 168);
  EXPECT_DOUBLE_EQ(s.frontend.agc_backoff_db, 12.0);
  EXPECT_DOUBLE_EQ(s.frontend.dac_backoff_db, 12.0);
  EXPECT_DOUBLE_EQ(s.rzf_regularizer(), 2.0 / 10.0);
}

TEST(scenario, nodes_table_belongs_to_the_harness) {
  const std::string text = base_text + R"(
[nodes.adc]
format = "Q1.14"
anything = { goes = [1, 2, 3] }
[nodes.gram]
whatever = true
)";
  EXPECT_NO_THROW(parse_scenario_text(text, "unit.toml"));
}

TEST(scenario, walsh_default_length_is_a_power_of_two) {
  // users_per_cell = 3 and Walsh sequences: the default length is the next power of two, 4.
  const scenario s = parse_scenario_text(
      edit("users_per_cell = 2", "users_per_cell = 3").insert(base_text.find("[data]"), "sequence = \"walsh\"\n"),
      "unit.toml");
  EXPECT_EQ(s.pilots.sequence, pilot_sequence::walsh);
  EXPECT_EQ(s.pilots.length, 4);
}

struct error_case {
  std::string name;
  std::string text;
  int line;
  std::string key;
  std::string fragment;  ///< part of the message
};

void PrintTo(const error_case& c, std::ostream* os) { *os << c.name; }

class scenario_errors : public ::testing::TestWithParam<error_case> {};

TEST_P(scenario_errors, one_line_naming_file_line_and_key) {
  const error_case& c = GetParam();
  try {
    parse_scenario_text(c.text, "bad.toml");
    FAIL() << c.name << ": no error";
  } catch (const scenario_error& e) {
    const std::string what = e.what();
    EXPECT_EQ(e.file, "bad.toml");
    EXPECT_EQ(e.key, c.key) << what;
    EXPECT_EQ(e.line, c.line) << what;
    EXPECT_EQ(what.rfind(fmt::format("bad.toml:{}: {}: ", c.line, c.key), 0), 0U) << what;
    EXPECT_NE(what.find(c.fragment), std::string::npos) << what;
    EXPECT_EQ(what.find('\n'), std::string::npos) << what;
  }
}

INSTANTIATE_TEST_SUITE_P(
    out_of_range_and_unknown, scenario_errors,
    ::testing::Values(
        error_case{"zero_antennas", edit("antennas = 8", "antennas = 0"), 5, "array.antennas", "out of range"},
        error_case{"too_many_antennas", edit("antennas = 8", "antennas = 5000"), 5, "array.antennas", "out of range"},
        error_case{"zero_trials", edit("trials = 2", "trials = 0"), 3, "trials", "out of range"},
        error_case{"users_exceed_pilots", edit("snr_db = 5", "snr_db = 5\nlength = 1"), 10, "pilots.length",
                   "orthogonal pilots needed"},
        error_case{"reuse_2", edit("snr_db = 5", "snr_db = 5\nreuse = 2"), 10, "pilots.reuse", "1, 3 or 7"},
        error_case{"reuse_exceeds_cells", edit("snr_db = 5", "snr_db = 5\nreuse = 3"), 10, "pilots.reuse",
                   "needs at least 3 cells"},
        error_case{"reuse_7_three_cells",
                   edit("snr_db = 5", "snr_db = 5\nreuse = 7").insert(base_text.find("[pilots]"), "count = 3\n"), 11,
                   "pilots.reuse", "reuse 7 needs at least 7 cells"},
        error_case{"hex_count_5", edit("users_per_cell = 2", "users_per_cell = 2\ncount = 5"), 8, "cells.count",
                   "1, 3, 7 or 19"},
        error_case{"unknown_modulation", base_text + "modulation = \"8psk\"\n", 12, "data.modulation",
                   "unknown value \"8psk\""},
        error_case{"unknown_top_key", edit("seed = 3", "seed = 3\ncolour = 1"), 3, "colour", "unknown key"},
        error_case{"unknown_table_key", edit("antennas = 8", "antennas = 8\nantenas = 8"), 6, "array.antenas",
                   "unknown key"},
        error_case{"unknown_table", base_text + "[beamforming]\nkind = \"mf\"\n", 12, "beamforming", "unknown key"},
        error_case{"correlation_missing", base_text + "[channel]\nmodel = \"correlated\"\n", 12, "channel.correlation",
                   "missing required key"},
        error_case{"correlation_unused", base_text + "[channel]\ncorrelation = 0.5\n", 13, "channel.correlation",
                   "only used with"},
        error_case{"walsh_length", edit("snr_db = 5", "snr_db = 5\nsequence = \"walsh\"\nlength = 6"), 11,
                   "pilots.length", "power-of-two"},
        error_case{"zf_more_users_than_antennas", edit("antennas = 8", "antennas = 1"), 7, "cells.users_per_cell",
                   "zero forcing"},
        error_case{"neumann_terms_with_ldl", base_text + "[precoder]\nneumann_terms = 3\n", 13,
                   "precoder.neumann_terms", "only used with"},
        error_case{"sweeps_with_ldl", base_text + "[precoder]\nsweeps = 3\n", 13, "precoder.sweeps",
                   "only used with inversion = \"gauss_seidel\""},
        error_case{"zero_sweeps", base_text + "[precoder]\ninversion = \"gauss_seidel\"\nsweeps = 0\n", 14,
                   "precoder.sweeps", "out of range"},
        error_case{"chol_unit_with_ldl", base_text + "[units.chol_diag_rsqrt]\nkind = \"newton\"\n", 12,
                   "units.chol_diag_rsqrt", "only used with inversion = \"cholesky\""},
        error_case{"recip_unit_with_cholesky",
                   base_text + "[precoder]\ninversion = \"cholesky\"\n[units.inv_diag_recip]\nkind = \"newton\"\n", 14,
                   "units.inv_diag_recip", "no reciprocal"},
        error_case{"negative_regularizer", base_text + "[precoder]\nkind = \"rzf\"\nregularizer = -1\n", 14,
                   "precoder.regularizer", "out of range"},
        error_case{"user_gains_length", edit("users_per_cell = 2", "users_per_cell = 2\nuser_gains_db = [0]"), 8,
                   "cells.user_gains_db", "needs 2 values"},
        error_case{"min_distance_too_large",
                   edit("users_per_cell = 2", "users_per_cell = 2\nradius_m = 100\nmin_distance_m = 90"), 9,
                   "cells.min_distance_m", "no room"},
        error_case{"gains_db_ragged", edit("users_per_cell = 2", "gains_db = [[[0, 0], [-10, -10]], [[-10, -10]]]"), 7,
                   "cells.gains_db", "each base station"},
        error_case{"wrong_type", edit("antennas = 8", "antennas = \"eight\""), 5, "array.antennas",
                   "expected an integer"},
        error_case{"missing_array", edit("[array]\nantennas = 8\n", ""), 1, "array", "missing required table"},
        error_case{"missing_data_snr", edit("snr_db = 10", "symbols = 4"), 10, "data.snr_db", "missing required key"},
        error_case{"syntax", edit("seed = 3", "seed = = 3"), 2, "(syntax)", ""},
        // Non-ASCII outside strings and comments never reaches toml++ (TOML 1.0 allows only ASCII
        // there). The two-byte file U+03B6 reached an unreachable branch of toml++ 3.3.0's
        // Unicode-whitespace table (found by fuzzing the scenario parser).
        error_case{"zeta_alone", "\xCE\xB6", 1, "(syntax)", "byte 0xCE outside a string or comment"},
        error_case{"non_ascii_key", edit("seed = 3", "seed = 3\nca\xC3\xA9 = 1"), 3, "(syntax)", "byte 0xC3"},
        error_case{"non_breaking_space",
                   edit("seed = 3",
                        "seed =\xC2\xA0"
                        "3"),
                   2, "(syntax)", "byte 0xC2"},
        error_case{"control_byte", edit("seed = 3", "seed = 3\x01"), 2, "(syntax)", "byte 0x01"},
        // A quote inside a malformed bare value opens no string for toml++, which scanned on into
        // the U+00E9 behind it (the same unreachable branch; found by fuzzing).
        error_case{"non_ascii_after_quote_in_bare_value", edit("seed = 3", "seed = 3\nx = 0\"\xC3\xA9\""), 3,
                   "(syntax)", ""},
        // A table header whose first character after '[' (or '[[' and blanks) cannot start a key
        // reached toml++ 3.3.0's parse_key past its assertion (an optimiser assumption in release
        // builds; found by fuzzing with the library's assertions on).
        error_case{"header_starts_with_hash", "[#", 1, "(syntax)", "a table header needs a key after '['"},
        error_case{"header_starts_with_equals", edit("seed = 3", "seed = 3\n[[ =]]"), 3, "(syntax)",
                   "a table header needs a key"},
        error_case{"header_ends_the_line", edit("seed = 3", "seed = 3\n  [\n"), 3, "(syntax)",
                   "a table header needs a key"},
        error_case{"brace_closes_an_array", edit("seed = 3", "seed = [1, }"), 2, "(syntax)",
                   "'}' closes the '[' of a value"},
        error_case{"date_with_a_blank", edit("seed = 3", "seed = 8444------ 5 8444--"), 2, "(syntax)",
                   "a date or time"},
        error_case{"date_time_letters", edit("seed = 3", "seed = 1001-06-06ts0z!0: -0"), 2, "(syntax)",
                   "a date or time"},
        error_case{"time_of_day", edit("seed = 3", "seed = 3\nx = [07:32:00]"), 3, "(syntax)", "a date or time"},
        error_case{"minus_inside_a_bare_value", edit("seed = 3", "seed = 1a=2-a=-a= 2,"), 2, "(syntax)",
                   "a date or time"},
        error_case{"minus_in_an_array_element_on_its_own_line", edit("seed = 3", "seed = 3\nx = [\n0!1=-==-d= 1"), 4,
                   "(syntax)", "a date or time"},
        error_case{"not_utf8_in_string", edit("seed = 3", "seed = 3\nname = \"\xC3\x28\""), 3, "(syntax)",
                   "not UTF-8"}),
    [](const ::testing::TestParamInfo<error_case>& param_info) { return param_info.param.name; });

TEST(scenario, non_ascii_text_in_strings_and_comments_is_fine) {
  // UTF-8 inside basic and multi-line strings and in comments, an escaped quote, a byte-order
  // mark, and quote runs inside a comment: all TOML 1.0, all accepted.
  const std::string text = "\xEF\xBB\xBF# caf\xC3\xA9 \xCE\xB6\nname = \"Z\xC3\xBCrich \\\" \xCE\xA9\"\n" +
                           base_text.substr(base_text.find("seed")) + "# ''' \"\"\" \xCE\xB6\n" +
                           "[frontend]\n# \xE2\x82\xAC\n";
  EXPECT_EQ(parse_scenario_text(text, "u.toml").name, "Z\xC3\xBCrich \" \xCE\xA9");
}

TEST(scenario, brackets_inside_values_are_not_headers) {
  // Nested and multi-line arrays and inline tables: a '[' at a line start inside a value opens an
  // array (TOML 1.0), so the header check leaves it alone.
  const toml::table t = parse_toml("a = [\n[1, 2],\n[ ],\n]\nb = { c = [\n[\n3]] }\n[d]\n[[e]]\n[ \"f\" ]\n", "v.toml");
  EXPECT_EQ(t["a"][0][1].value<int>(), 2);
  EXPECT_EQ(t["b"]["c"][0][0].value<int>(), 3);
  EXPECT_TRUE(t["d"].is_table());
  EXPECT_TRUE(t["e"].is_array_of_tables());
  EXPECT_TRUE(t["f"].is_table());
}

TEST(scenario, non_ascii_text_keeps_its_value_in_every_kind_of_string) {
  // TOML 1.0: a line-ending backslash in a multi-line basic string trims the newline and the
  // whitespace after it; literal strings keep backslashes and quotes; the first newline of a
  // multi-line string is trimmed. toml++ 3.3 crashed on the first form (found by fuzzing).
  const toml::table t =
      parse_toml("a = \"\"\"\\\n  \xCE\xB6\"\"\"\nb = 'C:\\x \"\xC3\xA9\"'\nc = '''\n\xCE\xB6\\\n'''''\n", "s.toml");
  EXPECT_EQ(t["a"].value<std::string>(), "\xCE\xB6");
  EXPECT_EQ(t["b"].value<std::string>(), "C:\\x \"\xC3\xA9\"");
  EXPECT_EQ(t["c"].value<std::string>(), "\xCE\xB6\\\n''");
}

TEST(scenario, missing_file_names_the_path) {
  try {
    load_scenario_file("/nonexistent/fxmimo/scenario.toml");
    FAIL();
  } catch (const scenario_error& e) {
    EXPECT_EQ(e.file, "/nonexistent/fxmimo/scenario.toml");
    EXPECT_EQ(e.key, "(file)");
  }
}

}  // namespace
}  // namespace fxmimo::golden
