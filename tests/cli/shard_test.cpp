// Sharded runs and sweeps: for every split, `run --shard` / `sweep --shard` on each shard and then
// `merge` print and write byte for byte what the same command without --shard does (the reference
// is the program's own unsharded run; README "Sharding a run or a sweep"). Splits with more shards
// than trials or points leave some shards empty, which is allowed. Shards run with other thread
// counts than the unsharded command and are merged out of order.
#include <gtest/gtest.h>

#include <filesystem>
#include <string>
#include <vector>

#include "cli_support.hpp"

namespace fs = std::filesystem;
using fxmimo::test::read_text;

namespace {

struct split_case {
  const char* name;
  std::string command;               ///< after "fxmimo", without outputs
  std::vector<std::string> outputs;  ///< the result options merge writes too ("--json", "--csv")
  int units;                         ///< trials of the run, points of the sweep
};

void PrintTo(const split_case& c, std::ostream* os) { *os << c.name; }

int run_in(const fs::path& dir, const std::string& args, std::string* out = nullptr) {
  const fs::path printed = dir / "stdout.txt";
  const std::string command = "cd '" + dir.string() + "' && '" + std::string(FXMIMO_EXE) + "' " + args + " >'" +
                              printed.string() + "' 2>'" + (dir / "stderr.txt").string() + "'";
  const int status = std::system(command.c_str());
  if (out != nullptr) *out = read_text(printed);
  return WIFEXITED(status) ? WEXITSTATUS(status) : -1;
}

class sharded : public testing::TestWithParam<split_case> {};

TEST_P(sharded, merged_output_is_byte_identical_to_the_unsharded_run_for_every_split) {
  const split_case& c = GetParam();
  const fs::path dir = fxmimo::test::scratch_dir(std::string("shard_") + c.name);
  fs::copy(fs::path(FXMIMO_SOURCE_DIR) / "examples", dir / "examples", fs::copy_options::recursive);
  std::string whole_args = c.command + " --threads 2";
  for (const std::string& o : c.outputs) whole_args += " " + o + " whole" + (o == "--csv" ? ".csv" : ".json");
  std::string whole_stdout;
  ASSERT_EQ(run_in(dir, whole_args, &whole_stdout), 0) << whole_args << "\n" << read_text(dir / "stderr.txt");
  // 1, 2, 3 and 5 shards, and more shards than trials or points (some shards empty).
  for (int n : {1, 2, 3, 5, c.units + 2}) {
    std::string parts;
    for (int i = n; i >= 1; --i) {  // written and listed last shard first: merge orders them
      const std::string part = "part-" + std::to_string(n) + "-" + std::to_string(i) + ".json";
      const std::string args = c.command + " --threads " + std::to_string(1 + i % 2) + " --shard " + std::to_string(i) +
                               "/" + std::to_string(n) + " -o " + part;
      ASSERT_EQ(run_in(dir, args), 0) << args << "\n" << read_text(dir / "stderr.txt");
      parts += " " + part;
    }
    std::string merge_args = "merge" + parts;
    for (const std::string& o : c.outputs)
      merge_args += std::string(o == "--json" ? " -o" : " --csv") + " merged" + (o == "--csv" ? ".csv" : ".json");
    std::string merged_stdout;
    ASSERT_EQ(run_in(dir, merge_args, &merged_stdout), 0) << merge_args << "\n" << read_text(dir / "stderr.txt");
    EXPECT_EQ(merged_stdout, whole_stdout) << n << " shards: merge prints the unsharded command's table";
    for (const std::string& o : c.outputs) {
      const std::string ext = o == "--csv" ? ".csv" : ".json";
      const std::string whole = read_text(dir / ("whole" + ext)), merged = read_text(dir / ("merged" + ext));
      EXPECT_FALSE(whole.empty());
      EXPECT_TRUE(merged == whole) << n << " shards: merged" << ext << " differs from the unsharded output";
    }
  }
}

INSTANTIATE_TEST_SUITE_P(
    splits, sharded,
    testing::Values(
        // ZF with a Neumann inverse, 16 users: per-node figures, percentiles, Gram conditions, warnings.
        split_case{"run_tower", "run -c examples/tower-128-neumann.toml --trials 7", {"--json"}, 7},
        // Three cells sharing pilots, LDL^H.
        split_case{"run_rooftop", "run -c examples/rooftop-64.toml --trials 4", {"--json"}, 4},
        split_case{"sweep_widths",
                   "sweep -c examples/tower-128-neumann.toml --node inv_iter,weights --bits 9:11 --trials 3",
                   {"--json", "--csv"},
                   6},
        // With an uplink: every point's uplink figures go through the parts exactly.
        split_case{"sweep_uplink",
                   "sweep -c examples/pier-64-uplink.toml --node ul_eq,weights --bits 6:7 --trials 2",
                   {"--json", "--csv"},
                   4},
        split_case{"sweep_key",
                   "sweep -c examples/village-16-mf.toml --key array.antennas --values 16,32,64 --trials 4",
                   {"--json", "--csv"},
                   3}),
    [](const testing::TestParamInfo<split_case>& i) { return std::string(i.param.name); });

TEST(shard, a_shard_says_what_it_holds_and_an_empty_shard_writes_an_empty_part) {
  const fs::path dir = fxmimo::test::scratch_dir("shard_lines");
  fs::copy(fs::path(FXMIMO_SOURCE_DIR) / "examples", dir / "examples", fs::copy_options::recursive);
  std::string out;
  ASSERT_EQ(run_in(dir, "run -c examples/village-16-mf.toml --trials 10 --shard 2/3 -o p.json", &out), 0);
  EXPECT_EQ(out, "run: shard 2/3: trials 3 to 5 of 0 to 9; wrote p.json\n");  // floor(10/3) = 3, floor(20/3) = 6
  ASSERT_EQ(run_in(dir, "run -c examples/village-16-mf.toml --trials 2 --shard 1/3 -o e.json", &out), 0);
  EXPECT_EQ(out, "run: shard 1/3: none of the 2 trials (more shards than trials); wrote e.json\n");
  EXPECT_NE(read_text(dir / "e.json").find("\"trials\": []"), std::string::npos);
}

}  // namespace
