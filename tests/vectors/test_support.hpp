#pragma once
// Helpers shared by the vectors tests: scratch directories, running outside programs, files.

#include <fmt/core.h>
#include <gtest/gtest.h>
#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "fxmimo/fixedpoint/modes.hpp"

namespace fxmimo::vectors::testing {

/// A fresh, empty directory under the build tree named after the running test.
inline std::filesystem::path scratch_dir(const std::string& leaf = {}) {
  const auto* info = ::testing::UnitTest::GetInstance()->current_test_info();
  std::string name = std::string(info->test_suite_name()) + "." + info->name();
  for (char& ch : name) {
    if (ch == '/') ch = '_';
  }
  std::filesystem::path dir = std::filesystem::path(FXMIMO_BINARY_DIR) / "test_scratch" / "vectors" / name;
  if (!leaf.empty()) dir /= leaf;
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

inline std::string slurp(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

inline void spit(const std::filesystem::path& file, const std::string& bytes) {
  std::ofstream out(file, std::ios::binary | std::ios::trunc);
  out << bytes;
}

struct command_result {
  int exit_code = -1;
  std::string output;  ///< stdout and stderr together
};

/// Runs a shell command line; output goes through a file beside `log`.
inline command_result run_command(const std::string& command, const std::filesystem::path& log) {
  const std::string full = command + " > '" + log.string() + "' 2>&1";
  const int status = std::system(full.c_str());
  command_result r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.output = slurp(log);
  return r;
}

inline bool have_program(const std::string& name) {
  return std::system(("command -v " + name + " > /dev/null 2>&1").c_str()) == 0;
}

/// A Python interpreter that imports numpy (Debian python3-numpy lives under /usr/bin/python3,
/// which may differ from the python3 first on PATH), or nullopt.
inline std::optional<std::string> python_with_numpy() {
  for (const char* candidate : {"/usr/bin/python3", "python3"}) {
    const std::string probe = std::string(candidate) + " -c 'import numpy' > /dev/null 2>&1";
    if (std::system(probe.c_str()) == 0) return std::string(candidate);
  }
  return std::nullopt;
}

/// A path quoted for the shell.
inline std::string quote(const std::filesystem::path& p) { return "'" + p.string() + "'"; }

/// RTL parameter codes (examples/rtl/fxm_requant.v, its header table), written out rather than
/// taken from the enum's order so that a reordered enum cannot silently agree with itself.
inline int rtl_code(fixedpoint::rounding_mode m) {
  switch (m) {
    case fixedpoint::rounding_mode::floor: return 0;
    case fixedpoint::rounding_mode::ceil: return 1;
    case fixedpoint::rounding_mode::toward_zero: return 2;
    case fixedpoint::rounding_mode::half_up: return 3;
    case fixedpoint::rounding_mode::half_down: return 4;
    case fixedpoint::rounding_mode::half_toward_zero: return 5;
    case fixedpoint::rounding_mode::half_away: return 6;
    case fixedpoint::rounding_mode::half_even: return 7;
  }
  return -1;
}
inline int rtl_code(fixedpoint::overflow_mode m) {
  switch (m) {
    case fixedpoint::overflow_mode::wrap: return 0;
    case fixedpoint::overflow_mode::saturate: return 1;
    case fixedpoint::overflow_mode::saturate_symmetric: return 2;
    case fixedpoint::overflow_mode::saturate_zero: return 3;
  }
  return -1;
}

enum class simulator { icarus, verilator };

/// Compiles an example block's testbench (examples/rtl/: `testbench` and `design`, both with top
/// module tb and the same plusargs, plus fxm_requant.v; by default the sequential MAC) with
/// `parameters` in `build` and runs it on the vector set `vec_dir`; the dumps land in `dump_dir`. Fails the test on any
/// simulator warning or error (Icarus prints nothing for a -Wall clean compile; $readmemh complains about short files
/// and the testbench prints "tb:" about missing outputs).
inline void run_testbench(simulator sim, const std::vector<std::pair<std::string, long long>>& parameters,
                          bool force_truncate, const std::filesystem::path& build, const std::filesystem::path& vec_dir,
                          const std::filesystem::path& dump_dir, const char* testbench = "tb_precode_mac.v",
                          const char* design = "precode_mac.v") {
  std::filesystem::create_directories(build);
  std::filesystem::create_directories(dump_dir);
  std::string compile;
  std::string run;
  if (sim == simulator::icarus) {
    compile = "iverilog -g2005 -Wall -o " + quote(build / "tb.vvp");
    for (const auto& [name, value] : parameters) compile += fmt::format(" -Ptb.{}={}", name, value);
    run = "vvp -n " + quote(build / "tb.vvp");
  } else {
    compile = "verilator --binary -Wall -Wno-DECLFILENAME --top-module tb --Mdir " + quote(build / "obj") +
              " -o Vtb -MAKEFLAGS 'OPT_FAST=-O0 OPT_SLOW=-O0 OPT_GLOBAL=-O0'";
    for (const auto& [name, value] : parameters) compile += fmt::format(" -G{}={}", name, value);
    run = quote(build / "obj" / "Vtb");
  }
  if (force_truncate) compile += " -DFORCE_TRUNCATE";
  const std::filesystem::path rtl = std::filesystem::path(FXMIMO_SOURCE_DIR) / "examples" / "rtl";
  for (const char* src : {testbench, design, "fxm_requant.v"}) compile += " " + quote(rtl / src);
  const auto built = run_command(compile, build / "compile.log");
  ASSERT_EQ(built.exit_code, 0) << compile << "\n" << built.output;
  if (sim == simulator::icarus) {
    EXPECT_EQ(built.output, "") << "iverilog -Wall must be silent:\n" << compile;
  }
  const auto ran = run_command(run + " +vec=" + quote(vec_dir) + " +out=" + quote(dump_dir), build / "sim.log");
  ASSERT_EQ(ran.exit_code, 0) << ran.output;
  EXPECT_EQ(ran.output.find("WARNING"), std::string::npos) << ran.output;
  EXPECT_EQ(ran.output.find("tb:"), std::string::npos) << ran.output;
}

}  // namespace fxmimo::vectors::testing
