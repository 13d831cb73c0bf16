// The resource estimates against the kernel's own account of the program's peak memory
// (getrusage ru_maxrss of the child, Linux), the byte sizes against IEC 80000-13 binary prefixes,
// and the stop request.
#include "fxmimo/analysis/resources.hpp"

#include <gtest/gtest.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <atomic>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/golden/scenario.hpp"
#include "sanitizers.hpp"

namespace fs = std::filesystem;
using namespace fxmimo;

namespace {

std::string read_text(const fs::path& p) {
  std::ifstream in(p);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::string replaced(std::string text, const std::string& from, const std::string& to) {
  const std::size_t at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  if (at != std::string::npos) text.replace(at, from.size(), to);
  return text;
}

/// The kiosk example with its array, users, pilots and block length changed.
std::string kiosk_with(int antennas, int users, int symbols, int cells) {
  std::string t = read_text(fs::path(FXMIMO_SOURCE_DIR) / "examples" / "dpi" / "kiosk-8.toml");
  t = replaced(t, "antennas = 8", "antennas = " + std::to_string(antennas));
  t = replaced(
      t, "count = 1\nusers_per_cell = 3\nuser_gains_db = [0.0, 3.0, 6.0]",
      "count = " + std::to_string(cells) + "\nusers_per_cell = " + std::to_string(users) + "\nuser_gains_db = [" +
          [&] {
            std::string g;
            for (int k = 0; k < users; ++k) g += (k ? ", " : "") + std::to_string(k % 7) + ".0";
            return g;
          }() +
          "]" + (cells > 1 ? "\ncross_gain_db = -10.0" : ""));
  t = replaced(t, "length = 4", "length = " + std::to_string(users));
  t = replaced(t, "symbols = 12", "symbols = " + std::to_string(symbols));
  return t;
}

/// Peak resident bytes of `fxmimo run` on the scenario text, one trial, one thread.
double peak_rss_of_run(const std::string& scenario_text, const std::string& name) {
  const fs::path dir = fs::temp_directory_path() / ("fxmimo_resources_" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const fs::path file = dir / (name + ".toml");
  std::ofstream(file) << scenario_text;
  std::fflush(stdout);  // or the child would print this process's buffered lines again
  const pid_t pid = ::fork();
  if (pid == 0) {
    if (std::freopen("/dev/null", "w", stdout) == nullptr) ::_exit(126);
    const std::string path = file.string();
    ::execl(FXMIMO_EXE, FXMIMO_EXE, "run", "-c", path.c_str(), "--trials", "1", "--threads", "1",
            static_cast<char*>(nullptr));
    ::_exit(127);
  }
  int status = 0;
  rusage usage{};
  EXPECT_EQ(::wait4(pid, &status, 0, &usage), pid);
  EXPECT_TRUE(WIFEXITED(status) && WEXITSTATUS(status) == 0) << name;
  return static_cast<double>(usage.ru_maxrss) * 1024.0;  // kilobytes on Linux (getrusage(2))
}

bool under_sanitizers() { return fxmimo::test::built_with_asan(); }

}  // namespace

TEST(ResourceEstimate, IsWithinAFactorOfTwoOfTheMeasuredPeak) {
  // The growth of the peak over a tiny run is what the estimate predicts; the kernel measures it.
  // A wide array with many users in three cells (antennas x users terms); a long data block no
  // longer grows the peak (BoundedMemory below).
  if (under_sanitizers()) GTEST_SKIP() << "the sanitizers' shadow memory changes the peak";
  const double base_rss = peak_rss_of_run(kiosk_with(8, 3, 12, 1), "base");
  for (const auto& [name, text] : {std::pair{"wide_array", kiosk_with(2048, 128, 16, 3)}}) {
    const golden::scenario scen = golden::parse_scenario_text(text, name);
    const golden::scenario base = golden::parse_scenario_text(kiosk_with(8, 3, 12, 1), "base");
    const double predicted = analysis::trial_memory_bytes(scen).amount - analysis::trial_memory_bytes(base).amount;
    const double measured = peak_rss_of_run(text, name) - base_rss;
    std::printf("%s: measured %s, predicted %s\n", name, analysis::bytes_text(measured).c_str(),
                analysis::bytes_text(predicted).c_str());
    ASSERT_GT(predicted, 32.0 * 1024 * 1024) << name << ": large enough to stand above the noise";
    EXPECT_GT(measured, 0.5 * predicted) << name << ": measured " << analysis::bytes_text(measured) << ", predicted "
                                         << analysis::bytes_text(predicted);
    EXPECT_LT(measured, 2.0 * predicted) << name << ": measured " << analysis::bytes_text(measured) << ", predicted "
                                         << analysis::bytes_text(predicted);
  }
}

// The data phase streams in blocks: a run over 100 000 symbols peaks at no more than 1.3 times a
// run over 1 000 (the process's own peak resident set, getrusage), where holding the block would
// take 128 antennas x 100 000 symbols x 16 bytes = 195 MiB per antennas-by-symbols matrix.
TEST(BoundedMemory, PeakDoesNotGrowWithTheNumberOfSymbols) {
  if (under_sanitizers()) GTEST_SKIP() << "the sanitizers' shadow memory changes the peak";
  const double short_rss = peak_rss_of_run(kiosk_with(128, 8, 1000, 2), "short_block");
  const double long_rss = peak_rss_of_run(kiosk_with(128, 8, 100000, 2), "long_block");
  std::printf("peak RSS: N = 1000 %s, N = 100000 %s (%.2fx)\n", analysis::bytes_text(short_rss).c_str(),
              analysis::bytes_text(long_rss).c_str(), long_rss / short_rss);
  EXPECT_LE(long_rss, 1.3 * short_rss) << analysis::bytes_text(long_rss) << " against "
                                       << analysis::bytes_text(short_rss);
  // The estimate sees the same: one block of symbols, whatever N.
  EXPECT_EQ(analysis::trial_memory_bytes(golden::parse_scenario_text(kiosk_with(128, 8, 100000, 2), "l")).amount,
            analysis::trial_memory_bytes(golden::parse_scenario_text(kiosk_with(128, 8, 1000, 2), "s")).amount);
}

TEST(ResourceEstimate, NamesTheKeyOfTheLargestTerm) {
  const auto long_block = golden::parse_scenario_text(kiosk_with(64, 4, 100000, 1), "long");
  EXPECT_EQ(analysis::trial_memory_bytes(long_block).key, "data.symbols");
  EXPECT_EQ(analysis::trial_work_macs(long_block).key, "data.symbols");
  const auto wide = golden::parse_scenario_text(kiosk_with(2048, 128, 16, 3), "wide");
  EXPECT_EQ(analysis::trial_memory_bytes(wide).key, "cells.users_per_cell");
}

TEST(ResourceEstimate, WorkGrowsAsTheProductsOfTheDimensions) {
  // Doubling the block doubles the precoding term; the work of a long block is dominated by it.
  const auto a = golden::parse_scenario_text(kiosk_with(64, 4, 100000, 1), "a");
  const auto b = golden::parse_scenario_text(kiosk_with(64, 4, 200000, 1), "b");
  EXPECT_NEAR(analysis::trial_work_macs(b).amount / analysis::trial_work_macs(a).amount, 2.0, 0.01);
}

TEST(ByteSizes, ReadAndWriteBinaryPrefixes) {
  // IEC 80000-13: Ki = 2^10, Mi = 2^20, Gi = 2^30, Ti = 2^40 (the bare K, M, G, T of memory sizes
  // read as the same, common practice).
  EXPECT_EQ(analysis::parse_bytes("2048"), 2048.0);
  EXPECT_EQ(analysis::parse_bytes("512M"), 512.0 * 1048576.0);
  EXPECT_EQ(analysis::parse_bytes("1.5GiB"), 1.5 * 1073741824.0);
  EXPECT_EQ(analysis::parse_bytes("48g"), 48.0 * 1073741824.0);
  EXPECT_EQ(analysis::parse_bytes("2T"), 2.0 * 1099511627776.0);
  EXPECT_EQ(analysis::parse_bytes("lots"), std::nullopt);
  EXPECT_EQ(analysis::parse_bytes("-1G"), std::nullopt);
  EXPECT_EQ(analysis::parse_bytes("0"), std::nullopt);
  EXPECT_EQ(analysis::parse_bytes("5X"), std::nullopt);
  EXPECT_EQ(analysis::bytes_text(800), "800 B");
  EXPECT_EQ(analysis::bytes_text(1536), "1.5 KiB");
  EXPECT_EQ(analysis::bytes_text(640.0 * 1048576.0), "640 MiB");
  EXPECT_EQ(analysis::bytes_text(1.5 * 1073741824.0), "1.5 GiB");
}

TEST(AvailableMemory, IsPositiveAndNoMoreThanTheMachineHas) {
  const std::optional<double> avail = analysis::available_memory_bytes();
  ASSERT_TRUE(avail.has_value()) << "/proc/meminfo is readable on Linux";
  const double total = static_cast<double>(::sysconf(_SC_PHYS_PAGES)) * static_cast<double>(::sysconf(_SC_PAGESIZE));
  EXPECT_GT(*avail, 0.0);
  EXPECT_LE(*avail, total);
}

TEST(StopRequest, EndsTheTrialLoopsBeforeTheirNextTrial) {
  // Asked before the loop, no trial body runs and the loop throws stop_requested naming SIGTERM.
  EXPECT_EQ(analysis::stop_signal(), 0);
  EXPECT_NO_THROW(analysis::throw_if_stop_requested());
  std::atomic<int> bodies{0};
  analysis::for_each_index_parallel(8, 2, [&](std::size_t) { ++bodies; });
  EXPECT_EQ(bodies.load(), 8);
  // Asked in the middle (by the third body), the remaining indices are not started.
  bodies = 0;
  try {
    analysis::for_each_index_parallel(1000, 2, [&](std::size_t) {
      if (++bodies == 3) analysis::request_stop(15);
    });
    ADD_FAILURE() << "no stop_requested thrown";
  } catch (const analysis::stop_requested& e) {
    EXPECT_EQ(e.signal, 15);
  }
  EXPECT_LE(bodies.load(), 4) << "at most the bodies already running finish";
  analysis::request_stop(0);  // this test program goes on
}
