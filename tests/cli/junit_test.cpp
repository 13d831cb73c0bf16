// --junit of check, diff and tune: the program's JUnit XML validated by libxml2's xmllint
// against tests/io/junit.xsd (the structure CI servers read), read back through XPath, with a
// planted failure caught in each: a changed dump word, a narrower node, a limit the
// re-verification misses.
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <regex>

#include "cli_support.hpp"

namespace fs = std::filesystem;
using fxmimo::test::read_text;
using fxmimo::test::run_fxmimo;
using fxmimo::test::scratch_dir;

namespace {

const fs::path source = FXMIMO_SOURCE_DIR;
const fs::path fixtures = source / "tests" / "fixtures";
const fs::path schema = source / "tests" / "io" / "junit.xsd";

std::string quoted(const fs::path& p) { return "'" + p.string() + "'"; }

std::string shell(const std::string& command) {
  std::string out;
  FILE* pipe = popen((command + " 2>&1").c_str(), "r");
  if (pipe == nullptr) return out;
  std::array<char, 4096> buffer{};
  while (std::fgets(buffer.data(), static_cast<int>(buffer.size()), pipe) != nullptr) out += buffer.data();
  pclose(pipe);
  return out;
}

bool have_xmllint() { return fs::exists("/usr/bin/xmllint"); }

/// The file validates against the schema (xmllint says "FILE validates").
void expect_valid(const fs::path& xml) {
  const std::string out = shell("xmllint --noout --schema " + quoted(schema) + " " + quoted(xml));
  EXPECT_NE(out.find(" validates"), std::string::npos) << out << read_text(xml);
}

std::string xpath(const fs::path& xml, const std::string& expr) {
  std::string out = shell("xmllint --xpath '" + expr + "' " + quoted(xml));
  if (!out.empty() && out.back() == '\n') out.pop_back();  // xmllint ends a string result with one
  return out;
}

TEST(Junit, CheckPassesBitExactAndFailsOnAChangedWordNamingIt) {
  if (!have_xmllint()) GTEST_SKIP() << "xmllint (Debian package libxml2-utils) is absent";
  const fs::path dir = scratch_dir("junit_check");
  const fs::path set = fixtures / "vec-hex";
  const auto ok = run_fxmimo("check " + quoted(set) + " --node dac --dump " + quoted(set / "dac.out.re.hex") +
                             " --dump " + quoted(set / "dac.out.im.hex") + " --junit " + quoted(dir / "ok.xml"));
  ASSERT_EQ(ok.exit_code, 0) << ok.out << ok.err;
  expect_valid(dir / "ok.xml");
  EXPECT_EQ(xpath(dir / "ok.xml", "string(/testsuites/@tests)"), "1");
  EXPECT_EQ(xpath(dir / "ok.xml", "string(/testsuites/@failures)"), "0");
  EXPECT_EQ(xpath(dir / "ok.xml", "string(//testcase/@name)"), "dac/out");
  // Word 5 of the real part (antenna 0, symbol 5) changed by one LSB.
  std::ifstream in(set / "dac.out.re.hex");
  std::ofstream out(dir / "dac_re.hex");
  std::string line;
  for (int i = 0; std::getline(in, line); ++i) {
    if (i == 5) {
      char buf[16];
      std::snprintf(buf, sizeof buf, "%0*lx", static_cast<int>(line.size()), std::stoul(line, nullptr, 16) ^ 1UL);
      line = buf;
    }
    out << line << "\n";
  }
  out.close();
  const auto bad = run_fxmimo("check " + quoted(set) + " --node dac --dump " + quoted(dir / "dac_re.hex") + " --dump " +
                              quoted(set / "dac.out.im.hex") + " --junit " + quoted(dir / "bad.xml"));
  ASSERT_EQ(bad.exit_code, 1) << bad.out << bad.err;
  expect_valid(dir / "bad.xml");
  EXPECT_EQ(xpath(dir / "bad.xml", "string(/testsuites/@failures)"), "1");
  const std::string message = xpath(dir / "bad.xml", "string(//testcase/failure/@message)");
  EXPECT_NE(message.find("MISMATCH"), std::string::npos) << message;
  EXPECT_NE(message.find("symbol=5"), std::string::npos) << message;
  EXPECT_NE(xpath(dir / "bad.xml", "string(//testcase/failure)").find("first mismatch"), std::string::npos);
}

/// examples/village-16-mf.toml with the dac's format replaced.
fs::path scenario_with_dac(const fs::path& dir, const std::string& format) {
  std::string text = read_text(source / "examples" / "village-16-mf.toml");
  const std::string from = "[nodes.dac]                  # 12-bit converter\nformat = \"Q0.11\"";
  const std::size_t at = text.find(from);
  EXPECT_NE(at, std::string::npos) << "the example's dac table moved";
  if (at != std::string::npos) {
    text.replace(at, from.size(), "[nodes.dac]\nformat = \"" + format + "\"");
  }
  const fs::path path = dir / ("dac_" + format + ".toml");
  std::ofstream(path) << text;
  return path;
}

TEST(Junit, DiffHasACasePerRecordAndFailsTheNarrowerNode) {
  if (!have_xmllint()) GTEST_SKIP() << "xmllint (Debian package libxml2-utils) is absent";
  const fs::path dir = scratch_dir("junit_diff");
  for (const char* f : {"Q0.11", "Q0.9"}) {
    const auto r = run_fxmimo("vectors -c " + quoted(scenario_with_dac(dir, f)) + " -o " +
                              quoted(dir / (std::string("set_") + f)) + " --nodes tx_acc,dac --trials 0");
    ASSERT_EQ(r.exit_code, 0) << r.out << r.err;
  }
  const auto r = run_fxmimo("diff " + quoted(dir / "set_Q0.11") + " " + quoted(dir / "set_Q0.9") + " --junit " +
                            quoted(dir / "diff.xml"));
  ASSERT_EQ(r.exit_code, 1) << r.out << r.err;
  expect_valid(dir / "diff.xml");
  // One case per record of the diff table; only dac's output changed.
  const std::string count = xpath(dir / "diff.xml", "count(//testcase)");
  std::size_t rows = 0;
  for (const char* label : {"tx_acc/in/weights", "tx_acc/in/symbols", "tx_acc/out", "dac/in", "dac/out"}) {
    if (r.out.find(label) != std::string::npos) ++rows;
  }
  EXPECT_EQ(count, std::to_string(rows)) << r.out;
  EXPECT_EQ(xpath(dir / "diff.xml", "string(/testsuites/@failures)"), "1") << r.out;
  EXPECT_EQ(xpath(dir / "diff.xml", "string(//testcase[failure]/@name)"), "dac/out");
  EXPECT_NE(xpath(dir / "diff.xml", "string(//testcase[failure]/failure/@message)")
                .find("format Q0.11 (12 bits signed) -> Q0.9 (10 bits signed)"),
            std::string::npos);
  // Allowed, the same change passes.
  const auto allowed = run_fxmimo("diff " + quoted(dir / "set_Q0.11") + " " + quoted(dir / "set_Q0.9") +
                                  " --allow dac --junit " + quoted(dir / "allowed.xml"));
  ASSERT_EQ(allowed.exit_code, 0) << allowed.out << allowed.err;
  EXPECT_EQ(xpath(dir / "allowed.xml", "string(/testsuites/@failures)"), "0");
}

TEST(Junit, TuneHasACasePerLimitAndFailsExactlyTheLimitsItsJsonMisses) {
  if (!have_xmllint()) GTEST_SKIP() << "xmllint (Debian package libxml2-utils) is absent";
  const fs::path dir = scratch_dir("junit_tune");
  // Two search trials and two fresh ones: few enough that the fresh trials can miss a limit (the
  // power error on this scenario, measured when the test was written); the test checks the XML
  // against the program's own JSON either way.
  const auto r =
      run_fxmimo("tune -c " + quoted(source / "examples" / "village-16-mf.toml") +
                 " --trials 2 --range-trials 40 --verify-trials 2 --max-sinr-loss 0.1 --max-evm 1.0 -o " +
                 quoted(dir / "t.toml") + " --json " + quoted(dir / "t.json") + " --junit " + quoted(dir / "t.xml"));
  ASSERT_TRUE(r.exit_code == 0 || r.exit_code == 1) << r.out << r.err;
  expect_valid(dir / "t.xml");
  const nlohmann::json j = nlohmann::json::parse(read_text(dir / "t.json"));
  const std::vector<std::tuple<std::string, std::string, std::string>> limits{
      {"SINR loss", "max_sinr_loss_db", "sinr_loss_db"},
      {"implementation EVM", "max_evm_pct", "evm_impl_pct"},
      {"overflow rate (worst node)", "max_overflow_rate", "max_overflow_rate"},
      {"RMS tx power error", "max_rms_tx_power_error_db", "rms_tx_power_error_db"}};
  EXPECT_EQ(xpath(dir / "t.xml", "count(//testcase)"), "4");
  int failing = 0;
  for (const auto& [name, limit, value] : limits) {
    const bool exceeded = j["verification"][value].get<double>() > j["limits"][limit].get<double>();
    failing += exceeded ? 1 : 0;
    EXPECT_EQ(xpath(dir / "t.xml", "count(//testcase[@name=\"" + name + "\"]/failure)"), exceeded ? "1" : "0") << name;
  }
  EXPECT_EQ(xpath(dir / "t.xml", "string(/testsuites/@failures)"), std::to_string(failing));
  EXPECT_EQ(r.exit_code, failing == 0 ? 0 : 1);
  // The chosen formats travel as properties.
  for (const auto& [node, n] : j["nodes"].items()) {
    EXPECT_EQ(xpath(dir / "t.xml", "string(//property[@name=\"node." + node + "\"]/@value)"), n["format"]) << node;
  }
  // So does the bound the fresh trials prove, as the JSON states it, to the property's six
  // significant digits (a relative 5e-6). With 2 fresh trials and no
  // overflow, 2.996 / (2 x the sparsest node's values per trial)).
  const double bound = j["verification"]["proven_overflow_bound_95"].get<double>();
  EXPECT_NEAR(std::stod(xpath(dir / "t.xml", "string(//property[@name=\"proven_overflow_bound_95\"]/@value)")), bound,
              1e-5 * bound);
  EXPECT_EQ(xpath(dir / "t.xml", "string(//property[@name=\"proven_overflow_bound_node\"]/@value)"),
            j["verification"]["weakest_node"]);
}

}  // namespace
