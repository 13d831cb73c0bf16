// The fxmimo program under Open MPI's mpirun (Debian openmpi-bin), for real: run, range, sweep and
// tune on 2 and 3 ranks (oversubscribed on a 2-core machine) print and write byte for byte what
// one process without mpirun does (README "On several processes (MPI)"); a shard of a run on 2
// ranks merges to the unsharded run; a command that does not spread is refused once; a rank that
// fails on its own (a resource refusal given to it alone) fails the job with one message naming
// the rank and the cause and nothing written; a rank killed by the kernel (CPU-time limit) fails
// the job with nothing written.
#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <filesystem>
#include <string>
#include <vector>

#include "../cli/cli_support.hpp"

namespace fs = std::filesystem;
using fxmimo::test::read_text;

namespace {

std::string exe() { return std::string("'") + FXMIMO_EXE + "'"; }

/// mpirun with P ranks (oversubscribed: more ranks than cores is allowed; as root where CI runs
/// as root), then its program and arguments; shared memory between the ranks of this machine.
std::string mpirun(int ranks) {
  std::string m = std::string("'") + FXMIMO_MPIEXEC + "' --oversubscribe --bind-to none --mca btl self,vader";
  if (::geteuid() == 0) m += " --allow-run-as-root";
  return m + " -np " + std::to_string(ranks);
}

struct outcome {
  int exit_code = -1;
  std::string out, err;
};

outcome run_in(const fs::path& dir, const std::string& command) {
  const std::string full = "cd '" + dir.string() + "' && " + command + " >stdout.txt 2>stderr.txt";
  const int status = std::system(full.c_str());
  return {WIFEXITED(status) ? WEXITSTATUS(status) : -1, read_text(dir / "stdout.txt"), read_text(dir / "stderr.txt")};
}

fs::path with_examples(const std::string& name) {
  const fs::path dir = fxmimo::test::scratch_dir("mpi_" + name);
  fs::copy(fs::path(FXMIMO_SOURCE_DIR) / "examples", dir / "examples", fs::copy_options::recursive);
  return dir;
}

struct spread_case {
  const char* name;
  std::string args;                ///< after "fxmimo", outputs named out.*
  std::vector<std::string> files;  ///< the outputs to compare
};

void PrintTo(const spread_case& c, std::ostream* os) { *os << c.name; }

class spread : public testing::TestWithParam<spread_case> {};

TEST_P(spread, two_and_three_ranks_print_and_write_what_one_process_does) {
  const spread_case& c = GetParam();
  const fs::path dir = with_examples(c.name);
  const outcome alone = run_in(dir, exe() + " " + c.args + " --threads 2");
  // 0, or 1 where tune's verification does not prove every limit: the same code under mpirun.
  ASSERT_TRUE(alone.exit_code == 0 || alone.exit_code == 1) << alone.err;
  std::vector<std::string> files;
  for (const std::string& f : c.files) {
    ASSERT_TRUE(fs::exists(dir / f)) << f;
    files.push_back(read_text(dir / f));
    fs::remove(dir / f);
  }
  for (const int ranks : {2, 3}) {
    const outcome spread_run = run_in(dir, mpirun(ranks) + " " + exe() + " " + c.args + " --threads 1");
    ASSERT_EQ(spread_run.exit_code, alone.exit_code) << ranks << " ranks\n" << spread_run.err;
    EXPECT_EQ(spread_run.out, alone.out) << ranks << " ranks";
    for (std::size_t i = 0; i < files.size(); ++i) {
      EXPECT_EQ(read_text(dir / c.files[i]), files[i]) << c.files[i] << " on " << ranks << " ranks";
      fs::remove(dir / c.files[i]);
    }
    EXPECT_FALSE(fs::exists(dir / "out.json.partial"));
  }
}

INSTANTIATE_TEST_SUITE_P(
    commands, spread,
    testing::Values(
        spread_case{"run", "run -c examples/rooftop-64.toml --trials 5 --json out.json", {"out.json"}},
        spread_case{"range", "range -c examples/tower-128-neumann.toml --trials 40 --json out.json", {"out.json"}},
        spread_case{"sweep",
                    "sweep -c examples/rooftop-64.toml --node weights,dac --bits 8:10 --trials 4 --json out.json "
                    "--csv out.csv",
                    {"out.json", "out.csv"}},
        spread_case{"tune",
                    "tune -c examples/rooftop-64.toml --trials 4 --range-trials 100 --verify-trials 6 "
                    "--max-sinr-loss 0.3 --max-evm 2 -o out.toml --json out.json",
                    {"out.toml", "out.json"}}),
    [](const testing::TestParamInfo<spread_case>& i) { return std::string(i.param.name); });

TEST(mpi, shards_computed_on_two_ranks_merge_to_the_unsharded_run) {
  const fs::path dir = with_examples("shards");
  const std::string run = " run -c examples/rooftop-64.toml --trials 5";
  ASSERT_EQ(run_in(dir, exe() + run + " --json whole.json").exit_code, 0);
  for (const char* shard : {"1/2", "2/2"}) {
    const outcome part = run_in(dir, mpirun(2) + " " + exe() + run + " --threads 1 --shard " + shard + " -o part-" +
                                         std::string(1, shard[0]) + ".json");
    ASSERT_EQ(part.exit_code, 0) << part.err;
  }
  ASSERT_EQ(run_in(dir, exe() + " merge part-2.json part-1.json -o merged.json").exit_code, 0);
  EXPECT_EQ(read_text(dir / "merged.json"), read_text(dir / "whole.json"));
}

TEST(mpi, a_command_that_does_not_spread_is_refused_once) {
  const fs::path dir = with_examples("refused");
  const outcome r = run_in(dir, mpirun(2) + " " + exe() + " vectors -c examples/rooftop-64.toml --trials 1 -o vec");
  EXPECT_NE(r.exit_code, 0);
  EXPECT_NE(r.err.find("fxmimo vectors: runs on one process, not on the 2 of this MPI job"), std::string::npos)
      << r.err;
  // One message: the other rank prints nothing.
  EXPECT_EQ(r.err.find("fxmimo vectors:"), r.err.rfind("fxmimo vectors:")) << r.err;
  EXPECT_FALSE(fs::exists(dir / "vec"));
}

TEST(mpi, a_rank_that_fails_alone_fails_the_job_with_one_message_and_nothing_written) {
  const fs::path dir = with_examples("rank_fails");
  const std::string run = " run -c examples/rooftop-64.toml --trials 6 --threads 1 --json out.json";
  // Multiple programs, one job: ranks 0 and 1 as usual, rank 2 with a memory limit it cannot meet.
  const outcome r = run_in(dir, mpirun(2) + " " + exe() + run + " : -np 1 " + exe() + run + " --max-memory 1K");
  EXPECT_EQ(r.exit_code, 4) << r.err;  // every rank exits with rank 0's code
  const std::string expected =
      "fxmimo run: rank 2 of 3 failed: it left the command with exit code 2 before this "
      "exchange: fxmimo run: ";
  EXPECT_NE(r.err.find(expected), std::string::npos) << r.err;
  EXPECT_NE(r.err.find("--max-memory"), std::string::npos) << r.err;
  EXPECT_EQ(r.err.find("fxmimo run:"), r.err.find(expected)) << "one message from fxmimo:\n" << r.err;
  EXPECT_NE(r.err.find("; nothing was written"), std::string::npos) << r.err;
  EXPECT_FALSE(fs::exists(dir / "out.json"));
  EXPECT_FALSE(fs::exists(dir / "out.json.partial"));
}

TEST(mpi, a_rank_killed_by_the_kernel_fails_the_job_with_nothing_written) {
  const fs::path dir = with_examples("rank_killed");
  const std::string run = " run -c examples/metro-7-shadowed.toml --trials 200 --threads 1 --json out.json";
  // Rank 1 may use one second of CPU time; its share needs more, so the kernel kills it.
  const outcome r =
      run_in(dir, mpirun(1) + " " + exe() + run + " : -np 1 bash -c 'ulimit -t 1; exec " + exe() + run + "'");
  EXPECT_NE(r.exit_code, 0) << r.err;
  EXPECT_NE(r.err.find("rank 1"), std::string::npos) << r.err;  // mpirun names it
  EXPECT_FALSE(fs::exists(dir / "out.json"));
  EXPECT_FALSE(fs::exists(dir / "out.json.partial"));
}

}  // namespace
