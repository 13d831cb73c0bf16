// The RTL hand-off through VHDL-2008. The fixedpoint core (accumulator + requantize: the model
// under test) computes tx_acc and dac for random full-range weights and symbols; the words go
// out as a vector set; the example VHDL-2008 block (examples/rtl/vhdl/precode_mac.vhd, the twin
// of precode_mac.v) runs under GHDL, its testbench reading the stimulus with READLINE and the
// std_logic_1164 HREAD of IEEE 1076-2008 and writing its dumps in the set's hex form; `fxmimo
// check` must find them bit-exact. Negative test: FORCE_TRUNCATE => true builds the block with
// floor rounding; `fxmimo check` must exit 1 and name the node and the first failing
// coordinates, which the model (run with floor rounding) predicts exactly, and the broken RTL
// must in turn match that floor model bit for bit.
// The checks stand on outside ground: GHDL's simulation of the VHDL (the block's words against
// the core's), the GHDL-shipped IEEE libraries for what HREAD does (the 2008 std_logic_1164 and
// numeric_std package bodies, ieee2008/ in GHDL's sources), and, where Icarus Verilog is
// installed, the Verilog twin's dump files byte for byte.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <iostream>
#include <limits>
#include <map>
#include <random>
#include <sstream>
#include <tuple>

#include "fxmimo/fixedpoint/requantize.hpp"
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
using testing::acc_saturates;
using testing::mac_case;
using testing::mac_flow_data;
using testing::nominal;
using testing::odd_widths_wrap;
using testing::other_modes_a;
using testing::other_modes_b;
using testing::quote;
using testing::rtl_code;
using testing::run_command;
using testing::scratch_dir;

constexpr const char* no_ghdl = "GHDL (Debian package ghdl) not installed: VHDL flow not run";

void run_vhdl_flow(const mac_case& c) {
  const fs::path work = scratch_dir();
  std::cout << "[ vhdl     ] precode_mac.vhd case " << c.name << ", seed " << c.seed << ", work dir " << work << "\n";
  mac_flow_data d = testing::mac_stimulus(c);
  testing::mac_model(c, d, c.acc_rnd, c.dac_rnd);
  if (c.acc_must_overflow) {
    ASSERT_GT(d.acc_counters.overflowed, 0U) << c << ": the stimulus never drove tx_acc past its range";
  }
  manifest_info info;
  info.scenario_name = std::string("rtl-vhdl-") + c.name;
  info.scenario_text = fmt::format("# precoding accumulator example (VHDL), case {}\n", c.name);
  info.seed = c.seed;
  info.trials = {0};
  const fs::path vec = work / "vec";
  write_vector_set(vec, info, {d.weights, d.symbols, d.tx_acc, d.dac});

  // 1. The RTL as designed: bit-exact on both nodes.
  ASSERT_NO_FATAL_FAILURE(
      testing::run_ghdl_testbench(testing::mac_parameters(c), false, work / "ghdl", vec, work / "dump"));
  for (const char* node : {"tx_acc", "dac"}) {
    const auto r = testing::fxmimo_check_node(vec, node, work / "dump", work / "check.log");
    EXPECT_EQ(r.exit_code, 0) << c << " node " << node << "\n" << r.output;
    EXPECT_NE(r.output.find("PASS"), std::string::npos) << r.output;
  }

  // 1b. The Verilog twin under Icarus on the same set writes the same bytes.
  if (testing::have_program("iverilog") && testing::have_program("vvp")) {
    ASSERT_NO_FATAL_FAILURE(testing::run_testbench(testing::simulator::icarus, testing::mac_parameters(c), false,
                                                   work / "icarus", vec, work / "dump_verilog"));
    for (const char* file : {"tx_acc_re.hex", "tx_acc_im.hex", "dac_re.hex", "dac_im.hex"}) {
      EXPECT_EQ(testing::slurp(work / "dump" / file), testing::slurp(work / "dump_verilog" / file))
          << c << ": " << file << " differs between the VHDL and the Verilog testbench";
    }
  }

  // 2. FORCE_TRUNCATE: the floor model predicts the first failing word.
  mac_flow_data floor_model = d;
  testing::mac_model(c, floor_model, rounding_mode::floor, rounding_mode::floor);
  const auto first = testing::first_word_difference(d.tx_acc, floor_model.tx_acc);
  ASSERT_TRUE(first.has_value()) << c << ": floor and " << fp::to_string(c.acc_rnd)
                                 << " agree on every word; no negative test";
  ASSERT_NO_FATAL_FAILURE(
      testing::run_ghdl_testbench(testing::mac_parameters(c), true, work / "ghdl_trunc", vec, work / "dump_trunc"));
  const auto bad = testing::fxmimo_check_node(vec, "tx_acc", work / "dump_trunc", work / "check_trunc.log");
  EXPECT_EQ(bad.exit_code, 1) << bad.output;
  const std::string where = testing::first_mismatch_line(d.tx_acc, *first);
  EXPECT_NE(bad.output.find("tx_acc/out: MISMATCH"), std::string::npos) << bad.output;
  EXPECT_NE(bad.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << bad.output;

  // 3. The broken RTL is exactly the floor model: the same files pass against a set made by it.
  const fs::path vec_floor = work / "vec_floor";
  write_vector_set(vec_floor, info, {floor_model.weights, floor_model.symbols, floor_model.tx_acc, floor_model.dac});
  for (const char* node : {"tx_acc", "dac"}) {
    const auto r = testing::fxmimo_check_node(vec_floor, node, work / "dump_trunc", work / "check_floor.log");
    EXPECT_EQ(r.exit_code, 0) << c << " node " << node << " against the floor model\n" << r.output;
  }
}

class RtlGhdl : public ::testing::TestWithParam<mac_case> {};

TEST_P(RtlGhdl, BitExactAndNegative) {
  if (!testing::have_program("ghdl")) GTEST_SKIP() << no_ghdl;
  run_vhdl_flow(GetParam());
}

INSTANTIATE_TEST_SUITE_P(Cases, RtlGhdl,
                         ::testing::Values(nominal, acc_saturates, odd_widths_wrap, other_modes_a, other_modes_b),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

rounding_mode rounding_of_code(int code) {
  for (rounding_mode m : fp::all_rounding_modes) {
    if (rtl_code(m) == code) return m;
  }
  ADD_FAILURE() << "no rounding mode has RTL code " << code;
  return rounding_mode::floor;
}

overflow_mode overflow_of_code(int code) {
  for (overflow_mode m : fp::all_overflow_modes) {
    if (rtl_code(m) == code) return m;
  }
  ADD_FAILURE() << "no overflow mode has RTL code " << code;
  return overflow_mode::wrap;
}

/// The requantise function of the VHDL block alone (examples/rtl/vhdl/tb_fxm_requant.vhd prints
/// it for every input word of each format pair, every rounding and every overflow code) against
/// the core's requantizer, word for word.
TEST(RtlGhdlRequant, EveryWordEveryCodeMatchesTheCore) {
  if (!testing::have_program("ghdl")) GTEST_SKIP() << no_ghdl;
  const fs::path work = scratch_dir();
  ASSERT_NO_FATAL_FAILURE(testing::analyse_vhdl(work / "ghdl", {"fxm_requant_pkg.vhd", "tb_fxm_requant.vhd"}));
  const auto ran = testing::run_vhdl(work / "ghdl", "tb_fxm_requant", {});
  ASSERT_EQ(ran.exit_code, 0) << ran.output;

  // The (IW, X_FRAC, Y_WIDTH, Y_FRAC) table of tb_fxm_requant.vhd: each pair must come with all
  // 2^IW words for all 8 x 4 codes, and nothing else may be printed.
  using pair_key = std::tuple<int, int, int, int>;
  const std::vector<pair_key> pairs{{6, 1, 3, 0}, {6, 3, 4, 1}, {6, 4, 5, 2}, {6, 5, 2, 0}, {5, 4, 2, 1}, {7, 6, 3, 0},
                                    {6, 2, 4, 2}, {6, 2, 8, 2}, {6, 0, 7, 2}, {6, 0, 9, 2}, {4, 0, 2, -1}};
  std::map<pair_key, std::size_t> lines_per_pair;
  std::size_t mismatches = 0;
  std::istringstream lines(ran.output);
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream fields(line);
    int iw = 0;
    int x_frac = 0;
    int y_width = 0;
    int y_frac = 0;
    int rnd = 0;
    int ovf = 0;
    long long x = 0;
    long long y = 0;
    std::string extra;
    if (!(fields >> iw >> x_frac >> y_width >> y_frac >> rnd >> ovf >> x >> y) || (fields >> extra)) {
      ADD_FAILURE() << "unexpected GHDL output line: " << line;
      continue;
    }
    ++lines_per_pair[{iw, x_frac, y_width, y_frac}];
    const fp::requantizer<std::int64_t> q(
        {fp::format{true, y_width, y_frac}, rounding_of_code(rnd), overflow_of_code(ovf)});
    fp::counters counts;
    const std::int64_t want = q(static_cast<std::int64_t>(x), x_frac, counts);
    if (want != y && ++mismatches <= 10) {
      ADD_FAILURE() << "x = " << x << " (" << iw << " bits, " << x_frac << " fraction bits) to (" << y_width << ", "
                    << y_frac << ") " << fp::to_string(rounding_of_code(rnd)) << " "
                    << fp::to_string(overflow_of_code(ovf)) << ": VHDL " << y << ", core " << want;
    }
  }
  EXPECT_EQ(mismatches, 0U);
  EXPECT_EQ(lines_per_pair.size(), pairs.size());
  for (const pair_key& p : pairs) {
    const std::size_t want = std::size_t{32} << std::get<0>(p);
    EXPECT_EQ(lines_per_pair[p], want) << "pair (" << std::get<0>(p) << ", " << std::get<1>(p) << ", " << std::get<2>(p)
                                       << ", " << std::get<3>(p) << ")";
  }
}

/// `n` binary digits of the two's-complement pattern of a `w`-bit word (zeros above bit w-1).
std::string bit_string(std::int64_t word, int w, int n) {
  const auto pattern = static_cast<std::uint64_t>(word);
  std::string s;
  for (int b = n - 1; b >= 0; --b) s += (b < w && ((pattern >> b) & 1U) != 0) ? '1' : '0';
  return s;
}

/// Our hex files for widths 1..64 read by a real HREAD (IEEE 1076-2008; the GHDL-shipped
/// std_logic_1164 and numeric_std bodies). Each line is read three ways and GHDL prints what it
/// got: into a STD_LOGIC_VECTOR of 4 ceil(W/4) bits (what tb_precode_mac.vhd does), into one of
/// exactly W bits (std_logic_1164's HREAD requires the surplus top bits to be zero, and they
/// are), and into a SIGNED of W bits, which numeric_std's HREAD accepts only when the surplus
/// bits repeat the sign bit: never for a negative word of a width that is not a multiple of 4
/// (our files pad with zeros, as $readmemh wants). The last is the pitfall the testbench avoids.
TEST(RtlGhdlHread, EveryWidthClassReadsBack) {
  if (!testing::have_program("ghdl")) GTEST_SKIP() << no_ghdl;
  const fs::path work = scratch_dir();
  const std::uint64_t seed = 8301;
  std::mt19937_64 rng(seed);
  std::string calls;
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
    calls += fmt::format("    read_file(\"{}\", {});\n", file.string(), w);
    all[w] = words;
  }
  const std::string vhdl = R"(library ieee;
use ieee.std_logic_1164.all;
use ieee.numeric_std.all;
use std.textio.all;

entity hread_check is
end entity hread_check;

architecture sim of hread_check is
begin
  run : process is
    procedure read_file(name : string; w : positive) is
      file f : text;
      variable status : file_open_status;
      variable l, l_exact, l_signed, o : line;
      variable padded : std_logic_vector(4*((w+3)/4)-1 downto 0);
      variable exact : std_logic_vector(w-1 downto 0);
      variable as_signed : signed(w-1 downto 0);
      variable good_padded, good_exact, good_signed : boolean;
    begin
      file_open(status, f, name, read_mode);
      assert status = open_ok report "hread_check: cannot open " & name severity failure;
      while not endfile(f) loop
        readline(f, l);
        l_exact := new string'(l.all);
        l_signed := new string'(l.all);
        hread(l, padded, good_padded);
        hread(l_exact, exact, good_exact);
        hread(l_signed, as_signed, good_signed);
        write(o, integer'image(w) & " " & to_string(padded) & " " & boolean'image(good_padded) & " "
                 & to_string(exact) & " " & boolean'image(good_exact) & " " & boolean'image(good_signed));
        writeline(output, o);
        deallocate(l);
        deallocate(l_exact);
        deallocate(l_signed);
      end loop;
      file_close(f);
    end procedure read_file;
  begin
)" + calls + R"(    wait;
  end process run;
end architecture sim;
)";
  const fs::path build = work / "ghdl";
  fs::create_directories(build);
  testing::spit(build / "hread_check.vhd", vhdl);
  const std::string analyse = "ghdl -a --std=08 --workdir=" + quote(build) + " " + quote(build / "hread_check.vhd");
  const auto analysed = run_command(analyse, build / "analyse.log");
  ASSERT_EQ(analysed.exit_code, 0) << analysed.output;
  EXPECT_EQ(analysed.output, "") << "GHDL analysis must be silent";
  const auto ran = testing::run_vhdl(build, "hread_check", {});
  ASSERT_EQ(ran.exit_code, 0) << ran.output;

  std::map<int, std::size_t> seen;
  std::istringstream lines(ran.output);
  std::string line;
  while (std::getline(lines, line)) {
    std::istringstream fields(line);
    int w = 0;
    std::string padded;
    std::string good_padded;
    std::string exact;
    std::string good_exact;
    std::string good_signed;
    if (!(fields >> w >> padded >> good_padded >> exact >> good_exact >> good_signed) || all.count(w) == 0 ||
        seen[w] >= all[w].size()) {
      ADD_FAILURE() << "unexpected GHDL output line: " << line;
      continue;
    }
    const std::int64_t word = all[w][seen[w]++];
    const int digits_bits = 4 * ((w + 3) / 4);
    const std::string context = fmt::format("W={} word {} seed {}: {}", w, word, seed, line);
    EXPECT_EQ(padded, bit_string(word, w, digits_bits)) << context;
    EXPECT_EQ(good_padded, "true") << context;
    EXPECT_EQ(exact, bit_string(word, w, w)) << context;
    EXPECT_EQ(good_exact, "true") << context;
    EXPECT_EQ(good_signed, (w % 4 == 0 || word >= 0) ? "true" : "false") << context;
  }
  for (const auto& [w, words] : all) EXPECT_EQ(seen[w], words.size()) << "W=" << w << ": lines read";
}

}  // namespace
}  // namespace fxmimo::vectors
