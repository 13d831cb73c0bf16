#pragma once
// Runs the fxmimo program and captures what it prints and its exit code.
#include <sys/wait.h>

#include <array>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>

namespace fxmimo::test {

struct command_result {
  int exit_code = -1;
  std::string out;
  std::string err;
};

inline std::string read_text(const std::filesystem::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// Runs `fxmimo ARGS` through the shell (ARGS already quoted as needed).
inline command_result run_fxmimo(const std::string& args, const std::string& stdin_text = "") {
  static int counter = 0;
  const auto dir = std::filesystem::temp_directory_path() / ("fxmimo_cli_" + std::to_string(::getpid()));
  std::filesystem::create_directories(dir);
  const auto err_path = dir / ("err" + std::to_string(++counter));
  const auto in_path = dir / ("in" + std::to_string(counter));
  std::ofstream(in_path) << stdin_text;
  const std::string command =
      std::string(FXMIMO_EXE) + " " + args + " <" + in_path.string() + " 2>" + err_path.string();
  command_result r;
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return r;
  std::array<char, 4096> buffer{};
  while (std::fgets(buffer.data(), static_cast<int>(buffer.size()), pipe) != nullptr) r.out += buffer.data();
  const int status = pclose(pipe);
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.err = read_text(err_path);
  return r;
}

/// A scratch directory for one test.
inline std::filesystem::path scratch_dir(const std::string& name) {
  const auto dir = std::filesystem::temp_directory_path() / ("fxmimo_test_" + std::to_string(::getpid())) / name;
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

}  // namespace fxmimo::test
