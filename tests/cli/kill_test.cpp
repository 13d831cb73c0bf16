// Crash safety of outputs: each writing command is killed (SIGKILL, no chance to clean up) at
// random points, many times, while it alternates between two command lines with different
// complete results A and B. After every kill the output must be absent, or byte for byte one of
// the complete results: never a partial file (common practice for files that regressions consume
// unattended: write a temporary, then rename(2), atomic on POSIX file systems).
#include <gtest/gtest.h>

#include <csignal>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <random>
#include <thread>

#include "cli_support.hpp"
#include "process_support.hpp"

namespace fs = std::filesystem;
using namespace fxmimo::test;

namespace {

const fs::path source = FXMIMO_SOURCE_DIR;

struct kill_case {
  const char* name;
  std::vector<std::string> args_a, args_b;
  const char* output;  ///< a file, or a vector-set directory
  bool is_set = false;
  const char* pause_ms = "2";  ///< FXMIMO_TEST_SLOW_WRITES: the pause after each eighth of a write
};

void PrintTo(const kill_case& c, std::ostream* os) { *os << c.name; }

/// The output's content: a file's bytes, or a set's files (the manifest and what it lists, as
/// the manifest lists them; temporaries of a killed run are not part of a set).
std::map<std::string, std::string> content_of(const fs::path& out, bool is_set) {
  std::map<std::string, std::string> files;
  if (!is_set) {
    if (fs::exists(out)) files[""] = read_text(out);
    return files;
  }
  const fs::path manifest = out / "manifest.json";
  if (!fs::exists(manifest)) return files;
  files["manifest.json"] = read_text(manifest);
  const nlohmann::json m = nlohmann::json::parse(files["manifest.json"], nullptr, false);
  if (m.is_discarded()) return files;  // a partial manifest: will match neither result
  for (const auto& f : m["files"]) {
    const std::string name = f["file"];
    files[name] = fs::exists(out / name) ? read_text(out / name) : std::string("<missing>");
  }
  return files;
}

/// Whether a killed or running writer's temporary (a name with ".partial") is in `dir`.
bool partial_exists(const fs::path& dir) {
  std::error_code ec;  // files come and go while a writer runs
  for (auto it = fs::recursive_directory_iterator(dir, ec); !ec && it != fs::recursive_directory_iterator();
       it.increment(ec)) {
    if (it->path().filename().string().find(".partial") != std::string::npos) return true;
  }
  return false;
}

class KillAtRandom : public ::testing::TestWithParam<kill_case> {};

TEST_P(KillAtRandom, LeavesTheOutputAbsentOrComplete) {
  const kill_case c = GetParam();
  const fs::path dir = scratch_dir(std::string("kill_") + c.name);
  fs::copy(source / "examples" / "dpi" / "kiosk-8.toml", dir / "kiosk.toml");
  fs::copy(source / "examples" / "rooftop-64.toml", dir / "rooftop.toml");
  fs::copy(source / "tests" / "fixtures" / "run.json", dir / "run.json");
  fs::copy(source / "tests" / "fixtures" / "sweep.json", dir / "sweep.json");
  const fs::path err = dir.parent_path() / (std::string(c.name) + ".err");
  const fs::path out = dir / c.output;

  ::setenv("FXMIMO_TEST_SLOW_WRITES", c.pause_ms, 1);
  // The two complete results, and how long a complete run takes (slow writes included).
  int code = -1;
  const double seconds_a = timed_run(dir, c.args_a, err, &code);
  ASSERT_TRUE(code == 0 || code == 1) << read_text(err);
  const auto result_a = content_of(out, c.is_set);
  const double seconds_b = timed_run(dir, c.args_b, err, &code);
  ASSERT_TRUE(code == 0 || code == 1) << read_text(err);
  const auto result_b = content_of(out, c.is_set);
  ASSERT_FALSE(result_a.empty());
  ASSERT_NE(result_a, result_b) << "the two command lines must give different results";
  fs::remove_all(out);

  std::mt19937 rng(20261202);
  std::uniform_real_distribution<double> fraction(0.0, 1.0);
  // Each write goes out in pieces with pauses (io/output_bytes.hpp), so that many kills land
  // inside a write; a kill that leaves a temporary behind proves it did.
  int absent = 0, complete = 0, killed_running = 0, killed_writing = 0;
  constexpr int kills = 40;
  for (int i = 0; i < kills; ++i) {
    const bool use_a = i % 2 == 0;
    const double full = use_a ? seconds_a : seconds_b;
    const pid_t pid = start_fxmimo(dir, use_a ? c.args_a : c.args_b, err);
    // Half the kills anywhere in the run, a quarter near its end, where the outputs are written,
    // and a quarter the moment a temporary appears: timed kills alone can all miss the short
    // write on a loaded machine (CI once saw 0 of 40 land inside one), the watched ones cannot.
    if (i % 4 == 3) {
      const auto give_up = std::chrono::steady_clock::now() + std::chrono::duration<double>(3 * full);
      while (!partial_exists(dir) && std::chrono::steady_clock::now() < give_up)
        std::this_thread::sleep_for(std::chrono::microseconds(200));
    } else {
      const double at = i % 4 < 2 ? fraction(rng) : 0.85 + 0.2 * fraction(rng);
      std::this_thread::sleep_for(std::chrono::duration<double>(at * full));
    }
    ::kill(pid, SIGKILL);
    const int status = wait_for(pid);
    if (WIFSIGNALED(status) && WTERMSIG(status) == SIGKILL) ++killed_running;
    const auto now = content_of(out, c.is_set);
    bool temporary_left = false;
    for (const auto& e : fs::recursive_directory_iterator(dir)) {
      if (e.path().filename().string().find(".partial") != std::string::npos) {
        temporary_left = true;
        fs::remove(e.path());  // counted once; the next writer would overwrite it anyway
      }
    }
    killed_writing += temporary_left ? 1 : 0;
    if (now.empty()) {
      ++absent;
    } else {
      EXPECT_TRUE(now == result_a || now == result_b) << "kill " << i << ": partial output in " << out;
      ++complete;
    }
  }
  RecordProperty("absent", absent);
  RecordProperty("complete", complete);
  RecordProperty("killed_running", killed_running);
  RecordProperty("killed_writing", killed_writing);
  EXPECT_GE(killed_writing, 1) << "no kill landed inside a write: the test would prove little";
  EXPECT_GE(killed_running, kills / 4) << "most kills came after the end: the test would prove little";
  // Stale temporaries of killed runs are overwritten by the next run and never taken for output.
  timed_run(dir, c.args_b, err, &code);
  EXPECT_TRUE(code == 0 || code == 1) << read_text(err);
  EXPECT_EQ(content_of(out, c.is_set), result_b) << "a run after the kills completes normally";
}

INSTANTIATE_TEST_SUITE_P(
    Writers, KillAtRandom,
    ::testing::Values(
        kill_case{"vectors",
                  {"vectors", "-c", "rooftop.toml", "-o", "set", "--trials", "0-3"},
                  {"vectors", "-c", "rooftop.toml", "-o", "set", "--trials", "4-7"},
                  "set",
                  true,
                  "1"},
        kill_case{"tune",
                  {"tune", "-c", "kiosk.toml", "--trials", "1", "--range-trials", "40", "--verify-trials", "1",
                   "--max-evm", "2", "--cost", "bits", "-o", "t.toml"},
                  {"tune", "-c", "kiosk.toml", "--trials", "1", "--range-trials", "40", "--verify-trials", "1",
                   "--max-evm", "2", "--cost", "area", "-o", "t.toml"},
                  "t.toml",
                  false,
                  "10"},
        kill_case{"report", {"report", "run.json", "-o", "r.html"}, {"report", "sweep.json", "-o", "r.html"}, "r.html"},
        kill_case{"range_write_scenario",
                  {"range", "-c", "rooftop.toml", "--range-trials", "24", "--overflow-prob", "1e-3", "--write-scenario",
                   "p.toml"},
                  {"range", "-c", "rooftop.toml", "--range-trials", "24", "--overflow-prob", "1e-6", "--write-scenario",
                   "p.toml"},
                  "p.toml"}),
    [](const ::testing::TestParamInfo<kill_case>& param_info) { return std::string(param_info.param.name); });

}  // namespace
