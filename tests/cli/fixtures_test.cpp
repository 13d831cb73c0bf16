// Files written by an earlier fxmimo (tests/fixtures/, written at commit 1e106d8 from
// examples/village-16-mf.toml: a vector set of norm and dac for trial 0 as hex and as .npy,
// and the run, sweep and tune results JSON) must stay readable: teams keep such files for years
// and regress against them. check, diff and report read them; a newer schema is one clear error.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>

#include "cli_support.hpp"

namespace fs = std::filesystem;
using fxmimo::test::read_text;
using fxmimo::test::run_fxmimo;
using fxmimo::test::scratch_dir;

namespace {

const fs::path fixtures = fs::path(FXMIMO_SOURCE_DIR) / "tests" / "fixtures";

std::string quoted(const fs::path& p) { return "'" + p.string() + "'"; }

TEST(OldFiles, CheckAcceptsTheSetsOwnWordsAndNamesAPlantedMismatch) {
  const fs::path set = fixtures / "vec-hex";
  const auto ok = run_fxmimo("check " + quoted(set) + " --node dac --dump " + quoted(set / "dac.out.re.hex") +
                             " --dump " + quoted(set / "dac.out.im.hex"));
  EXPECT_EQ(ok.exit_code, 0) << ok.out << ok.err;
  // One word changed by one LSB in the dump: word 5 of the real part (antenna 0, symbol 5).
  const fs::path dir = scratch_dir("old_set_check");
  std::ifstream in(set / "dac.out.re.hex");
  std::ofstream out(dir / "dac_re.hex");
  std::string line;
  int i = 0;
  std::string original;
  while (std::getline(in, line)) {
    if (i++ == 5) {
      original = line;
      const unsigned long v = std::stoul(line, nullptr, 16);
      char buf[16];
      std::snprintf(buf, sizeof buf, "%0*lx", static_cast<int>(line.size()), (v ^ 1UL));
      line = buf;
    }
    out << line << "\n";
  }
  out.close();
  const auto bad = run_fxmimo("check " + quoted(set) + " --node dac --dump " + quoted(dir / "dac_re.hex") + " --dump " +
                              quoted(set / "dac.out.im.hex"));
  EXPECT_EQ(bad.exit_code, 1) << bad.out << bad.err;
  EXPECT_NE(bad.out.find("symbol=5"), std::string::npos) << bad.out;
}

TEST(OldFiles, DiffReadsTheHexAndNpySetsAsIdentical) {
  const auto r = run_fxmimo("diff " + quoted(fixtures / "vec-hex") + " " + quoted(fixtures / "vec-npy"));
  EXPECT_EQ(r.exit_code, 0) << r.out << r.err;
  EXPECT_NE(r.out.find("dac/out                      identical          0/3072"), std::string::npos) << r.out;
  EXPECT_NE(r.out.find("norm/out                     identical             0/1"), std::string::npos) << r.out;
}

TEST(OldFiles, ReportDrawsTheRunSweepAndTuneResults) {
  const fs::path html = scratch_dir("old_results_report") / "r.html";
  const auto r = run_fxmimo("report " + quoted(fixtures / "run.json") + " " + quoted(fixtures / "sweep.json") + " " +
                            quoted(fixtures / "tune.json") + " -o " + quoted(html));
  ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
  const std::string page = read_text(html);
  EXPECT_NE(page.find("village-16-mf"), std::string::npos);
  // The tune fixture chose a width per node: every chosen format appears in the page.
  const nlohmann::json tune = nlohmann::json::parse(read_text(fixtures / "tune.json"));
  ASSERT_FALSE(tune.at("nodes").empty());
  for (const auto& [node, chosen] : tune.at("nodes").items()) {
    EXPECT_NE(page.find(chosen.at("format").get<std::string>()), std::string::npos) << node;
  }
}

TEST(OldFiles, AManifestOfANewerSchemaIsOneClearError) {
  const fs::path dir = scratch_dir("newer_manifest");
  fs::copy(fixtures / "vec-hex", dir / "set");
  nlohmann::json m = nlohmann::json::parse(read_text(dir / "set" / "manifest.json"));
  m["schema"] = 99;
  std::ofstream(dir / "set" / "manifest.json") << m.dump(1);
  const auto r = run_fxmimo("diff " + quoted(dir / "set") + " " + quoted(fixtures / "vec-hex"));
  EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
  EXPECT_NE(r.err.find("schema 99 is not supported"), std::string::npos) << r.err;
}

}  // namespace

namespace {

TEST(OldFiles, AResultsFileOfANewerSchemaIsOneClearError) {
  const fs::path dir = scratch_dir("newer_results");
  nlohmann::json run = nlohmann::json::parse(read_text(fixtures / "run.json"));
  run["schema"] = 2;
  std::ofstream(dir / "run.json") << run.dump(1);
  const auto r = run_fxmimo("report " + quoted(dir / "run.json") + " -o " + quoted(dir / "r.html"));
  EXPECT_EQ(r.exit_code, 2) << r.out << r.err;
  EXPECT_NE(r.err.find("run.json: schema 2 is not supported (this reader knows 1)"), std::string::npos) << r.err;
  EXPECT_FALSE(fs::exists(dir / "r.html"));
}

TEST(OldFiles, TheOldTuneFileShowsItsFourLimitsInTheReport) {
  // tests/fixtures/tune.json predates the power-error key names (max_tx_power_error_db); the
  // report still shows the fourth limit from it.
  const fs::path html = scratch_dir("old_tune_limits") / "r.html";
  const auto r = run_fxmimo("report " + quoted(fixtures / "tune.json") + " -o " + quoted(html));
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const std::string page = read_text(html);
  for (const char* label :
       {"SINR loss (dB)", "implementation EVM (%)", "overflow rate (worst node)", "RMS tx power error (dB)"})
    EXPECT_NE(page.find(label), std::string::npos) << label;
}

}  // namespace
