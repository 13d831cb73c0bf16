// libfxmimo_dpi.so through its C ABI (fxmimo_dpi.h), the way a SystemVerilog bench calls it:
// requantisation against values worked out by hand; a trial's node words against the vector set
// the fxmimo program writes for the same scenario and trial; and the scoreboard bench
// (examples/dpi/tb_scoreboard.sv) under Verilator (IEEE 1800-2017 clause 35, DPI-C), which must
// pass on the example block and catch a planted truncation at the first word the truncating
// model predicts.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <string>

#include "../vectors/test_support.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "fxmimo_dpi.h"
#include "sanitizers.hpp"

namespace {

namespace fs = std::filesystem;
using fxmimo::vectors::testing::have_program;
using fxmimo::vectors::testing::quote;
using fxmimo::vectors::testing::run_command;
using fxmimo::vectors::testing::scratch_dir;
using fxmimo::vectors::testing::slurp;
using fxmimo::vectors::testing::spit;

const fs::path source = FXMIMO_SOURCE_DIR;
const fs::path kiosk = source / "examples" / "dpi" / "kiosk-8.toml";

TEST(DpiRequantize, HandWorkedWords) {
  // 0x15 in Q3.4 is 21/16 = 1.3125. Into Q3.1 (steps of 1/2): 2.625 half-steps.
  std::int64_t y = 0;
  EXPECT_EQ(fxm_requantize("Q3.4", 0x15, "Q3.1", "half_even", "saturate", &y), 0);
  EXPECT_EQ(y, 3);  // 2.625 -> 3 (nearest)
  EXPECT_EQ(fxm_requantize("Q3.4", 0x15, "Q3.1", "floor", "saturate", &y), 0);
  EXPECT_EQ(y, 2);
  // 0x14 = 1.25 = 2.5 half-steps: a tie.
  EXPECT_EQ(fxm_requantize("Q3.4", 0x14, "Q3.1", "half_even", "saturate", &y), 0);
  EXPECT_EQ(y, 2);  // tie to even
  EXPECT_EQ(fxm_requantize("Q3.4", 0x14, "Q3.1", "half_away", "saturate", &y), 0);
  EXPECT_EQ(y, 3);
  // Into Q0.1 (W = 2: -1, -0.5, 0, 0.5): 1.3125 overflows.
  EXPECT_EQ(fxm_requantize("Q3.4", 0x15, "Q0.1", "half_even", "saturate", &y), 1);
  EXPECT_EQ(y, 1);  // +0.5, the largest word
  EXPECT_EQ(fxm_requantize("Q3.4", 0x15, "Q0.1", "half_even", "wrap", &y), 1);
  EXPECT_EQ(y, -1);  // 3 = 0b11 in two bits
  EXPECT_EQ(fxm_requantize("Q3.4", -0x15, "UQ1.1", "half_even", "saturate", &y), 1);
  EXPECT_EQ(y, 0);  // an unsigned format's smallest word
  const std::int64_t in[] = {0x15, 0x14, -0x40};
  std::int64_t out[3] = {};
  EXPECT_EQ(fxm_requantize_array("Q3.4", in, "Q1.1", "half_even", "saturate", out, 3), 1);
  EXPECT_EQ(out[0], 3);
  EXPECT_EQ(out[1], 2);
  EXPECT_EQ(out[2], -4);  // -4.0 is Q1.1's smallest word, -2: saturated
}

TEST(DpiRequantize, BadArgumentsFailWithAMessage) {
  std::int64_t y = 0;
  EXPECT_EQ(fxm_requantize("Q3.x", 1, "Q3.1", "half_even", "saturate", &y), -1);
  EXPECT_NE(std::string(fxm_last_error()).find("Q3.x"), std::string::npos) << fxm_last_error();
  EXPECT_EQ(fxm_requantize("Q3.4", 0x100, "Q3.1", "half_even", "saturate", &y), -1);
  EXPECT_NE(std::string(fxm_last_error()).find("outside Q3.4"), std::string::npos) << fxm_last_error();
  EXPECT_EQ(fxm_requantize("Q3.4", 1, "Q3.1", "nearest", "saturate", &y), -1);
  EXPECT_NE(std::string(fxm_last_error()).find("unknown rounding 'nearest'"), std::string::npos);
  EXPECT_EQ(fxm_requantize("Q3.4", 1, "Q3.1", "half_even", "saturate", &y), 0);
  EXPECT_STREQ(fxm_last_error(), "") << "a call that succeeds clears the message";
  EXPECT_EQ(fxm_model_open((source / "no-such.toml").c_str(), 0), nullptr);
  EXPECT_NE(std::string(fxm_last_error()).find("cannot open"), std::string::npos);
  EXPECT_EQ(fxm_model_open(kiosk.c_str(), 4), nullptr);
  EXPECT_NE(std::string(fxm_last_error()).find("trial 4 is outside"), std::string::npos) << fxm_last_error();
}

TEST(DpiModel, NodeWordsEqualTheVectorSetOfTheProgram) {
  const fs::path dir = scratch_dir();
  const auto r = run_command(std::string(FXMIMO_EXE) + " vectors -c " + quote(kiosk) + " -o " + quote(dir / "set") +
                                 " --nodes tx_acc,dac,norm --trials 2",
                             dir / "vectors.log");
  ASSERT_EQ(r.exit_code, 0) << r.output;
  const fxmimo::vectors::vector_set set = fxmimo::vectors::read_vector_set(dir / "set");
  void* m = fxm_model_open(kiosk.c_str(), 2);
  ASSERT_NE(m, nullptr) << fxm_last_error();
  std::size_t compared = 0;
  for (const fxmimo::vectors::node_words& rec : set.records) {
    if (rec.direction != "out") continue;
    int rows = 0, cols = 0, cplx = 0, w = 0, f = 0, s = 0;
    ASSERT_EQ(fxm_node_shape(m, rec.node.c_str(), &rows, &cols, &cplx), 0) << fxm_last_error();
    ASSERT_EQ(fxm_node_format(m, rec.node.c_str(), &w, &f, &s), 0);
    EXPECT_EQ(w, rec.spec.fmt.word_bits) << rec.node;
    EXPECT_EQ(f, rec.spec.fmt.frac_bits) << rec.node;
    EXPECT_EQ(s == 1, rec.spec.fmt.is_signed) << rec.node;
    EXPECT_EQ(cplx == 1, rec.is_complex) << rec.node;
    // The record is [trial, rows(, cols)] with one trial.
    ASSERT_EQ(rec.num_elements(), static_cast<std::size_t>(rows) * static_cast<std::size_t>(cols)) << rec.node;
    for (int i = 0; i < rows; ++i) {
      for (int j = 0; j < cols; ++j) {
        const std::size_t flat =
            static_cast<std::size_t>(i) * static_cast<std::size_t>(cols) + static_cast<std::size_t>(j);
        std::int64_t word = 0;
        ASSERT_EQ(fxm_node_word(m, rec.node.c_str(), 0, i, j, &word), 0);
        EXPECT_EQ(word, rec.re[flat]) << rec.node << " " << i << "," << j;
        if (rec.is_complex) {
          ASSERT_EQ(fxm_node_word(m, rec.node.c_str(), 1, i, j, &word), 0);
          EXPECT_EQ(word, rec.im[flat]) << rec.node << " " << i << "," << j;
        }
        ++compared;
      }
    }
    // Checking the model's own words counts them and finds nothing.
    std::int64_t word = 0;
    ASSERT_EQ(fxm_node_word(m, rec.node.c_str(), 0, 0, 0, &word), 0);
    EXPECT_EQ(fxm_check_word(m, rec.node.c_str(), 0, 0, 0, word), 1);
    EXPECT_EQ(fxm_check_word(m, rec.node.c_str(), 0, 0, 0, word ^ 1), 0);
    EXPECT_EQ(fxm_mismatches(m, rec.node.c_str()), 1);
    EXPECT_EQ(fxm_checked(m, rec.node.c_str()), 2);
  }
  EXPECT_GT(compared, 0u);
  EXPECT_EQ(fxm_node_word(m, "gram", 0, 0, 0, nullptr), -1) << "MF has no Gram matrix";
  EXPECT_NE(std::string(fxm_last_error()).find("not in this scenario's datapath"), std::string::npos);
  fxm_model_close(m);
}

/// Builds the scoreboard bench with Verilator, linked against the library under test.
fs::path build_scoreboard(const fs::path& dir, bool force_truncate) {
  fs::create_directories(dir);
  const fs::path lib_dir = fs::path(FXMIMO_DPI_LIBRARY).parent_path();
  std::string cmd = "verilator --binary -Wall -Wno-DECLFILENAME --top-module tb --Mdir " + quote(dir / "obj") +
                    " -o Vtb -MAKEFLAGS 'OPT_FAST=-O0 OPT_SLOW=-O0 OPT_GLOBAL=-O0'" + " -LDFLAGS " +
                    quote("-L" + lib_dir.string()) + " -LDFLAGS -lfxmimo_dpi -LDFLAGS " +
                    quote("-Wl,-rpath," + lib_dir.string());
  if (force_truncate) cmd += " -DFORCE_TRUNCATE";
  for (const fs::path& f :
       {source / "dpi" / "sv" / "fxmimo_dpi_pkg.sv", source / "examples" / "dpi" / "tb_scoreboard.sv",
        source / "examples" / "rtl" / "precode_mac.v", source / "examples" / "rtl" / "fxm_requant.v"}) {
    cmd += " " + quote(f);
  }
  const auto built = run_command(cmd, dir / "verilator.log");
  EXPECT_EQ(built.exit_code, 0) << cmd << "\n" << built.output;
  return dir / "obj" / "Vtb";
}

/// examples/dpi/kiosk-8.toml with tx_acc and dac rounding by floor: what FORCE_TRUNCATE builds.
fs::path floor_scenario(const fs::path& dir) {
  std::string text = slurp(kiosk);
  for (const std::string node : {"tx_acc", "dac"}) {
    const std::size_t table = text.find("[nodes." + node + "]");
    const std::size_t key = text.find("rounding = ", table);
    text.replace(key, text.find('\n', key) - key, "rounding = \"floor\"");
  }
  spit(dir / "floor.toml", text);
  return dir / "floor.toml";
}

constexpr bool sanitized = fxmimo::test::built_with_asan();

TEST(DpiScoreboard, PassesOnTheExampleBlockAndCatchesAPlantedTruncation) {
  if (!have_program("verilator")) GTEST_SKIP() << "Verilator (Debian package verilator) is not installed";
  if (sanitized) GTEST_SKIP() << "the Verilator bench cannot load a library built with the sanitizers";
  const fs::path dir = scratch_dir();
  const fs::path good = build_scoreboard(dir / "good", false);
  const std::string run_args = " +scenario=" + quote(kiosk) + " +trial=1";
  const auto pass = run_command(quote(good) + run_args, dir / "good.log");
  EXPECT_EQ(pass.exit_code, 0) << pass.output;
  EXPECT_NE(pass.output.find("scoreboard: PASS, tx_acc 192 and dac 192 words"), std::string::npos) << pass.output;

  const fs::path bad = build_scoreboard(dir / "bad", true);
  const auto fail = run_command(quote(bad) + run_args, dir / "bad.log");
  EXPECT_NE(fail.exit_code, 0) << fail.output;
  EXPECT_NE(fail.output.find("scoreboard: FAIL"), std::string::npos) << fail.output;
  // 8 antennas x 12 symbols, real and imaginary parts. The first difference the truncating model predicts, in the
  // bench's order: antenna, symbol, then re before im.
  void* right = fxm_model_open(kiosk.c_str(), 1);
  void* wrong = fxm_model_open(floor_scenario(dir).c_str(), 1);
  ASSERT_NE(right, nullptr) << fxm_last_error();
  ASSERT_NE(wrong, nullptr) << fxm_last_error();
  for (const char* node : {"tx_acc", "dac"}) {
    int rows = 0, cols = 0, cplx = 0, w = 0, f = 0, s = 0;
    ASSERT_EQ(fxm_node_shape(right, node, &rows, &cols, &cplx), 0);
    ASSERT_EQ(fxm_node_format(right, node, &w, &f, &s), 0);
    std::string predicted;
    for (int i = 0; i < rows && predicted.empty(); ++i) {
      for (int j = 0; j < cols && predicted.empty(); ++j) {
        for (int part = 0; part < 2 && predicted.empty(); ++part) {
          std::int64_t a = 0, b = 0;
          ASSERT_EQ(fxm_node_word(right, node, part, i, j, &a), 0);
          ASSERT_EQ(fxm_node_word(wrong, node, part, i, j, &b), 0);
          if (a == b) continue;
          const int digits = (w + 3) / 4;
          const std::uint64_t mask = (std::uint64_t{1} << w) - 1;
          predicted = fmt::format("{}[antenna={}, symbol={}].{}: expected 0x{:0{}x} ({}), got 0x{:0{}x}", node, i, j,
                                  part == 0 ? "re" : "im", static_cast<std::uint64_t>(a) & mask, digits, a,
                                  static_cast<std::uint64_t>(b) & mask, digits);
        }
      }
    }
    ASSERT_FALSE(predicted.empty()) << node << ": floor and the scenario's rounding never differ";
    EXPECT_NE(fail.output.find("scoreboard: first: " + predicted), std::string::npos)
        << "predicted " << predicted << "\n"
        << fail.output;
  }
  fxm_model_close(right);
  fxm_model_close(wrong);
}

}  // namespace
