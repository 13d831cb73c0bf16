// Unsigned formats in the example RTL (examples/rtl/), run under Icarus Verilog and Verilator.
// 1. fxm_requant.v with its signedness parameters IS and OS: tb_requant_sweep.v drives every
//    input word of a small signed and a small unsigned format through every rounding code
//    (0..7) and every overflow code (0..3) into unsigned formats (and, as the other corners,
//    unsigned into signed and signed into signed); every dumped word must equal the fixedpoint
//    core's requantizer, the model (expected words written by C++ into a hex file beside it).
// 2. power_mac.v, the power_acc node: |w|^2 = wr^2 + wi^2 of complex signed weights summed in
//    index order into an unsigned accumulator, per antenna or in total. The core (requantizer
//    and sequential accumulator, as the power stage computes it) gives the expected words for
//    random full-range weights with planted extremes and ties; the words go out as a vector set;
//    tb_power_mac.v reads it with $readmemh (IEEE 1364-2005 §17.2.9) and dumps with $fwrite "%h"
//    (§17.1.1.3); `fxmimo check` must find the dump bit-exact. The RTL relies on 1364-2005
//    expression rules (§5.5.1 part-selects and concatenations unsigned, §5.4.1 widths).
//    Negative test: FORCE_SIGNED_ACC builds the accumulator signed. Where a sum reaches
//    2^(AW-1) LSB under saturation, `fxmimo check` must exit 1 and name the first failing
//    coordinates, which the core run with the signed format predicts; the broken dump must in
//    turn match that signed model. Under wrap the two builds give the same bits (addition
//    modulo 2^AW does not see the signedness), and the test checks that as well.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <cstdint>
#include <iostream>
#include <optional>
#include <random>
#include <string>
#include <utility>
#include <vector>

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

using rtl_parameters = std::vector<std::pair<std::string, long long>>;

/// Compiles `sources` (file names under examples/rtl, top module tb) with `parameters` and the
/// macros `defines` in `build`, then runs the simulation with `plusargs`. Fails the test on any
/// compile error, on any iverilog -Wall output, on a $readmemh warning, or on a "tb:" line (the
/// testbenches print one when something is missing).
void run_rtl(simulator sim, const rtl_parameters& parameters, const std::vector<std::string>& defines,
             const std::vector<std::string>& sources, const fs::path& build, const std::string& plusargs) {
  fs::create_directories(build);
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
  for (const std::string& d : defines) compile += " -D" + d;
  const fs::path rtl = fs::path(FXMIMO_SOURCE_DIR) / "examples" / "rtl";
  for (const std::string& src : sources) compile += " " + quote(rtl / src);
  const auto built = run_command(compile, build / "compile.log");
  ASSERT_EQ(built.exit_code, 0) << compile << "\n" << built.output;
  if (sim == simulator::icarus) {
    EXPECT_EQ(built.output, "") << "iverilog -Wall must be silent:\n" << compile;
  }
  const auto ran = run_command(run + " " + plusargs, build / "sim.log");
  ASSERT_EQ(ran.exit_code, 0) << ran.output;
  EXPECT_EQ(ran.output.find("WARNING"), std::string::npos) << ran.output;
  EXPECT_EQ(ran.output.find("tb:"), std::string::npos) << ran.output;
}

bool have_icarus() { return testing::have_program("iverilog") && testing::have_program("vvp"); }
bool have_verilator() { return testing::have_program("verilator"); }

// ---------------------------------------------------------------------------------------------
// 1. fxm_requant.v, exhaustively on small formats.

struct sweep_case {
  const char* name;
  fp::format in, out;
  bool overflows;  ///< some input word must lie outside the output range (after rounding)
};

std::ostream& operator<<(std::ostream& os, const sweep_case& c) {
  return os << c.name << " (" << fp::describe(c.in) << " -> " << fp::describe(c.out) << ")";
}

// Every branch of the block: bits dropped (S > 0), kept (S = 0) and appended (S < 0); a rounded
// value wider than the output (overflow above the maximum possible) or not; a one-bit output.
const sweep_case sweep_drop_s{"drop_signed", {true, 6, 4}, {false, 4, 2}, true};
const sweep_case sweep_drop_u{"drop_unsigned", {false, 6, 4}, {false, 4, 2}, true};
const sweep_case sweep_keep_s{"keep_signed", {true, 6, 3}, {false, 6, 3}, true};  // only below 0
const sweep_case sweep_keep_u{"keep_unsigned", {false, 6, 3}, {false, 5, 3}, true};
const sweep_case sweep_append_s{"append_signed", {true, 6, 2}, {false, 8, 3}, true};  // only below 0
const sweep_case sweep_append_u{"append_unsigned", {false, 6, 1}, {false, 3, 2}, true};
const sweep_case sweep_one_bit{"one_bit_out", {true, 6, 5}, {false, 1, 0}, true};
const sweep_case sweep_wide_u{"drop_unsigned_wide", {false, 6, 5}, {false, 7, 2}, false};
const sweep_case sweep_u_to_s{"unsigned_to_signed", {false, 6, 4}, {true, 4, 2}, true};
const sweep_case sweep_u_to_s_wide{"unsigned_to_signed_append", {false, 6, 2}, {true, 8, 3}, false};
// The signed corner is the behaviour that existed before IS and OS: kept as a regression.
const sweep_case sweep_s_to_s{"signed_to_signed", {true, 6, 4}, {true, 4, 2}, true};
const sweep_case sweep_s_to_s_append{"signed_to_signed_append", {true, 5, 1}, {true, 9, 4}, false};

/// The input word of pattern p (IW bits): p itself when unsigned, two's complement when signed.
std::int64_t word_of_pattern(std::int64_t p, const fp::format& in) {
  const std::int64_t span = std::int64_t{1} << in.word_bits;
  return (in.is_signed && p >= span / 2) ? p - span : p;
}

/// The model's words in the testbench's order: code c = 4 RND + OVF (the RTL codes of
/// test_support.hpp, not the enum order), then pattern p = 0 .. 2^IW - 1.
std::vector<std::int64_t> sweep_model(const sweep_case& c, fp::counters& cnt) {
  const std::size_t num_patterns = std::size_t{1} << c.in.word_bits;
  std::vector<std::int64_t> words(32 * num_patterns, 0);
  std::vector<bool> filled(32, false);
  for (rounding_mode r : fp::all_rounding_modes) {
    for (overflow_mode o : fp::all_overflow_modes) {
      const int code = 4 * rtl_code(r) + rtl_code(o);
      EXPECT_TRUE(code >= 0 && code < 32 && !filled[static_cast<std::size_t>(code)]) << "code " << code;
      if (code < 0 || code >= 32) continue;
      filled[static_cast<std::size_t>(code)] = true;
      const fp::requantizer<std::int64_t> q({c.out, r, o});
      for (std::size_t p = 0; p < num_patterns; ++p) {
        const std::int64_t x = word_of_pattern(static_cast<std::int64_t>(p), c.in);
        words[static_cast<std::size_t>(code) * num_patterns + p] = q(x, c.in.frac_bits, cnt);
      }
    }
  }
  return words;
}

void run_sweep(simulator sim, const sweep_case& c) {
  const fs::path work = scratch_dir(c.name);
  std::cout << "[ rtl      ] fxm_requant.v sweep " << c << ", work dir " << work << "\n";
  fp::counters cnt;
  const std::vector<std::int64_t> expected = sweep_model(c, cnt);
  if (c.overflows) {
    ASSERT_GT(cnt.overflowed, 0U) << c << ": no input word overflows";
  } else {
    ASSERT_EQ(cnt.overflowed, 0U) << c;
  }
  testing::spit(work / "expected.hex", format_word_lines(expected, c.out, word_radix::hex));

  const rtl_parameters params{{"IW", c.in.word_bits},  {"IF", c.in.frac_bits},  {"IS", c.in.is_signed ? 1 : 0},
                              {"OW", c.out.word_bits}, {"OF", c.out.frac_bits}, {"OS", c.out.is_signed ? 1 : 0}};
  ASSERT_NO_FATAL_FAILURE(run_rtl(sim, params, {}, {"tb_requant_sweep.v", "fxm_requant.v"}, work / "build",
                                  "+out=" + quote(work / "dump.hex")));
  // The dump is read strictly (digit count, no x/z, no bits above OW-1, line count) by the
  // same reader `fxmimo check` uses.
  const std::vector<std::int64_t> got = read_word_file(work / "dump.hex", c.out, word_radix::hex, expected.size());
  ASSERT_EQ(got.size(), expected.size());
  const std::size_t num_patterns = std::size_t{1} << c.in.word_bits;
  std::size_t mismatches = 0;
  std::string first;
  for (std::size_t i = 0; i < expected.size(); ++i) {
    if (got[i] == expected[i]) continue;
    if (mismatches++ == 0) {
      const std::size_t code = i / num_patterns;
      const std::int64_t x = word_of_pattern(static_cast<std::int64_t>(i % num_patterns), c.in);
      first = fmt::format("line {}: RND {} OVF {}, input word {}: expected {}, got {}", i + 1, code / 4, code % 4, x,
                          expected[i], got[i]);
    }
  }
  EXPECT_EQ(mismatches, 0U) << c << ": " << mismatches << " words differ from the model; first at " << first;
  EXPECT_EQ(testing::slurp(work / "dump.hex"), testing::slurp(work / "expected.hex")) << c << ": files differ";
}

class RtlUnsignedSweepIcarus : public ::testing::TestWithParam<sweep_case> {};

TEST_P(RtlUnsignedSweepIcarus, EveryWordEveryMode) {
  if (!have_icarus()) GTEST_SKIP() << "Icarus Verilog (Debian package iverilog) not installed: RTL flow not run";
  run_sweep(simulator::icarus, GetParam());
}

INSTANTIATE_TEST_SUITE_P(Formats, RtlUnsignedSweepIcarus,
                         ::testing::Values(sweep_drop_s, sweep_drop_u, sweep_keep_s, sweep_keep_u, sweep_append_s,
                                           sweep_append_u, sweep_one_bit, sweep_wide_u, sweep_u_to_s, sweep_u_to_s_wide,
                                           sweep_s_to_s, sweep_s_to_s_append),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

// A Verilator build takes seconds: one signed and one unsigned input format.
class RtlUnsignedSweepVerilator : public ::testing::TestWithParam<sweep_case> {};

TEST_P(RtlUnsignedSweepVerilator, EveryWordEveryMode) {
  if (!have_verilator()) GTEST_SKIP() << "Verilator (Debian package verilator) not installed: RTL flow not run";
  run_sweep(simulator::verilator, GetParam());
}

INSTANTIATE_TEST_SUITE_P(Formats, RtlUnsignedSweepVerilator, ::testing::Values(sweep_drop_s, sweep_append_u),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

// ---------------------------------------------------------------------------------------------
// 2. power_mac.v: the power_acc node.

/// What the FORCE_SIGNED_ACC build must show for a case.
enum class signed_bug { not_run, caught, invisible };

struct power_case {
  const char* name;
  std::size_t num_ant, num_user;
  bool total;  ///< one sum over antennas then users (else one per antenna)
  fp::format weights, acc;
  rounding_mode rnd;
  overflow_mode ovf;
  bool acc_must_overflow;  ///< the planted extremes drive a sum past the accumulator's range
  signed_bug negative;
  std::uint64_t seed;
};

std::ostream& operator<<(std::ostream& os, const power_case& c) { return os << c.name << " (seed " << c.seed << ")"; }

// Range notes: a term reaches 2 (2^(WW-1-WF))^2 (both parts the most negative word); a sum is
// pushed past the range by the planted words (see plant_words) in the overflowing cases, and
// past 2^(AW-1) LSB where the signed build must be caught.
// Q1.14 weights (term <= 8), UQ6.14 (< 64), K = 4: no sum can overflow.
const power_case power_nominal{"nominal",
                               4,
                               4,
                               false,
                               {true, 16, 14},
                               {false, 20, 14},
                               rounding_mode::half_even,
                               overflow_mode::saturate,
                               false,
                               signed_bug::not_run,
                               8301};
// UQ4.8 ([0, 16)), six terms up to 8: antenna 0 holds three near-8 planted terms.
const power_case power_saturates{"saturates",
                                 4,
                                 6,
                                 false,
                                 {true, 16, 14},
                                 {false, 12, 8},
                                 rounding_mode::half_up,
                                 overflow_mode::saturate,
                                 true,
                                 signed_bug::caught,
                                 8302};
// Odd widths, K prime, the accumulator (UQ2.7, [0, 4)) wraps.
const power_case power_wraps{"wraps",
                             3,
                             5,
                             false,
                             {true, 13, 12},
                             {false, 9, 7},
                             rounding_mode::half_away,
                             overflow_mode::wrap,
                             true,
                             signed_bug::invisible,
                             8303};
// Two fraction bits dropped per term: ties (p mod 4 = 2) are frequent. UQ1.12 ([0, 2)) against
// terms up to 2, saturate_symmetric, which into an unsigned format is saturate.
const power_case power_sym_ties{"symmetric_ties",
                                6,
                                3,
                                false,
                                {true, 8, 7},
                                {false, 13, 12},
                                rounding_mode::half_even,
                                overflow_mode::saturate_symmetric,
                                true,
                                signed_bug::caught,
                                8304};
// UQ2.5 ([0, 4)): an overflowing sum becomes 0 and the sum goes on from there.
const power_case power_zero_ceil{"zero_ceil",
                                 4,
                                 5,
                                 false,
                                 {true, 10, 9},
                                 {false, 7, 5},
                                 rounding_mode::ceil,
                                 overflow_mode::saturate_zero,
                                 true,
                                 signed_bug::not_run,
                                 8305};
// One sum over all M K weights (total normalisation), UQ2.6 ([0, 4)).
const power_case power_total{"total",
                             4,
                             3,
                             true,
                             {true, 12, 11},
                             {false, 8, 6},
                             rounding_mode::toward_zero,
                             overflow_mode::saturate,
                             true,
                             signed_bug::caught,
                             8306};
// Q1.9 weights (terms up to 8) into UQ4.6 ([0, 16)), wrapping.
const power_case power_half_down_wrap{"half_down_wrap",
                                      2,
                                      7,
                                      false,
                                      {true, 11, 9},
                                      {false, 10, 6},
                                      rounding_mode::half_down,
                                      overflow_mode::wrap,
                                      true,
                                      signed_bug::invisible,
                                      8307};
// Total, Q1.8 weights into UQ4.6 ([0, 16)), overflowing sums become 0.
const power_case power_total_floor{"total_floor_zero",
                                   3,
                                   4,
                                   true,
                                   {true, 10, 8},
                                   {false, 10, 6},
                                   rounding_mode::floor,
                                   overflow_mode::saturate_zero,
                                   true,
                                   signed_bug::not_run,
                                   8308};
// More accumulator fraction bits than 2 WF: bits are appended, nothing is rounded. Q2.6
// weights (terms up to 32) into UQ5.13 ([0, 32)).
const power_case power_appended{"appended",
                                3,
                                4,
                                false,
                                {true, 9, 6},
                                {false, 18, 13},
                                rounding_mode::half_toward_zero,
                                overflow_mode::saturate,
                                true,
                                signed_bug::caught,
                                8309};
// A signed accumulator format (AS = 1), as the example scenarios use for power_acc: the
// unsigned |w|^2 goes into a signed format. Q1.12 weights (terms up to 8) into Q3.10 ([-8, 8)).
const power_case power_signed_acc{"signed_acc",
                                  4,
                                  4,
                                  false,
                                  {true, 14, 12},
                                  {true, 14, 10},
                                  rounding_mode::half_even,
                                  overflow_mode::saturate_symmetric,
                                  true,
                                  signed_bug::not_run,
                                  8310};

/// Fraction bits a term loses in Q_acc (<= 0: none).
int dropped_bits(const power_case& c) { return 2 * c.weights.frac_bits - c.acc.frac_bits; }

/// Random full-range stimulus: values uniform over 1.05 times the format's range, brought in by
/// the core (half_even, saturate), so the extreme words, the most negative one included, occur.
std::vector<std::int64_t> draw_words(std::size_t n, const fp::format& f, std::mt19937_64& rng) {
  const fp::requantizer<std::int64_t> q({f, rounding_mode::half_even, overflow_mode::saturate});
  std::uniform_real_distribution<double> dist(1.05 * f.min_value(), 1.05 * f.max_value());
  fp::counters cnt;
  std::vector<std::int64_t> words(n);
  for (std::int64_t& w : words) w = fp::from_double(dist(rng), q, cnt);
  return words;
}

/// A weight whose |w|^2 is an exact tie when s >= 1 fraction bits are dropped: p mod 2^s =
/// 2^(s-1). s odd: wr = o 2^((s-1)/2), wi = 0 (o odd: o^2 is odd). s even: wr = o1 2^(s/2-1),
/// wi = o2 2^(s/2-1) (o1^2 + o2^2 = 2 mod 8 for odd o1, o2, so p = 2^(s-1) times an odd number).
/// The odd factors are drawn so that the words fit the weight format.
std::pair<std::int64_t, std::int64_t> tie_weight(int s, const fp::format& w, std::mt19937_64& rng) {
  const int shift = s % 2 == 1 ? (s - 1) / 2 : s / 2 - 1;
  const std::int64_t max_word = (std::int64_t{1} << (w.word_bits - 1)) - 1;
  const std::int64_t max_odd = max_word >> shift;  // o 2^shift <= max_word
  auto odd = [&]() {
    if (max_odd < 1) return std::int64_t{0};
    std::uniform_int_distribution<std::int64_t> dist(0, (max_odd - 1) / 2);
    const std::int64_t o = 2 * dist(rng) + 1;
    return (rng() & 1U) != 0 ? -o : o;
  };
  const std::int64_t wr = odd() * (std::int64_t{1} << shift);
  const std::int64_t wi = s % 2 == 1 ? 0 : odd() * (std::int64_t{1} << shift);
  return {wr, wi};
}

/// Plants the extremes at flat indices 1..5 (both parts the most negative word, zero, both the
/// largest, mixed) and one tie per antenna (user m mod K of antenna m) over the random words.
void plant_words(const power_case& c, node_words& w, std::mt19937_64& rng) {
  const std::int64_t lo = -(std::int64_t{1} << (c.weights.word_bits - 1));
  const std::int64_t hi = -lo - 1;
  const std::vector<std::pair<std::int64_t, std::int64_t>> extremes{{lo, lo}, {0, 0}, {hi, hi}, {lo, hi}, {hi, 0}};
  const std::size_t n = w.re.size();
  for (std::size_t i = 0; i < extremes.size() && 1 + i < n; ++i) {
    w.re[1 + i] = extremes[i].first;
    w.im[1 + i] = extremes[i].second;
  }
  const int s = dropped_bits(c);
  if (s < 1) return;
  for (std::size_t m = 0; m < c.num_ant; ++m) {
    const auto [wr, wi] = tie_weight(s, c.weights, rng);
    w.re[m * c.num_user + m % c.num_user] = wr;
    w.im[m * c.num_user + m % c.num_user] = wi;
  }
}

node_words weights_record(const power_case& c, std::mt19937_64& rng) {
  node_words r;
  r.node = "power_acc";
  r.direction = "in";
  r.port = "precoder";  // the source node, as `fxmimo vectors` names power_acc's input
  r.spec = {c.weights, rounding_mode::half_even, overflow_mode::saturate};
  r.dim_names = {"antenna", "user"};
  r.dim_sizes = {c.num_ant, c.num_user};
  r.is_complex = true;
  r.re = draw_words(c.num_ant * c.num_user, c.weights, rng);
  r.im = draw_words(c.num_ant * c.num_user, c.weights, rng);
  plant_words(c, r, rng);
  return r;
}

/// The model under test, as the power stage computes power_acc: for each sum, the fixedpoint
/// core's sequential accumulator over the exact terms wr^2 + wi^2 at 2 WF fraction bits.
node_words power_model(const power_case& c, const node_words& w, const fp::format& acc_fmt, fp::counters& cnt) {
  node_words r;
  r.node = "power_acc";
  r.direction = "out";
  r.spec = {acc_fmt, c.rnd, c.ovf};
  // `fxmimo vectors` names the dimension "one" for the total and "antenna" per antenna.
  r.dim_names = {c.total ? "one" : "antenna"};
  r.dim_sizes = {c.total ? std::size_t{1} : c.num_ant};
  r.is_complex = false;
  const fp::requantizer<std::int64_t> q(r.spec);
  fp::accumulator<std::int64_t> acc(q);
  for (std::size_t i_ant = 0; i_ant < c.num_ant; ++i_ant) {
    if (!c.total || i_ant == 0) acc.reset();
    for (std::size_t i_user = 0; i_user < c.num_user; ++i_user) {
      const std::size_t i = i_ant * c.num_user + i_user;
      acc.add(w.re[i] * w.re[i] + w.im[i] * w.im[i], 2 * c.weights.frac_bits, cnt);
    }
    if (!c.total) r.re.push_back(acc.result(cnt));
  }
  if (c.total) r.re.push_back(acc.result(cnt));
  return r;
}

/// Terms whose dropped part is exactly half an accumulator LSB.
std::size_t count_ties(const power_case& c, const node_words& w) {
  const int s = dropped_bits(c);
  if (s < 1) return 0;
  std::size_t ties = 0;
  for (std::size_t i = 0; i < w.re.size(); ++i) {
    const std::int64_t p = w.re[i] * w.re[i] + w.im[i] * w.im[i];
    if ((p & ((std::int64_t{1} << s) - 1)) == (std::int64_t{1} << (s - 1))) ++ties;
  }
  return ties;
}

/// The AW-bit pattern of a word: what the RTL holds and dumps.
std::uint64_t pattern(std::int64_t word, int bits) {
  return static_cast<std::uint64_t>(word) & ((bits >= 64 ? 0U : (std::uint64_t{1} << bits)) - 1U);
}

rtl_parameters power_parameters(const power_case& c) {
  auto ll = [](auto v) { return static_cast<long long>(v); };
  return {{"M", ll(c.num_ant)},        {"K", ll(c.num_user)},           {"TOTAL", c.total ? 1 : 0},
          {"WW", c.weights.word_bits}, {"WF", c.weights.frac_bits},     {"AW", c.acc.word_bits},
          {"AF", c.acc.frac_bits},     {"AS", c.acc.is_signed ? 1 : 0}, {"ACC_RND", rtl_code(c.rnd)},
          {"ACC_OVF", rtl_code(c.ovf)}};
}

void simulate_power(simulator sim, const power_case& c, const std::vector<std::string>& defines, const fs::path& build,
                    const fs::path& vec, const fs::path& dump) {
  fs::create_directories(dump);
  run_rtl(sim, power_parameters(c), defines, {"tb_power_mac.v", "power_mac.v", "fxm_requant.v"}, build,
          "+vec=" + quote(vec) + " +out=" + quote(dump));
}

testing::command_result check_power(const fs::path& vec, const fs::path& dump, const fs::path& log) {
  return run_command(fmt::format("{} check {} --node power_acc --dump {}", quote(FXMIMO_EXE), quote(vec),
                                 quote(dump / "power_acc.hex")),
                     log);
}

void run_power_flow(simulator sim, const power_case& c, bool with_negative_test) {
  const fs::path work = scratch_dir(c.name);
  std::cout << "[ rtl      ] power_mac.v case " << c.name << ", seed " << c.seed << ", work dir " << work << "\n";
  std::mt19937_64 rng(c.seed);
  const node_words weights = weights_record(c, rng);
  fp::counters cnt;
  const node_words expected = power_model(c, weights, c.acc, cnt);
  if (c.acc_must_overflow) {
    ASSERT_GT(cnt.overflowed, 0U) << c << ": the stimulus never drove power_acc past its range";
  }
  if (dropped_bits(c) >= 1) {
    ASSERT_GT(count_ties(c, weights), 0U) << c << ": no term is a tie";
  }
  manifest_info info;
  info.scenario_name = std::string("rtl-power-") + c.name;
  info.scenario_text = fmt::format("# power accumulator example, case {}\n", c.name);
  info.seed = c.seed;
  info.trials = {0};
  const fs::path vec = work / "vec";
  write_vector_set(vec, info, {weights, expected});

  // 1. The RTL as designed: bit-exact.
  ASSERT_NO_FATAL_FAILURE(simulate_power(sim, c, {}, work / "build", vec, work / "dump"));
  const auto good = check_power(vec, work / "dump", work / "check.log");
  EXPECT_EQ(good.exit_code, 0) << c << "\n" << good.output;
  EXPECT_NE(good.output.find("PASS"), std::string::npos) << good.output;
  if (!with_negative_test || c.negative == signed_bug::not_run) return;

  // 2. FORCE_SIGNED_ACC: the core with the signed accumulator format predicts the broken words.
  ASSERT_FALSE(c.acc.is_signed) << c << ": the signed build is only a bug for an unsigned accumulator";
  const fp::format signed_acc{true, c.acc.word_bits, c.acc.frac_bits};
  fp::counters signed_cnt;
  const node_words broken = power_model(c, weights, signed_acc, signed_cnt);
  std::optional<std::size_t> first;
  for (std::size_t i = 0; i < expected.re.size() && !first; ++i) {
    if (pattern(expected.re[i], c.acc.word_bits) != pattern(broken.re[i], c.acc.word_bits)) first = i;
  }
  ASSERT_NO_FATAL_FAILURE(
      simulate_power(sim, c, {"FORCE_SIGNED_ACC"}, work / "build_signed", vec, work / "dump_signed"));
  const auto bad = check_power(vec, work / "dump_signed", work / "check_signed.log");
  if (c.negative == signed_bug::invisible) {
    // Wrap: both formats keep the same AW low bits of every sum.
    EXPECT_FALSE(first.has_value()) << c << ": the signed and unsigned models differ under wrap";
    EXPECT_EQ(bad.exit_code, 0) << bad.output;
    return;
  }
  ASSERT_TRUE(first.has_value()) << c << ": the signed and unsigned models agree on every word; no negative test";
  EXPECT_EQ(bad.exit_code, 1) << bad.output;
  EXPECT_NE(bad.output.find("power_acc/out: MISMATCH"), std::string::npos) << bad.output;
  const std::string where =
      fmt::format("first mismatch: flat index {} ({}={}):", *first, expected.dim_names[0], *first);
  EXPECT_NE(bad.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << bad.output;

  // 3. The broken RTL is exactly the signed model: its dump passes against a set made by it.
  const fs::path vec_signed = work / "vec_signed";
  write_vector_set(vec_signed, info, {weights, broken});
  const auto same = check_power(vec_signed, work / "dump_signed", work / "check_signed_model.log");
  EXPECT_EQ(same.exit_code, 0) << c << " against the signed model\n" << same.output;
}

class RtlUnsignedPowerIcarus : public ::testing::TestWithParam<power_case> {};

TEST_P(RtlUnsignedPowerIcarus, BitExactAndNegative) {
  if (!have_icarus()) GTEST_SKIP() << "Icarus Verilog (Debian package iverilog) not installed: RTL flow not run";
  run_power_flow(simulator::icarus, GetParam(), true);
}

INSTANTIATE_TEST_SUITE_P(Cases, RtlUnsignedPowerIcarus,
                         ::testing::Values(power_nominal, power_saturates, power_wraps, power_sym_ties, power_zero_ceil,
                                           power_total, power_half_down_wrap, power_total_floor, power_appended,
                                           power_signed_acc),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

class RtlUnsignedPowerVerilator : public ::testing::TestWithParam<std::pair<power_case, bool>> {};

TEST_P(RtlUnsignedPowerVerilator, BitExact) {
  if (!have_verilator()) GTEST_SKIP() << "Verilator (Debian package verilator) not installed: RTL flow not run";
  run_power_flow(simulator::verilator, GetParam().first, GetParam().second);
}

// A Verilator build takes seconds: two cases, the negative test on the saturating one.
INSTANTIATE_TEST_SUITE_P(Cases, RtlUnsignedPowerVerilator,
                         ::testing::Values(std::pair{power_nominal, false}, std::pair{power_saturates, true}),
                         [](const auto& param_info) { return std::string(param_info.param.first.name); });

}  // namespace
}  // namespace fxmimo::vectors
