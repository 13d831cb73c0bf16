// The check and diff commands as a CI job sees them: exit codes 0 / 1 / 2 and one-line errors
// naming file and line. The vector set and dumps are built here from planted words.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>

#include "fxmimo/vectors/hex_file.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

namespace fs = std::filesystem;
using testing::run_command;
using testing::scratch_dir;
using testing::spit;

std::string exe() { return std::string("'") + FXMIMO_EXE + "'"; }

node_words norm_record() {
  node_words r;
  r.node = "norm";
  r.direction = "out";
  r.spec = {{true, 10, 9}, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  r.dim_names = {"trial"};
  r.dim_sizes = {4};
  r.re = {-512, -1, 0, 511};
  return r;
}

TEST(CliCheck, ExitCodesAndMessages) {
  const fs::path dir = scratch_dir();
  const node_words r = norm_record();
  write_vector_set(dir / "vec", {}, {r});
  const std::string base = exe() + " check '" + (dir / "vec").string() + "' --node norm --dump ";

  spit(dir / "same.hex", "200\n3ff\n000\n1ff\n");  // written by hand: 10-bit patterns
  auto res = run_command(base + "'" + (dir / "same.hex").string() + "'", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 0) << res.output;

  spit(dir / "off.hex", "200\n3ff\n001\n1ff\n");
  res = run_command(base + "'" + (dir / "off.hex").string() + "'", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 1) << res.output;
  EXPECT_NE(res.output.find("first mismatch: flat index 2 (trial=2)"), std::string::npos) << res.output;
  res = run_command(base + "'" + (dir / "off.hex").string() + "' --tolerance-lsb 1", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 0) << res.output;
  res = run_command(base + "'" + (dir / "off.hex").string() + "' --json", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 1) << res.output;
  EXPECT_EQ(nlohmann::json::parse(res.output)["mismatches"][0]["diff_lsb"], "1");

  spit(dir / "xz.hex", "200\n3ff\n0x0\n1ff\n");
  res = run_command(base + "'" + (dir / "xz.hex").string() + "'", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 2) << res.output;
  EXPECT_NE(res.output.find("fxmimo check: " + (dir / "xz.hex").string() + ":3:"), std::string::npos) << res.output;

  spit(dir / "short.hex", "200\n3ff\n");
  res = run_command(base + "'" + (dir / "short.hex").string() + "'", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 2) << res.output;

  res = run_command(exe() + " check '" + (dir / "nothing").string() + "' --node norm --dump x.hex", dir / "log.txt");
  EXPECT_EQ(res.exit_code, 2) << res.output;
  EXPECT_NE(res.output.find("no manifest.json"), std::string::npos) << res.output;
}

TEST(CliDiff, ExitCodes) {
  const fs::path dir = scratch_dir();
  node_words r = norm_record();
  write_vector_set(dir / "a", {}, {r});
  write_vector_set(dir / "b", {}, {r});
  r.re[3] = 500;
  write_vector_set(dir / "c", {}, {r});
  const auto pair = [&](const char* x, const char* y) {
    return exe() + " diff '" + (dir / x).string() + "' '" + (dir / y).string() + "'";
  };
  EXPECT_EQ(run_command(pair("a", "b"), dir / "log.txt").exit_code, 0);
  const auto changed = run_command(pair("a", "c"), dir / "log.txt");
  EXPECT_EQ(changed.exit_code, 1) << changed.output;
  EXPECT_NE(changed.output.find("1/4"), std::string::npos) << changed.output;
  EXPECT_NE(changed.output.find("11 LSB"), std::string::npos) << changed.output;
  EXPECT_EQ(run_command(pair("a", "c") + " --allow norm", dir / "log.txt").exit_code, 0);
  EXPECT_EQ(run_command(pair("a", "missing"), dir / "log.txt").exit_code, 2);
}

}  // namespace
}  // namespace fxmimo::vectors
