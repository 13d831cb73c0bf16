// Fuzz target: the command line. The input, split on NUL bytes, is the argument list after
// "fxmimo". Commands that simulate (demo, run, range, sweep, tune, vectors) are only tried with
// --help, so every input stays cheap; quant, check, diff and report run for real, in a scratch
// directory of their own, on relative paths only (no argument with a '/', so never /dev/zero or
// /dev/stdin). Exit code 3 (internal error: a logic_error escaped a command) is a finding.
#include <fcntl.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>
#include <string_view>
#include <system_error>
#include <vector>

#include "fxmimo/app/program.hpp"

namespace {

std::string scratch_dir;

void remove_scratch_dir() {
  std::error_code ec;
  std::filesystem::remove_all(scratch_dir, ec);
}

}  // namespace

extern "C" int LLVMFuzzerInitialize(int* /*argc*/, char*** /*argv*/) {
  // Files the commands write land in a fresh directory, never in the tree; removed at a normal exit.
  scratch_dir = (std::filesystem::temp_directory_path() / "fxmimo-fuzz-cli-XXXXXX").string();
  if (mkdtemp(scratch_dir.data()) == nullptr || chdir(scratch_dir.c_str()) != 0) {
    std::perror("fuzz_cli: scratch directory");
    std::abort();
  }
  std::atexit(remove_scratch_dir);
  // Help texts on every run would drown the fuzzer's own output (on stderr, as are the reports).
  const int null_fd = open("/dev/null", O_WRONLY);
  if (null_fd >= 0) dup2(null_fd, STDOUT_FILENO);
  return 0;
}

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::vector<std::string> args{"fxmimo"};
  std::string current;
  for (std::size_t i = 0; i < size; ++i) {
    if (data[i] == 0) {
      args.push_back(current);
      current.clear();
    } else {
      current.push_back(static_cast<char>(data[i]));
    }
  }
  if (!current.empty()) args.push_back(current);
  if (args.size() > 64) return 0;
  if (std::any_of(args.begin(), args.end(), [](const std::string& a) { return a.find('/') != std::string::npos; })) {
    return 0;
  }

  constexpr std::array<std::string_view, 6> heavy{"demo", "run", "range", "sweep", "tune", "vectors"};
  const bool any_heavy = std::any_of(args.begin() + 1, args.end(), [&](const std::string& a) {
    return std::find(heavy.begin(), heavy.end(), a) != heavy.end();
  });
  // Only a flag before "--" asks for help; after it every argument is a positional value.
  const auto options_end = std::find(args.begin() + 1, args.end(), "--");
  const bool asks_help =
      std::any_of(args.begin() + 1, options_end, [](const std::string& a) { return a == "--help" || a == "-h"; });
  if (any_heavy && !asks_help) return 0;

  std::vector<char*> argv;
  for (std::string& a : args) argv.push_back(a.data());
  argv.push_back(nullptr);
  const int code = fxmimo::app::run_program(static_cast<int>(args.size()), argv.data());
  std::fflush(stdout);
  if (code == 3) __builtin_trap();
  return 0;
}
