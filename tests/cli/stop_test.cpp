// SIGINT and SIGTERM during a long run: the command stops before its next trial, writes no
// output, leaves no temporary file, prints one line and exits 128 + the signal (130, 143: the
// shell's convention, POSIX.1-2017 Shell and Utilities 2.8.2).
#include <gtest/gtest.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <thread>

#include "cli_support.hpp"
#include "process_support.hpp"

namespace fs = std::filesystem;
using namespace fxmimo::test;

namespace {

/// The kiosk example with a long block, so that each trial takes a while and a run takes minutes.
void write_slow_scenario(const fs::path& file) {
  std::string t = read_text(fs::path(FXMIMO_SOURCE_DIR) / "examples" / "dpi" / "kiosk-8.toml");
  t.replace(t.find("symbols = 12"), 12, "symbols = 20000");
  t.replace(t.find("trials = 4"), 10, "trials = 100000");
  std::ofstream(file) << t;
}

struct stop_case {
  const char* name;
  std::vector<std::string> args;
  int signal_number;
  const char* signal_name;
  const char* output;  ///< must not exist afterwards
};

void PrintTo(const stop_case& c, std::ostream* os) { *os << c.name; }

class StopSignal : public ::testing::TestWithParam<stop_case> {};

TEST_P(StopSignal, StopsCleanlyWithoutOutput) {
  const stop_case c = GetParam();
  const fs::path dir = scratch_dir(std::string("stop_") + c.name);
  write_slow_scenario(dir / "slow.toml");
  const fs::path err = dir.parent_path() / (std::string(c.name) + ".err");
  const pid_t pid = start_fxmimo(dir, c.args, err);
  std::this_thread::sleep_for(std::chrono::milliseconds(700));
  ASSERT_EQ(::kill(pid, c.signal_number), 0);
  const int status = wait_for(pid);
  ASSERT_TRUE(WIFEXITED(status)) << "ended by the signal itself, not by the handler";
  EXPECT_EQ(WEXITSTATUS(status), 128 + c.signal_number);
  const std::string message = read_text(err);
  EXPECT_NE(message.find(std::string("stopped by ") + c.signal_name), std::string::npos) << message;
  EXPECT_EQ(std::count(message.begin(), message.end(), '\n'), 1) << message;
  EXPECT_FALSE(fs::exists(dir / c.output)) << "no output after a stop";
  for (const auto& e : fs::recursive_directory_iterator(dir)) {
    EXPECT_EQ(e.path().string().find("partial"), std::string::npos) << "temporary left: " << e.path();
  }
}

INSTANTIATE_TEST_SUITE_P(
    Commands, StopSignal,
    ::testing::Values(
        stop_case{"run_sigint", {"run", "-c", "slow.toml", "--json", "r.json"}, SIGINT, "SIGINT", "r.json"},
        stop_case{"tune_sigterm",
                  {"tune", "-c", "slow.toml", "--max-evm", "1", "-o", "t.toml"},
                  SIGTERM,
                  "SIGTERM",
                  "t.toml"},
        stop_case{
            "range_sigint", {"range", "-c", "slow.toml", "--write-scenario", "p.toml"}, SIGINT, "SIGINT", "p.toml"},
        stop_case{"vectors_sigterm",
                  {"vectors", "-c", "slow.toml", "-o", "set", "--trials", "0-999"},
                  SIGTERM,
                  "SIGTERM",
                  "set"}),
    [](const ::testing::TestParamInfo<stop_case>& param_info) { return std::string(param_info.param.name); });

}  // namespace
