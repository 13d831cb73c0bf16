// The README's output blocks are real output: every fenced block whose lines start with
// "$ fxmimo ..." is rerun here (in a scratch directory holding the examples, the inputs under
// tests/cli/readme_inputs/ and the vector sets of tests/fixtures/ as vec/ and vec_npy/) and what the program prints,
// stdout and stderr as a terminal shows them, must equal the lines under each command, character for character. Outputs
// are deterministic (every trial's randomness depends only on the scenario seed and the trial).
#include <gtest/gtest.h>

#include <filesystem>
#include <sstream>
#include <vector>

#include "cli_support.hpp"
#include "sanitizers.hpp"

namespace fs = std::filesystem;

namespace {

struct readme_example {
  int line = 0;         ///< README line of the command
  std::string command;  ///< after "$ "
  std::string output;   ///< the lines below it, up to the next command or the block's end
};

std::ostream& operator<<(std::ostream& os, const readme_example& e) { return os << "README.md:" << e.line; }

std::vector<readme_example> readme_examples() {
  std::istringstream in(fxmimo::test::read_text(fs::path(FXMIMO_SOURCE_DIR) / "README.md"));
  std::vector<readme_example> out;
  std::string text;
  int line_no = 0;
  bool in_block = false;
  bool in_example = false;
  while (std::getline(in, text)) {
    ++line_no;
    if (text.rfind("```", 0) == 0) {
      in_block = !in_block;
      in_example = false;
      continue;
    }
    if (!in_block) continue;
    if (text.rfind("$ fxmimo ", 0) == 0) {
      out.push_back({line_no, text.substr(2), ""});
      in_example = true;
    } else if (in_example) {
      out.back().output += text + "\n";
    }
  }
  return out;
}

class readme : public testing::TestWithParam<readme_example> {};

TEST_P(readme, command_prints_what_the_readme_shows) {
  const readme_example& e = GetParam();
  // The demo chains run, range, sweep, tune and report, each rerun here on its own; under the
  // sanitizers it alone took a third of this suite's time, so the release build checks it.
  if (fxmimo::test::built_with_asan() && e.command.rfind("fxmimo demo", 0) == 0)
    GTEST_SKIP() << "the demo block is checked by the release build";
  const fs::path dir = fxmimo::test::scratch_dir("readme_" + std::to_string(e.line));
  // Copies, never links: a command that writes (vectors -o vec) must not touch the sources.
  const fs::path source(FXMIMO_SOURCE_DIR);
  fs::copy(source / "examples", dir / "examples", fs::copy_options::recursive);
  fs::copy(source / "tests/cli/readme_inputs", dir, fs::copy_options::recursive);
  // The vector sets the check and diff examples read: the committed fixtures (tests/fixtures/).
  fs::copy(source / "tests/fixtures/vec-hex", dir / "vec", fs::copy_options::recursive);
  fs::copy(source / "tests/fixtures/vec-npy", dir / "vec_npy", fs::copy_options::recursive);
  // The command as typed, with the program's path for "fxmimo"; stderr merged as a terminal shows it.
  const std::string shell = "cd '" + dir.string() + "' && '" + std::string(FXMIMO_EXE) + "'" +
                            e.command.substr(std::string("fxmimo").size()) + " 2>&1";
  std::string printed;
  FILE* pipe = popen(shell.c_str(), "r");
  ASSERT_NE(pipe, nullptr);
  char buffer[4096];
  while (std::fgets(buffer, sizeof buffer, pipe) != nullptr) printed += buffer;
  pclose(pipe);
  EXPECT_EQ(printed, e.output) << "README.md:" << e.line << ": $ " << e.command
                               << "\n(update the README block with the real output above, or fix the program)";
}

INSTANTIATE_TEST_SUITE_P(blocks, readme, testing::ValuesIn(readme_examples()),
                         [](const testing::TestParamInfo<readme_example>& i) {
                           return "line_" + std::to_string(i.param.line);
                         });

TEST(readme_examples, are_found) {
  // The README shows at least the demo, run, range, sweep, merge, tune, quant, report and vectors.
  const std::vector<readme_example> all = readme_examples();
  for (const char* command :
       {"demo", "run", "range", "sweep", "merge", "tune", "quant", "report", "vectors", "check", "diff"}) {
    bool found = false;
    for (const readme_example& e : all) found = found || e.command.rfind(std::string("fxmimo ") + command, 0) == 0;
    EXPECT_TRUE(found) << "no README block runs fxmimo " << command;
  }
}

}  // namespace
