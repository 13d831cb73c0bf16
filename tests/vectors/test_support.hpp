#pragma once
// Helpers shared by the vectors tests: scratch directories, running outside programs, files.

#include <fmt/core.h>
#include <gtest/gtest.h>
#include <sys/wait.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <optional>
#include <ostream>
#include <random>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/complex.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/modes.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"
#include "fxmimo/vectors/node_words.hpp"

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

// The sequential precoding MAC (examples/rtl/precode_mac.v and its VHDL-2008 twin under
// examples/rtl/vhdl/): one configuration, its random stimulus and the words the fixedpoint core
// (the model under test) computes for it.

/// Sizes, formats and modes of the block, and the seed of its stimulus.
struct mac_case {
  const char* name;
  std::size_t num_ant, num_user, num_sym;
  fixedpoint::format weights, symbols, acc, dac;
  fixedpoint::rounding_mode acc_rnd;
  fixedpoint::overflow_mode acc_ovf;
  fixedpoint::rounding_mode dac_rnd;
  fixedpoint::overflow_mode dac_ovf;
  bool acc_must_overflow;  ///< the case exists to drive the accumulator past its range
  std::uint64_t seed;
};

inline std::ostream& operator<<(std::ostream& os, const mac_case& c) {
  return os << c.name << " (seed " << c.seed << ")";
}

/// Stimulus and the model's expected words.
struct mac_flow_data {
  node_words weights, symbols, tx_acc, dac;
  fixedpoint::counters acc_counters, dac_counters;
};

/// A complex record with no words yet.
inline node_words mac_record(const char* node, const char* direction, const char* port, fixedpoint::target spec,
                             std::vector<std::string> names, std::vector<std::size_t> sizes) {
  node_words r;
  r.node = node;
  r.direction = direction;
  r.port = port;
  r.spec = spec;
  r.dim_names = std::move(names);
  r.dim_sizes = std::move(sizes);
  r.is_complex = true;
  return r;
}

/// Random full-range words: values uniform over 1.05 times the format's range, brought in by the
/// core (half_even, saturate), so the extreme words, the most negative one included, occur.
inline std::vector<std::int64_t> mac_draw_words(std::size_t n, const fixedpoint::format& fmt, std::mt19937_64& rng) {
  const fixedpoint::requantizer<std::int64_t> q(
      {fmt, fixedpoint::rounding_mode::half_even, fixedpoint::overflow_mode::saturate});
  std::uniform_real_distribution<double> dist(1.05 * fmt.min_value(), 1.05 * fmt.max_value());
  fixedpoint::counters counts;
  std::vector<std::int64_t> words(n);
  for (std::int64_t& w : words) w = fixedpoint::from_double(dist(rng), q, counts);
  return words;
}

/// Weights [antenna, user] and symbols [user, symbol] drawn from the case's seed.
inline mac_flow_data mac_stimulus(const mac_case& c) {
  std::mt19937_64 rng(c.seed);
  mac_flow_data d;
  const fixedpoint::target in_spec_w{c.weights, fixedpoint::rounding_mode::half_even,
                                     fixedpoint::overflow_mode::saturate};
  const fixedpoint::target in_spec_s{c.symbols, fixedpoint::rounding_mode::half_even,
                                     fixedpoint::overflow_mode::saturate};
  d.weights = mac_record("tx_acc", "in", "weights", in_spec_w, {"antenna", "user"}, {c.num_ant, c.num_user});
  d.symbols = mac_record("tx_acc", "in", "symbols", in_spec_s, {"user", "symbol"}, {c.num_user, c.num_sym});
  d.weights.re = mac_draw_words(c.num_ant * c.num_user, c.weights, rng);
  d.weights.im = mac_draw_words(c.num_ant * c.num_user, c.weights, rng);
  d.symbols.re = mac_draw_words(c.num_user * c.num_sym, c.symbols, rng);
  d.symbols.im = mac_draw_words(c.num_user * c.num_sym, c.symbols, rng);
  return d;
}

/// The model under test: the fixedpoint core's complex accumulator (in the order `how`) and
/// requantize, with the given rounding modes (the case's, or floor for the truncated RTL).
inline void mac_model(const mac_case& c, mac_flow_data& d, fixedpoint::rounding_mode acc_rnd,
                      fixedpoint::rounding_mode dac_rnd, fixedpoint::accumulation how = {}) {
  const fixedpoint::target acc_spec{c.acc, acc_rnd, c.acc_ovf};
  const fixedpoint::target dac_spec{c.dac, dac_rnd, c.dac_ovf};
  d.tx_acc = mac_record("tx_acc", "out", "", acc_spec, {"antenna", "symbol"}, {c.num_ant, c.num_sym});
  d.dac = mac_record("dac", "out", "", dac_spec, {"antenna", "symbol"}, {c.num_ant, c.num_sym});
  d.acc_counters = {};
  d.dac_counters = {};
  const fixedpoint::requantizer<std::int64_t> q_acc(acc_spec);
  const fixedpoint::requantizer<std::int64_t> q_dac(dac_spec);
  const int product_frac = c.weights.frac_bits + c.symbols.frac_bits;
  for (std::size_t i_ant = 0; i_ant < c.num_ant; ++i_ant) {
    for (std::size_t i_sym = 0; i_sym < c.num_sym; ++i_sym) {
      fixedpoint::complex_accumulator<std::int64_t> acc(q_acc, how);
      for (std::size_t i_user = 0; i_user < c.num_user; ++i_user) {
        const std::size_t iw = i_ant * c.num_user + i_user;
        const std::size_t is = i_user * c.num_sym + i_sym;
        const fixedpoint::cword<std::int64_t> w{d.weights.re[iw], d.weights.im[iw]};
        const fixedpoint::cword<std::int64_t> s{d.symbols.re[is], d.symbols.im[is]};
        acc.add(fixedpoint::cmul<std::int64_t>(w, s), product_frac, d.acc_counters);
      }
      const fixedpoint::cword<std::int64_t> x = acc.result(d.acc_counters);
      d.tx_acc.re.push_back(x.re);
      d.tx_acc.im.push_back(x.im);
      const fixedpoint::cword<std::int64_t> y = fixedpoint::requantize(x, c.acc.frac_bits, q_dac, d.dac_counters);
      d.dac.re.push_back(y.re);
      d.dac.im.push_back(y.im);
    }
  }
}

/// First (flat index, part) where two complex records differ, or nullopt.
inline std::optional<std::pair<std::size_t, std::string>> first_word_difference(const node_words& a,
                                                                                const node_words& b) {
  for (std::size_t i = 0; i < a.re.size(); ++i) {
    if (a.re[i] != b.re[i]) return std::pair{i, std::string("re")};
    if (a.im[i] != b.im[i]) return std::pair{i, std::string("im")};
  }
  return std::nullopt;
}

/// The line `fxmimo check` prints for the first failing word of an [antenna, symbol] record.
inline std::string first_mismatch_line(const node_words& r, const std::pair<std::size_t, std::string>& first) {
  const auto coords = r.coordinates(first.first);
  return fmt::format("first mismatch: flat index {} (antenna={}, symbol={}), part {}", first.first, coords[0],
                     coords[1], first.second);
}

// The configurations of the example block, shared by the Verilog flow (rtl_end_to_end_test.cpp)
// and the VHDL one (rtl_vhdl_test.cpp): same seeds, same stimulus, so their dumps can be compared
// byte for byte.
// Between them they use every rounding code but floor (which FORCE_TRUNCATE brings) and every
// overflow code, in the accumulator and the DAC stage.
inline const mac_case nominal{"nominal",
                              4,
                              4,
                              8,
                              {true, 16, 14},
                              {true, 12, 10},
                              {true, 20, 14},
                              {true, 12, 9},
                              fixedpoint::rounding_mode::half_even,
                              fixedpoint::overflow_mode::saturate,
                              fixedpoint::rounding_mode::half_up,
                              fixedpoint::overflow_mode::saturate,
                              false,
                              8101};
// tx_acc spans +-8 while one product reaches +-8: the running sum saturates often.
inline const mac_case acc_saturates{"acc_saturates",
                                    4,
                                    6,
                                    8,
                                    {true, 16, 14},
                                    {true, 12, 10},
                                    {true, 12, 8},
                                    {true, 10, 7},
                                    fixedpoint::rounding_mode::half_up,
                                    fixedpoint::overflow_mode::saturate,
                                    fixedpoint::rounding_mode::half_even,
                                    fixedpoint::overflow_mode::wrap,
                                    true,
                                    8102};
// Widths not a multiple of 4 (13-bit weights and 7-bit symbols: HREAD reads a padded top
// digit), K prime, the accumulator wraps; the DAC has one more fraction bit than tx_acc (bits
// appended, no rounding) and saturates symmetrically (-2^13 becomes -max).
inline const mac_case odd_widths_wrap{"odd_widths_wrap",
                                      3,
                                      5,
                                      7,
                                      {true, 13, 12},
                                      {true, 7, 5},
                                      {true, 13, 11},
                                      {true, 14, 12},
                                      fixedpoint::rounding_mode::half_away,
                                      fixedpoint::overflow_mode::wrap,
                                      fixedpoint::rounding_mode::toward_zero,
                                      fixedpoint::overflow_mode::saturate_symmetric,
                                      true,
                                      8103};
// The remaining rounding and overflow modes.
inline const mac_case other_modes_a{"other_modes_a",
                                    2,
                                    3,
                                    16,
                                    {true, 10, 9},
                                    {true, 10, 8},
                                    {true, 9, 7},
                                    {true, 8, 4},
                                    fixedpoint::rounding_mode::half_down,
                                    fixedpoint::overflow_mode::saturate_zero,
                                    fixedpoint::rounding_mode::ceil,
                                    fixedpoint::overflow_mode::saturate,
                                    true,
                                    8104};
inline const mac_case other_modes_b{"other_modes_b",
                                    2,
                                    3,
                                    16,
                                    {true, 10, 9},
                                    {true, 10, 8},
                                    {true, 13, 9},
                                    {true, 9, 5},
                                    fixedpoint::rounding_mode::half_toward_zero,
                                    fixedpoint::overflow_mode::saturate_symmetric,
                                    fixedpoint::rounding_mode::toward_zero,
                                    fixedpoint::overflow_mode::saturate_zero,
                                    false,
                                    8105};

/// The block's parameters (Verilog) or generics (VHDL), same names in both.
inline std::vector<std::pair<std::string, long long>> mac_parameters(const mac_case& c) {
  auto ll = [](auto v) { return static_cast<long long>(v); };
  return {{"M", ll(c.num_ant)},
          {"K", ll(c.num_user)},
          {"N", ll(c.num_sym)},
          {"WW", c.weights.word_bits},
          {"WF", c.weights.frac_bits},
          {"SW", c.symbols.word_bits},
          {"SF", c.symbols.frac_bits},
          {"AW", c.acc.word_bits},
          {"AF", c.acc.frac_bits},
          {"DW", c.dac.word_bits},
          {"DF", c.dac.frac_bits},
          {"ACC_RND", rtl_code(c.acc_rnd)},
          {"ACC_OVF", rtl_code(c.acc_ovf)},
          {"DAC_RND", rtl_code(c.dac_rnd)},
          {"DAC_OVF", rtl_code(c.dac_ovf)}};
}

#ifdef FXMIMO_EXE
/// `fxmimo check VEC --node NODE --dump DUMP/NODE_re.hex --dump DUMP/NODE_im.hex`.
inline command_result fxmimo_check_node(const std::filesystem::path& vec_dir, const char* node,
                                        const std::filesystem::path& dump_dir, const std::filesystem::path& log) {
  const std::string cmd =
      fmt::format("{} check {} --node {} --dump {} --dump {}", quote(FXMIMO_EXE), quote(vec_dir), node,
                  quote(dump_dir / (std::string(node) + "_re.hex")), quote(dump_dir / (std::string(node) + "_im.hex")));
  return run_command(cmd, log);
}
#endif

/// Analyses the VHDL-2008 sources `sources` (paths relative to examples/rtl/vhdl/) into a fresh
/// GHDL library in `build`; fails the test unless GHDL says nothing.
inline void analyse_vhdl(const std::filesystem::path& build, const std::vector<std::string>& sources) {
  std::filesystem::create_directories(build);
  const std::filesystem::path vhdl = std::filesystem::path(FXMIMO_SOURCE_DIR) / "examples" / "rtl" / "vhdl";
  std::string analyse = "ghdl -a --std=08 --workdir=" + quote(build);
  for (const std::string& src : sources) analyse += " " + quote(vhdl / src);
  const auto analysed = run_command(analyse, build / "analyse.log");
  ASSERT_EQ(analysed.exit_code, 0) << analyse << "\n" << analysed.output;
  EXPECT_EQ(analysed.output, "") << "GHDL analysis must be silent:\n" << analyse;
}

/// Elaborates and runs the top unit `top` of the GHDL library in `build` (from analyse_vhdl)
/// with the given generics, from inside `build` (where a GHDL with a compiling back end puts
/// its executable; the Debian mcode build elaborates in memory).
inline command_result run_vhdl(const std::filesystem::path& build, const std::string& top,
                               const std::vector<std::pair<std::string, std::string>>& generics) {
  std::string run = "cd " + quote(build) + " && ghdl --elab-run --std=08 --workdir=" + quote(build) + " " + top;
  for (const auto& [name, value] : generics) run += " " + quote(std::filesystem::path("-g" + name + "=" + value));
  return run_command(run, build / (top + ".log"));
}

/// The VHDL-2008 twin of run_testbench: analyses examples/rtl/vhdl/ (fxm_requant_pkg.vhd,
/// precode_mac.vhd, tb_precode_mac.vhd) in `build`, runs tb_precode_mac with `parameters` as
/// generics on the vector set `vec_dir`, dumps into `dump_dir`. FORCE_TRUNCATE => true builds
/// the block with floor rounding. Fails the test on any GHDL output: analysis and a good run
/// print nothing; the testbench reports its own errors as "tb: ..." assertion failures, GHDL's
/// IEEE libraries as "(assertion warning)" lines.
inline void run_ghdl_testbench(const std::vector<std::pair<std::string, long long>>& parameters, bool force_truncate,
                               const std::filesystem::path& build, const std::filesystem::path& vec_dir,
                               const std::filesystem::path& dump_dir) {
  std::filesystem::remove_all(build);
  std::filesystem::create_directories(dump_dir);
  ASSERT_NO_FATAL_FAILURE(analyse_vhdl(build, {"fxm_requant_pkg.vhd", "precode_mac.vhd", "tb_precode_mac.vhd"}));
  std::vector<std::pair<std::string, std::string>> generics;
  for (const auto& [name, value] : parameters) generics.emplace_back(name, std::to_string(value));
  generics.emplace_back("FORCE_TRUNCATE", force_truncate ? "true" : "false");
  generics.emplace_back("VEC_DIR", std::filesystem::absolute(vec_dir).string());
  generics.emplace_back("OUT_DIR", std::filesystem::absolute(dump_dir).string());
  const auto ran = run_vhdl(build, "tb_precode_mac", generics);
  ASSERT_EQ(ran.exit_code, 0) << ran.output;
  EXPECT_EQ(ran.output, "") << "the VHDL testbench must run silently";
}

}  // namespace fxmimo::vectors::testing
