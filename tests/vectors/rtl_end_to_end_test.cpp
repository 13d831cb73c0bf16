// The RTL hand-off end to end. The fixedpoint core (accumulator + requantize: the model under
// test) computes tx_acc and dac for random full-range weights and symbols; the words go out as
// a vector set; the example Verilog-2005 block (examples/rtl/) runs under Icarus Verilog and
// Verilator, reading the stimulus with $readmemh (IEEE 1364-2005 §17.2.9) and dumping its
// outputs with $fwrite "%h" (§17.1.1.3); `fxmimo check` must find the dumps bit-exact. The RTL
// relies on 1364-2005 signed arithmetic (§5.5.1 part-selects unsigned, §5.4.1 product widths).
// Negative test: FORCE_TRUNCATE builds the RTL with floor rounding; `fxmimo check` must exit 1
// and name the node and the first failing coordinates, which the model (run with floor
// rounding) predicts exactly; the broken RTL must in turn match that floor model bit for bit.
// The adder-tree block precode_tree.v goes through the same flow against the core's pairwise
// accumulation; where saturation order matters, its dumps must also fail against the sequential
// model, at the first word where the two orders differ.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <random>
#include <string_view>

#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/vectors/hex_file.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "test_support.hpp"

#ifndef FXMIMO_EXE
#error "FXMIMO_EXE (path of the fxmimo program) must be defined by tests/CMakeLists.txt"
#endif

namespace fxmimo::vectors {
namespace {

namespace fs = std::filesystem;
using fp::overflow_mode;
using fp::rounding_mode;
using testing::quote;
using testing::rtl_code;
using testing::run_command;
using testing::scratch_dir;
using testing::simulator;

// The configuration, stimulus and model of the example block, shared with the VHDL flow.
using rtl_case = testing::mac_case;
using flow_data = testing::mac_flow_data;
using testing::acc_saturates;
using testing::nominal;
using testing::odd_widths_wrap;
using testing::other_modes_a;
using testing::other_modes_b;

/// An example block under examples/rtl: its testbench (top module tb, same plusargs, parameters
/// and dump files for both) and the accumulation order the model must use for it.
struct rtl_block {
  const char* testbench;
  const char* design;
  fp::accumulation how;
};
const rtl_block mac_block{"tb_precode_mac.v", "precode_mac.v", {fp::accumulation_order::sequential, 1}};
const rtl_block tree_block{"tb_precode_tree.v", "precode_tree.v", {fp::accumulation_order::pairwise, 1}};

/// Compiles and runs the testbench of `block` with this case's parameters; dumps land in `dump_dir`.
void simulate(simulator sim, const rtl_block& block, const rtl_case& c, bool force_truncate, const fs::path& work,
              const fs::path& vec_dir, const fs::path& dump_dir) {
  testing::run_testbench(sim, testing::mac_parameters(c), force_truncate, work, vec_dir, dump_dir, block.testbench,
                         block.design);
}

testing::command_result fxmimo_check(const fs::path& vec_dir, const char* node, const fs::path& dump_dir,
                                     const fs::path& log) {
  const std::string cmd =
      fmt::format("{} check {} --node {} --dump {} --dump {}", quote(FXMIMO_EXE), quote(vec_dir), node,
                  quote(dump_dir / (std::string(node) + "_re.hex")), quote(dump_dir / (std::string(node) + "_im.hex")));
  return run_command(cmd, log);
}

/// `orders_must_differ` (pairwise blocks only): the stimulus must make the sequential words differ.
void run_flow(simulator sim, const rtl_case& c, bool with_negative_test, const rtl_block& block = mac_block,
              bool orders_must_differ = false) {
  const fs::path work = scratch_dir();
  std::cout << "[ rtl      ] " << block.design << " case " << c.name << ", seed " << c.seed << ", work dir " << work
            << "\n";
  flow_data d = testing::mac_stimulus(c);
  testing::mac_model(c, d, c.acc_rnd, c.dac_rnd, block.how);
  if (c.acc_must_overflow) {
    ASSERT_GT(d.acc_counters.overflowed, 0U) << c << ": the stimulus never drove tx_acc past its range";
  }
  manifest_info info;
  info.scenario_name = std::string("rtl-") + c.name;
  info.scenario_text = fmt::format("# precoding accumulator example, case {}\n", c.name);
  info.seed = c.seed;
  info.trials = {0};
  const fs::path vec = work / "vec";
  write_vector_set(vec, info, {d.weights, d.symbols, d.tx_acc, d.dac});

  // 1. The RTL as designed: bit-exact on both nodes.
  simulate(sim, block, c, false, work, vec, work / "dump");
  for (const char* node : {"tx_acc", "dac"}) {
    const auto r = fxmimo_check(vec, node, work / "dump", work / "check.log");
    EXPECT_EQ(r.exit_code, 0) << c << " node " << node << "\n" << r.output;
    EXPECT_NE(r.output.find("PASS"), std::string::npos) << r.output;
  }

  // 1b. A pairwise block against the sequential model of the same stimulus. For K <= 3 and for
  // wrap (modular sums) the two orders are the same function and the check passes; otherwise,
  // where an intermediate sum saturates differently, it fails at the first differing word.
  if (block.how.order != fp::accumulation_order::sequential) {
    flow_data seq = d;
    testing::mac_model(c, seq, c.acc_rnd, c.dac_rnd, {fp::accumulation_order::sequential, 1});
    const auto first_seq = testing::first_word_difference(d.tx_acc, seq.tx_acc);
    if (c.num_user <= 3 || c.acc_ovf == overflow_mode::wrap) {
      EXPECT_FALSE(first_seq.has_value()) << c << ": the orders differ where they cannot";
    }
    if (orders_must_differ) {
      ASSERT_TRUE(first_seq.has_value()) << c << ": pairwise and sequential agree on every word";
    }
    const fs::path vec_seq = work / "vec_seq";
    write_vector_set(vec_seq, info, {seq.weights, seq.symbols, seq.tx_acc, seq.dac});
    const auto r = fxmimo_check(vec_seq, "tx_acc", work / "dump", work / "check_seq.log");
    if (first_seq) {
      EXPECT_EQ(r.exit_code, 1) << r.output;
      const std::string where = testing::first_mismatch_line(d.tx_acc, *first_seq);
      EXPECT_NE(r.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << r.output;
    } else {
      EXPECT_EQ(r.exit_code, 0) << r.output;
    }
  }
  if (!with_negative_test) return;

  // 2. FORCE_TRUNCATE: the floor model predicts the first failing word.
  flow_data floor_model = d;
  testing::mac_model(c, floor_model, rounding_mode::floor, rounding_mode::floor, block.how);
  const auto first = testing::first_word_difference(d.tx_acc, floor_model.tx_acc);
  ASSERT_TRUE(first.has_value()) << c << ": floor and " << fp::to_string(c.acc_rnd)
                                 << " agree on every word; no negative test";
  simulate(sim, block, c, true, work, vec, work / "dump_trunc");
  const auto bad = fxmimo_check(vec, "tx_acc", work / "dump_trunc", work / "check_trunc.log");
  EXPECT_EQ(bad.exit_code, 1) << bad.output;
  const std::string where = testing::first_mismatch_line(d.tx_acc, *first);
  EXPECT_NE(bad.output.find("tx_acc/out: MISMATCH"), std::string::npos) << bad.output;
  EXPECT_NE(bad.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << bad.output;

  // 3. The broken RTL is exactly the floor model: the same files pass against a set made by it.
  const fs::path vec_floor = work / "vec_floor";
  write_vector_set(vec_floor, info, {floor_model.weights, floor_model.symbols, floor_model.tx_acc, floor_model.dac});
  for (const char* node : {"tx_acc", "dac"}) {
    const auto r = fxmimo_check(vec_floor, node, work / "dump_trunc", work / "check_floor.log");
    EXPECT_EQ(r.exit_code, 0) << c << " node " << node << " against the floor model\n" << r.output;
  }
  // 4. fxmimo diff sees the rounding change on tx_acc, and only there the stimulus is equal.
  const auto diff =
      run_command(fmt::format("{} diff {} {}", quote(FXMIMO_EXE), quote(vec), quote(vec_floor)), work / "diff.log");
  EXPECT_EQ(diff.exit_code, 1) << diff.output;
  const auto allowed = run_command(
      fmt::format("{} diff {} {} --allow tx_acc --allow dac", quote(FXMIMO_EXE), quote(vec), quote(vec_floor)),
      work / "diff_allowed.log");
  EXPECT_EQ(allowed.exit_code, 0) << allowed.output;
}

class RtlIcarus : public ::testing::TestWithParam<rtl_case> {};

TEST_P(RtlIcarus, BitExactAndNegative) {
  if (!testing::have_program("iverilog") || !testing::have_program("vvp")) {
    GTEST_SKIP() << "Icarus Verilog (Debian package iverilog) not installed: RTL flow not run";
  }
  run_flow(simulator::icarus, GetParam(), true);
}

INSTANTIATE_TEST_SUITE_P(Cases, RtlIcarus,
                         ::testing::Values(nominal, acc_saturates, odd_widths_wrap, other_modes_a, other_modes_b),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

class RtlVerilator : public ::testing::TestWithParam<std::pair<rtl_case, bool>> {};

TEST_P(RtlVerilator, BitExact) {
  if (!testing::have_program("verilator")) {
    GTEST_SKIP() << "Verilator (Debian package verilator) not installed: RTL flow not run";
  }
  run_flow(simulator::verilator, GetParam().first, GetParam().second);
}

// A Verilator build takes seconds: two cases, the negative test on the saturating one.
INSTANTIATE_TEST_SUITE_P(Cases, RtlVerilator,
                         ::testing::Values(std::pair{nominal, false}, std::pair{acc_saturates, true}),
                         [](const auto& param_info) { return std::string(param_info.param.first.name); });

// The adder tree, precode_tree.v: all K terms of a sum in one clock, pairwise order.
const rtl_case tree_nominal{"tree_nominal",
                            4,
                            8,
                            8,
                            {true, 16, 14},
                            {true, 12, 10},
                            {true, 20, 14},
                            {true, 12, 9},
                            rounding_mode::half_even,
                            overflow_mode::saturate,
                            rounding_mode::half_up,
                            overflow_mode::saturate,
                            false,
                            8121};
// tx_acc spans +-4 while one product reaches +-8: level-0 terms and adders saturate, and the
// tree's words differ from the sequential ones. K = 7 is prime (odd list on level 0).
const rtl_case tree_saturates{"tree_saturates",
                              4,
                              7,
                              8,
                              {true, 16, 14},
                              {true, 12, 10},
                              {true, 11, 8},
                              {true, 10, 7},
                              rounding_mode::half_up,
                              overflow_mode::saturate,
                              rounding_mode::half_even,
                              overflow_mode::wrap,
                              true,
                              8122};
// K = 13 (odd lists on levels 0 and 1), odd widths, terms and adders wrap: order-free.
const rtl_case tree_odd_wrap{"tree_odd_wrap",
                             3,
                             13,
                             7,
                             {true, 13, 12},
                             {true, 7, 5},
                             {true, 13, 11},
                             {true, 14, 12},
                             rounding_mode::half_away,
                             overflow_mode::wrap,
                             rounding_mode::toward_zero,
                             overflow_mode::saturate_symmetric,
                             true,
                             8123};
// K = 1: no adder, tx_acc = Q_acc(p_0); an overflowing term becomes 0.
const rtl_case tree_single{"tree_single",
                           8,
                           1,
                           8,
                           {true, 10, 9},
                           {true, 10, 8},
                           {true, 8, 7},
                           {true, 8, 4},
                           rounding_mode::half_down,
                           overflow_mode::saturate_zero,
                           rounding_mode::ceil,
                           overflow_mode::saturate,
                           true,
                           8124};
const rtl_case tree_other_modes{"tree_other_modes",
                                2,
                                5,
                                16,
                                {true, 10, 9},
                                {true, 10, 8},
                                {true, 9, 7},
                                {true, 9, 5},
                                rounding_mode::half_toward_zero,
                                overflow_mode::saturate_symmetric,
                                rounding_mode::toward_zero,
                                overflow_mode::saturate_zero,
                                true,
                                8125};

struct tree_case {
  rtl_case c;
  bool orders_must_differ;
};

std::ostream& operator<<(std::ostream& os, const tree_case& t) { return os << t.c; }

class RtlTreeIcarus : public ::testing::TestWithParam<tree_case> {};

TEST_P(RtlTreeIcarus, BitExactAndNegative) {
  if (!testing::have_program("iverilog") || !testing::have_program("vvp")) {
    GTEST_SKIP() << "Icarus Verilog (Debian package iverilog) not installed: RTL flow not run";
  }
  run_flow(simulator::icarus, GetParam().c, true, tree_block, GetParam().orders_must_differ);
}

INSTANTIATE_TEST_SUITE_P(Cases, RtlTreeIcarus,
                         ::testing::Values(tree_case{tree_nominal, false}, tree_case{tree_saturates, true},
                                           tree_case{tree_odd_wrap, false}, tree_case{tree_single, false},
                                           tree_case{tree_other_modes, false}),
                         [](const auto& param_info) { return std::string(param_info.param.c.name); });

TEST(RtlTreeVerilator, BitExactAndNegative) {
  if (!testing::have_program("verilator")) {
    GTEST_SKIP() << "Verilator (Debian package verilator) not installed: RTL flow not run";
  }
  run_flow(simulator::verilator, tree_saturates, true, tree_block, true);
}

/// Our hex files for widths 1..64 read by a real $readmemh (IEEE 1364-2005 §17.2.9): Icarus
/// reads them and prints each word as a signed decimal; it must print the words we wrote.
TEST(RtlReadmemh, EveryWidthClassReadsBack) {
  if (!testing::have_program("iverilog")) GTEST_SKIP() << "Icarus Verilog (Debian package iverilog) not installed";
  const fs::path work = scratch_dir();
  const std::uint64_t seed = 8201;
  std::mt19937_64 rng(seed);
  std::string verilog = "module readmem_check;\n  integer i;\n";
  std::string body;
  std::map<int, std::vector<std::int64_t>> all;
  for (int w : {1, 2, 3, 4, 5, 7, 8, 13, 16, 17, 24, 31, 32, 33, 48, 63, 64}) {
    const fp::format fmt{true, w, 0};
    std::vector<std::int64_t> words;
    words.push_back(w == 64 ? std::numeric_limits<std::int64_t>::min() : -(std::int64_t{1} << (w - 1)));
    words.push_back(-1);
    words.push_back(0);
    words.push_back(w == 64 ? std::numeric_limits<std::int64_t>::max() : (std::int64_t{1} << (w - 1)) - 1);
    for (int k = 0; k < 6; ++k) words.push_back(static_cast<std::int64_t>(rng() << (64 - w)) >> (64 - w));
    const fs::path file = work / fmt::format("w{}.hex", w);
    testing::spit(file, format_word_lines(words, fmt, word_radix::hex));
    verilog += fmt::format("  reg [{}:0] m{} [0:{}];\n", w - 1, w, words.size() - 1);
    body += fmt::format(
        "    $readmemh(\"{}\", m{});\n    for (i = 0; i < {}; i = i + 1) $display(\"{} %0d\", $signed(m{}[i]));\n",
        file.string(), w, words.size(), w, w);
    all[w] = words;
  }
  verilog += "  initial begin\n" + body + "    $finish;\n  end\nendmodule\n";
  testing::spit(work / "readmem_check.v", verilog);
  const auto built =
      run_command("iverilog -g2005 -Wall -o " + quote(work / "r.vvp") + " " + quote(work / "readmem_check.v"),
                  work / "compile.log");
  ASSERT_EQ(built.exit_code, 0) << built.output;
  const auto ran = run_command("vvp -n " + quote(work / "r.vvp"), work / "sim.log");
  ASSERT_EQ(ran.exit_code, 0) << ran.output;
  std::map<int, std::vector<std::int64_t>> seen;
  std::istringstream lines(ran.output);
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream fields(line);
    int w = 0;
    long long v = 0;
    if (fields >> w >> v) seen[w].push_back(v);
  }
  for (const auto& [w, words] : all) EXPECT_EQ(seen[w], words) << "W=" << w << " seed " << seed << "\n" << ran.output;
}

}  // namespace
}  // namespace fxmimo::vectors
