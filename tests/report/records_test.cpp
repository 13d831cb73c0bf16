// The typed results records against files written by an earlier fxmimo (tests/fixtures/, commit
// 1e106d8): reading a file and writing its record gives back the same JSON, number for number
// (the newest key names and "schema" aside), and today's writer reproduces the earlier
// program's run file from the same scenario and trials.
#include "fxmimo/report/records.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>
#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/checked_table.hpp"

namespace {

namespace fs = std::filesystem;
namespace r = fxmimo::report;
using nlohmann::json;

const fs::path fixtures = fs::path(FXMIMO_SOURCE_DIR) / "tests" / "fixtures";

json load(const fs::path& p) { return fxmimo::io::read_json_file(p); }

/// The record written back: what the file holds, with "schema" (the fixtures predate it).
json written_back(const json& file) {
  const r::results_record rec = r::record_from_json(fxmimo::io::checked_json(file, "fixture"));
  return r::to_json(rec);
}

TEST(records, a_run_file_of_the_earlier_program_reads_and_writes_back_unchanged) {
  json expected = load(fixtures / "run.json");
  expected["schema"] = r::results_schema;
  EXPECT_EQ(written_back(load(fixtures / "run.json")), expected);
}

TEST(records, a_sweep_file_of_the_earlier_program_reads_and_writes_back_unchanged) {
  json expected = load(fixtures / "sweep.json");
  expected["schema"] = r::results_schema;
  EXPECT_EQ(written_back(load(fixtures / "sweep.json")), expected);
}

TEST(records, a_tune_file_of_the_earlier_program_keeps_every_figure_under_the_newest_names) {
  const json old = load(fixtures / "tune.json");
  json expected = old;
  expected["schema"] = r::results_schema;
  // The transmit-power figure's names before it was called the RMS error (same values).
  expected["limits"]["max_rms_tx_power_error_db"] = old["limits"]["max_tx_power_error_db"];
  expected["limits"].erase("max_tx_power_error_db");
  for (const char* part : {"search", "verification"}) {
    expected[part]["rms_tx_power_error_db"] = old[part]["abs_tx_power_error_db"];
    expected[part].erase("abs_tx_power_error_db");
  }
  expected["margins"]["rms_tx_power_error_db"] = old["margins"]["tx_power_error_db"];
  expected["margins"].erase("tx_power_error_db");
  // The margins are recomputed as limit - value: bit for bit what the earlier program wrote.
  EXPECT_EQ(written_back(old), expected);
}

TEST(records, todays_writer_reproduces_the_earlier_programs_run_file) {
  // tests/fixtures/run.json: `fxmimo run -c examples/village-16-mf.toml --json` at 1e106d8 (its
  // trials and scenario path are in the file).
  const json old = load(fixtures / "run.json");
  std::ifstream in(fs::path(FXMIMO_SOURCE_DIR) / "examples" / "village-16-mf.toml");
  std::stringstream text;
  text << in.rdbuf();
  const auto doc = fxmimo::golden::parse_scenario_document(text.str(), "examples/village-16-mf.toml");
  const auto results =
      fxmimo::analysis::run_trials(fxmimo::golden::parse_scenario(doc), fxmimo::datapath::parse_datapath_config(doc),
                                   old["trial_indices"].get<std::vector<std::uint64_t>>(), 2);
  r::run_record rec = r::make_record(results);
  rec.scenario.source = old["scenario"]["source"];
  json expected = old;
  expected["schema"] = r::results_schema;
  // Written since: the distributions and each node's 95 % overflow-rate bound, which for no
  // overflow in n requantised values is -ln(0.05) / n (the rule of three); the rest is unchanged.
  json written = r::to_json(rec);
  ASSERT_TRUE(written.contains("distribution"));
  EXPECT_EQ(written["distribution"]["sinr_loss_percentiles_db"].size(), 101U);
  written.erase("distribution");
  for (auto& [name, node] : written["nodes"].items()) {
    ASSERT_EQ(node["overflows"], 0) << name;
    EXPECT_NEAR(node["overflow_rate_bound_95"].get<double>() * node["requantized"].get<double>(), -std::log(0.05), 1e-9)
        << name;
    node.erase("overflow_rate_bound_95");
  }
  // The link figures have been summed in one pass over the data blocks since the data phase
  // streams (README "Evaluation"): the same definition in another order of double operations,
  // equal to 1e-12 relative; everything else, bit for bit.
  auto near_then_same = [](json& now, const json& then, const std::string& where) {
    for (auto& [key, value] : now.items()) {
      if (!value.is_number_float()) continue;
      const double a = value.get<double>(), b = then.at(key).get<double>();
      EXPECT_LE(std::abs(a - b), 1e-12 * std::max(std::abs(a), std::abs(b))) << where << " " << key;
      value = then.at(key);
    }
  };
  near_then_same(written["summary"], expected["summary"], "summary");
  ASSERT_EQ(written["users"].size(), expected["users"].size());
  for (std::size_t k = 0; k < written["users"].size(); ++k)
    near_then_same(written["users"][k], expected["users"][k], "user " + std::to_string(k));
  EXPECT_EQ(written, expected);
}

TEST(records, every_missing_key_of_a_kind_is_one_error_naming_it) {
  // Every key today's writer puts into a sweep point and a tune file is read: drop any one that
  // is not optional and the reader names it.
  const json sweep = load(fixtures / "sweep.json");
  for (const std::string key : {"node", "bits", "format", "word_bits", "frac_bits", "sinr_loss_db", "evm_fixed_pct",
                                "evm_impl_pct", "sqnr_db", "overflow_rate"}) {
    json broken = sweep;
    broken["points"][1].erase(key);
    try {
      r::record_from_json(fxmimo::io::checked_json(broken, "s.json"));
      ADD_FAILURE() << "no error without " << key;
    } catch (const fxmimo::io::json_error& e) {
      EXPECT_EQ(std::string(e.what()), "s.json: points[1]." + key + ": missing");
    }
  }
  const json tune = load(fixtures / "tune.json");
  for (const auto& [part, key] : std::vector<std::pair<std::string, std::string>>{{"limits", "max_evm_pct"},
                                                                                  {"verification", "meets_limits"},
                                                                                  {"verification", "sinr_loss_db"},
                                                                                  {"nodes.adc", "cost"}}) {
    json broken = tune;
    json* obj = &broken[part.substr(0, part.find('.'))];
    if (part.find('.') != std::string::npos) obj = &(*obj)[part.substr(part.find('.') + 1)];
    obj->erase(key);
    try {
      r::record_from_json(fxmimo::io::checked_json(broken, "t.json"));
      ADD_FAILURE() << "no error without " << part << "." << key;
    } catch (const fxmimo::io::json_error& e) {
      EXPECT_EQ(std::string(e.what()), "t.json: " + part + "." + key + ": missing");
    }
  }
}

TEST(records, a_node_of_a_users_own_stage_is_kept_after_the_known_ones) {
  json sweep = load(fixtures / "sweep.json");
  json custom = sweep["points"][0];
  custom["node"] = "tx_cal";
  sweep["points"].insert(sweep["points"].begin(), custom);
  const auto rec = std::get<r::sweep_record>(r::record_from_json(fxmimo::io::checked_json(sweep, "s.json")));
  ASSERT_EQ(rec.points.size(), sweep["points"].size());
  EXPECT_EQ(rec.points[0].node, "tx_cal") << "points keep their order";
  EXPECT_LT(r::node_rank("adc"), r::node_rank("dac"));
  EXPECT_LT(r::node_rank("dac"), r::node_rank("tx_cal"));
}

}  // namespace

namespace {

TEST(records, the_search_verdict_comes_from_the_search_figures_not_from_met) {
  // The earlier program's tune file: widths that met every limit on the search trials (power
  // error 0.0596 dB against 0.1 dB) but not on the fresh ones ("met": false).
  json tune = fxmimo::io::read_json_file(fixtures / "tune.json");
  ASSERT_FALSE(tune["met"].get<bool>());
  auto rec = r::tune_from_json(fxmimo::io::checked_json(tune, "t.json"));
  EXPECT_FALSE(rec.meets_limits);
  EXPECT_EQ(rec.search_meets_limits(), std::optional<bool>(true));
  tune["search"]["sinr_loss_db"] = 0.2;  // above the 0.1 dB limit
  rec = r::tune_from_json(fxmimo::io::checked_json(tune, "t.json"));
  EXPECT_EQ(rec.search_meets_limits(), std::optional<bool>(false));
  tune.erase("search");
  rec = r::tune_from_json(fxmimo::io::checked_json(tune, "t.json"));
  EXPECT_FALSE(rec.search_meets_limits().has_value());
}

}  // namespace
