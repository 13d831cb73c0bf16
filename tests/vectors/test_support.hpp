#pragma once
// Helpers shared by the vectors tests: scratch directories, running outside programs, files.

#include <gtest/gtest.h>

#include <sys/wait.h>

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>
#include <string>

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

}  // namespace fxmimo::vectors::testing
