// fxmimo run / demo / quant as a user meets them: exit codes (0 ok, 2 bad input), one-line
// errors naming file, line and key, the JSON keys the README promises, help with examples.
#include <gtest/gtest.h>
#include <unistd.h>

#include <nlohmann/json.hpp>

#include "cli_support.hpp"

namespace {

using fxmimo::test::run_fxmimo;
using fxmimo::test::scratch_dir;

std::string example(const std::string& name) { return std::string(FXMIMO_SOURCE_DIR) + "/examples/" + name; }

/// The demo scenario with one line replaced, written to a scratch file.
std::filesystem::path broken_scenario(const std::string& name, const std::string& from, const std::string& to) {
  std::string text = fxmimo::test::read_text(example("rooftop-64.toml"));
  const auto at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  if (at != std::string::npos) text.replace(at, from.size(), to);
  const auto path = scratch_dir(name) / "scenario.toml";
  std::ofstream(path) << text;
  return path;
}

struct bad_case {
  const char* name;
  const char* from;
  const char* to;
  const char* key;  ///< the key the message must name
};

class bad_scenario : public ::testing::TestWithParam<bad_case> {};

TEST_P(bad_scenario, exits_2_with_one_line_naming_file_line_and_key) {
  const bad_case c = GetParam();
  const auto path = broken_scenario(c.name, c.from, c.to);
  const auto r = run_fxmimo("run -c " + path.string() + " --trials 1");
  EXPECT_EQ(r.exit_code, 2) << r.err;
  EXPECT_EQ(std::count(r.err.begin(), r.err.end(), '\n'), 1) << "one line: " << r.err;
  EXPECT_NE(r.err.find(path.string() + ":"), std::string::npos) << "names the file: " << r.err;
  EXPECT_NE(r.err.find(c.key), std::string::npos) << "names the key: " << r.err;
  // The line number given is the line of the offending text.
  std::string text = fxmimo::test::read_text(path);
  const auto at = text.find(c.to);
  const auto line = 1 + std::count(text.begin(), text.begin() + static_cast<std::ptrdiff_t>(at), '\n');
  EXPECT_NE(r.err.find(path.string() + ":" + std::to_string(line) + ":"), std::string::npos)
      << "line " << line << ": " << r.err;
}

INSTANTIATE_TEST_SUITE_P(
    files, bad_scenario,
    ::testing::Values(bad_case{"unknown_node", "[nodes.norm]", "[nodes.normalizer]", "nodes.normalizer"},
                      bad_case{"bad_q", "format = \"Q2.15\"", "format = \"Q2.x5\"", "nodes.norm.format"},
                      bad_case{"too_wide", "format = \"Q2.15\"", "format = \"Q100.40\"", "nodes.norm.format"},
                      bad_case{"w_over_64", "format = \"Q2.15\"", "format = \"Q30.40\"", "nodes.norm.format"},
                      bad_case{"bad_rounding", "rounding = \"half_up\"", "rounding = \"nearest\"",
                               "nodes.adc.rounding"},
                      bad_case{"negative_trials", "trials = 24", "trials = -3", "trials"},
                      bad_case{"zero_antennas", "antennas = 64", "antennas = 0", "array.antennas"},
                      bad_case{"unknown_key", "snr_db = 20.0", "snr_dB = 20.0", "data.snr_dB"}),
    [](const auto& param_info) { return std::string(param_info.param.name); });

TEST(run_command, missing_file_is_exit_2_naming_it) {
  const auto r = run_fxmimo("run -c /nonexistent/scenario.toml");
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_NE(r.err.find("/nonexistent/scenario.toml"), std::string::npos) << r.err;
}

TEST(run_command, json_has_the_promised_keys) {
  const auto dir = scratch_dir("json");
  const auto json_path = dir / "run.json";
  const auto r =
      run_fxmimo("run -c " + example("rooftop-64.toml") + " --trials 2 --threads 2 --json " + json_path.string());
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("implementation EVM at the DAC"), std::string::npos);
  EXPECT_NE(r.out.find("TS 38.104"), std::string::npos);
  const auto j = nlohmann::json::parse(fxmimo::test::read_text(json_path));
  EXPECT_EQ(j["trials"], 2);
  EXPECT_TRUE(j.contains("scenario"));
  for (const char* node : {"adc", "pilot_acc", "chan_est", "gram", "inv_out", "precoder", "weights", "tx_acc", "dac"}) {
    ASSERT_TRUE(j["nodes"].contains(node)) << node;
    for (const char* key : {"format", "rounding", "overflow", "sqnr_db", "max_err_lsb", "overflows", "overflow_rate"})
      EXPECT_TRUE(j["nodes"][node].contains(key)) << node << "." << key;
  }
  EXPECT_EQ(j["nodes"]["dac"]["format"], "Q0.13");
  ASSERT_EQ(j["users"].size(), 8U);
  for (const char* key : {"sinr_golden_db", "sinr_fixed_db", "evm_golden_pct", "evm_fixed_pct"})
    EXPECT_TRUE(j["users"][0].contains(key)) << key;
  for (const char* key : {"sinr_loss_db", "evm_impl_pct", "evm_fixed_pct"})
    EXPECT_TRUE(j["summary"].contains(key)) << key;
  EXPECT_EQ(j["summary"]["evm_limit_pct"], 8.0) << "64-QAM: TS 38.104 Table 6.5.2.2-1";
}

TEST(demo_command, writes_its_results_and_says_where) {
  const auto dir = scratch_dir("demo");
  const auto r = run_fxmimo("demo --out " + dir.string());
  ASSERT_EQ(r.exit_code, 0) << r.err;
  for (const char* file :
       {"scenario.toml", "run.json", "range.json", "sweep.json", "tune.json", "tuned.toml", "report.html"})
    EXPECT_TRUE(std::filesystem::exists(dir / file)) << file;
  EXPECT_NE(r.out.find("report: " + (dir / "report.html").string()), std::string::npos) << r.out;
  EXPECT_NE(r.out.find("verification on 200 fresh trials: PASS"), std::string::npos) << r.out;
  EXPECT_NE(r.out.find("simulations"), std::string::npos);
  // The tuned scenario is a valid scenario: fxmimo run accepts it.
  const auto rerun = run_fxmimo("run -c " + (dir / "tuned.toml").string() + " --trials 2");
  EXPECT_EQ(rerun.exit_code, 0) << rerun.err;
  // Both directions: the demo is examples/pier-64-uplink.toml as it stands in the tree, and its
  // run, sweep points, tune and report carry the uplink.
  EXPECT_EQ(fxmimo::test::read_text(dir / "scenario.toml"), fxmimo::test::read_text(example("pier-64-uplink.toml")));
  const auto run = nlohmann::json::parse(fxmimo::test::read_text(dir / "run.json"));
  ASSERT_TRUE(run.contains("uplink")) << "run.json";
  const std::size_t users = run.at("users").size();
  EXPECT_EQ(run.at("uplink").at("users").size(), users);
  const auto sweep = nlohmann::json::parse(fxmimo::test::read_text(dir / "sweep.json"));
  ASSERT_FALSE(sweep.at("points").empty());
  for (const auto& p : sweep.at("points")) EXPECT_TRUE(p.contains("uplink")) << p;
  const auto tune = nlohmann::json::parse(fxmimo::test::read_text(dir / "tune.json"));
  EXPECT_TRUE(tune.at("limits").contains("max_uplink_sinr_loss_db")) << tune.at("limits");
  EXPECT_NE(r.out.find("uplink SINR loss dB"), std::string::npos) << "tune's uplink limit row";
  const std::string html = fxmimo::test::read_text(dir / "report.html");
  EXPECT_NE(html.find("<h3>Uplink at BS 0</h3>"), std::string::npos);
  EXPECT_NE(html.find("data-chart=\"sweep-uplink-errors\""), std::string::npos);
}

TEST(every_command, has_help_with_examples) {
  for (const char* cmd : {"quant", "run", "demo", "range", "sweep", "tune", "report", "vectors", "check", "diff"}) {
    const auto r = run_fxmimo(std::string(cmd) + " --help");
    EXPECT_EQ(r.exit_code, 0) << cmd;
    EXPECT_NE(r.out.find("Examples:"), std::string::npos) << cmd << ":\n" << r.out;
  }
  EXPECT_EQ(run_fxmimo("no-such-command").exit_code, 2);
  EXPECT_EQ(run_fxmimo("").exit_code, 2);
}

TEST(quant_command, bad_input_is_one_line_and_exit_2) {
  auto r = run_fxmimo("quant -f Q1.x 0.5");
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_NE(r.err.find("'Q1.x'"), std::string::npos) << r.err;
  r = run_fxmimo("quant -f Q1.14", "0.25\n\nbanana\n");
  EXPECT_EQ(r.exit_code, 2);
  EXPECT_NE(r.err.find("stdin line 3"), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("'banana'"), std::string::npos) << r.err;
  r = run_fxmimo("quant -f Q1.6 0x1ff");
  EXPECT_EQ(r.exit_code, 2) << "9 bits do not fit an 8-bit word";
}

TEST(quant_command, words_convert_back_to_values) {
  // Q0.15: 0x8000 is -1, 0x4000 is 0.5, 0x0001 is 2^-15 (the two's-complement reading of a
  // 16-bit pattern: common practice).
  const auto r = run_fxmimo("quant --json -f Q0.15 0x8000 0x4000 0x0001");
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto j = nlohmann::json::parse(r.out);
  EXPECT_EQ(j["values"][0]["value"], "-1");
  EXPECT_EQ(j["values"][1]["value"], "0.5");
  EXPECT_EQ(j["values"][2]["value"], "0.000030517578125");
}

}  // namespace
