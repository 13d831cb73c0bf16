// Cross-check of every rounding x overflow mode pair against IEEE 1666-2011 SystemC
// fixed-point types (clause 7.10; quantisation modes Table 46), as implemented by Debian's
// libsystemc 2.3.4. sc_fix takes its word length, integer bits and modes at run time, so one
// test covers every (W, F). A value assigned to an sc_fix is quantised, then overflow-handled,
// exactly once (IEEE 1666-2011 7.10.9/7.10.10), the contract of our requantize.
//
// Modes without a SystemC twin: `ceil` is checked through ceil(x) = -floor(-x) (an identity
// of the floor function, stated here and used with SC_TRN on the negated value).
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>
#include <random>
#include <sstream>
#include <string>
#include <systemc>

#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fp = fxmimo::fixedpoint;
using fp::big_int;

namespace {

sc_dt::sc_q_mode sc_twin(fp::rounding_mode mode) {
  switch (mode) {
    case fp::rounding_mode::floor: return sc_dt::SC_TRN;
    case fp::rounding_mode::toward_zero: return sc_dt::SC_TRN_ZERO;
    case fp::rounding_mode::half_up: return sc_dt::SC_RND;
    case fp::rounding_mode::half_down: return sc_dt::SC_RND_MIN_INF;
    case fp::rounding_mode::half_toward_zero: return sc_dt::SC_RND_ZERO;
    case fp::rounding_mode::half_away: return sc_dt::SC_RND_INF;
    case fp::rounding_mode::half_even: return sc_dt::SC_RND_CONV;
    case fp::rounding_mode::ceil: break;  // no twin: see ceil identity
  }
  return sc_dt::SC_TRN;
}

sc_dt::sc_o_mode sc_twin(fp::overflow_mode mode) {
  switch (mode) {
    case fp::overflow_mode::wrap: return sc_dt::SC_WRAP;
    case fp::overflow_mode::saturate: return sc_dt::SC_SAT;
    case fp::overflow_mode::saturate_symmetric: return sc_dt::SC_SAT_SYM;
    case fp::overflow_mode::saturate_zero: return sc_dt::SC_SAT_ZERO;
  }
  return sc_dt::SC_WRAP;
}

/// The exact value raw * 2^-frac as an sc_fxval (built from decimal integer text, then an
/// exact shift), so inputs wider than 53 bits stay exact.
sc_dt::sc_fxval exact_value(const big_int& raw, int frac) {
  sc_dt::sc_fxval v(raw.str().c_str());
  if (frac > 0) v >>= frac;
  if (frac < 0) v <<= -frac;
  return v;
}

/// The raw word of an sc_fix, read 32 bits at a time so that W > 64 is covered.
big_int raw_word(const sc_dt::sc_fxnum& x, bool is_signed) {
  const int wl = x.wl();
  big_int pattern = 0;
  for (int lo = ((wl - 1) / 32) * 32; lo >= 0; lo -= 32) {
    const int hi = std::min(lo + 31, wl - 1);
    pattern = (pattern << 32) + big_int(x.range(hi, lo).to_uint64());
  }
  const big_int modulus = big_int(1) << wl;
  if (is_signed && pattern >= (modulus >> 1)) pattern -= modulus;
  return pattern;
}

big_int systemc_requantize(const big_int& raw, int from_frac, const fp::target& tgt) {
  const sc_dt::sc_fxval v = exact_value(raw, from_frac);
  const int iwl = tgt.fmt.word_bits - tgt.fmt.frac_bits;
  if (tgt.fmt.is_signed) {
    sc_dt::sc_fix y(tgt.fmt.word_bits, iwl, sc_twin(tgt.rounding), sc_twin(tgt.overflow));
    y = v;
    return raw_word(y, true);
  }
  sc_dt::sc_ufix y(tgt.fmt.word_bits, iwl, sc_twin(tgt.rounding), sc_twin(tgt.overflow));
  y = v;
  return raw_word(y, false);
}

/// What SystemC says the word is, with ceil through ceil(x) = -floor(-x).
big_int reference_word(const big_int& raw, int from_frac, const fp::target& tgt) {
  if (tgt.rounding != fp::rounding_mode::ceil) return systemc_requantize(raw, from_frac, tgt);
  // ceil(x) = -floor(-x): floor the negated value into a format one bit wider (so the
  // negation cannot overflow), negate, then let SystemC apply the overflow mode alone.
  // The wide format holds every input word, so nothing saturates before the final step.
  fp::target wide = tgt;
  const int input_int_bits =
      std::max(0, raw.is_zero() ? 0 : static_cast<int>(boost::multiprecision::msb(abs(raw))) + 1 - from_frac);
  wide.fmt.word_bits = std::max(tgt.fmt.word_bits, input_int_bits + tgt.fmt.frac_bits) + 3;
  wide.fmt.is_signed = true;
  wide.rounding = fp::rounding_mode::floor;
  wide.overflow = fp::overflow_mode::saturate;
  const big_int floored = systemc_requantize(-raw, from_frac, wide);
  fp::target exact_overflow = tgt;
  exact_overflow.rounding = fp::rounding_mode::floor;  // value is already on the grid
  return systemc_requantize(-floored, tgt.fmt.frac_bits, exact_overflow);
}

struct width_case {
  bool is_signed;
  int word_bits;
  int frac_bits;
  int from_frac;   ///< fraction bits of the exact input
  int input_bits;  ///< width of the random exact input words
};

std::string name_of(const width_case& w) {
  std::ostringstream out;
  out << (w.is_signed ? "s" : "u") << w.word_bits << "_f" << (w.frac_bits < 0 ? "m" : "") << std::abs(w.frac_bits)
      << "_from" << w.from_frac << "_in" << w.input_bits;
  return out.str();
}

/// Uniform random integer with `bits` bits of two's complement (the full range, so both
/// saturation and the most negative word are hit).
big_int random_input(std::mt19937_64& rng, int bits) {
  big_int pattern = 0;
  for (int got = 0; got < bits; got += 64) pattern = (pattern << 64) + big_int(rng());
  pattern &= (big_int(1) << bits) - 1;
  if (pattern >= (big_int(1) << (bits - 1))) pattern -= big_int(1) << bits;
  // Every fourth value is small, so the in-range region is well covered too.
  return pattern;
}

/// Inputs that hit the corners: exact ties of the dropped bits (positive and negative), the
/// edges of the target range, zero, the most negative input word.
std::vector<big_int> corner_inputs(const width_case& w) {
  std::vector<big_int> out{0, 1, -1};
  const int dropped = w.from_frac - w.frac_bits;
  const big_int half = dropped > 0 ? big_int(1) << (dropped - 1) : big_int(0);
  const big_int lsb = dropped > 0 ? big_int(1) << dropped : big_int(1);
  const big_int limit = big_int(1) << (w.input_bits - 1);
  for (int k = -3; k <= 3; ++k) {
    for (const big_int& base :
         std::vector<big_int>{big_int(0), big_int(lsb * 5), big_int(-lsb * 5), big_int(lsb * 6), big_int(-lsb * 6)}) {
      const big_int tie = base + half + k * lsb;
      for (const big_int& v : std::vector<big_int>{tie, big_int(-tie), big_int(tie + 1), big_int(tie - 1)})
        if (v < limit && v >= -limit) out.push_back(v);
    }
  }
  // Target range edges, expressed at the input's fraction bits.
  const int top = w.is_signed ? w.word_bits - 1 : w.word_bits;
  for (int extra = -1; extra <= 1; ++extra) {
    big_int edge = dropped >= 0 ? (big_int(1) << (top + std::max(dropped, 0))) : (big_int(1) << top) >> (-dropped);
    for (const big_int& v : std::vector<big_int>{big_int(edge + extra), big_int(-edge + extra),
                                                 big_int(edge - lsb + extra), big_int(-edge - lsb + extra)})
      if (v < limit && v >= -limit) out.push_back(v);
  }
  out.push_back(-limit);
  out.push_back(limit - 1);
  return out;
}

std::string test_name(const ::testing::TestParamInfo<width_case>& param_info) { return name_of(param_info.param); }

class versus_systemc : public ::testing::TestWithParam<width_case> {};

TEST_P(versus_systemc, every_mode_pair_bit_exact) {
  const width_case w = GetParam();
  const std::uint64_t seed = 0x5eed0000ULL + static_cast<std::uint64_t>(w.word_bits * 1000 + w.frac_bits + 500);
  std::mt19937_64 rng(seed);
  std::vector<big_int> inputs = corner_inputs(w);
  // 9 widths x 10000 + 3 widths x 4000 = 102000 random inputs per mode pair, plus the corners.
  const int num_random = w.word_bits > 64 ? 4000 : 10000;
  for (int i = 0; i < num_random; ++i) {
    big_int v = random_input(rng, w.input_bits);
    if (i % 4 == 0) v >>= static_cast<unsigned>(w.input_bits / 2);  // the middle of the range too
    inputs.push_back(v);
  }
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::target tgt{{w.is_signed, w.word_bits, w.frac_bits}, rnd, ovf};
      const fp::requantizer<big_int> ours(tgt);
      fp::counters c;
      int mismatches = 0;
      for (const big_int& x : inputs) {
        const big_int got = ours(x, w.from_frac, c);
        const big_int expected = reference_word(x, w.from_frac, tgt);
        if (got != expected && ++mismatches <= 5) {
          ADD_FAILURE() << name_of(w) << " " << to_string(rnd) << "/" << to_string(ovf) << " seed 0x" << std::hex
                        << seed << std::dec << ": input raw " << x << " (frac " << w.from_frac << ") expected "
                        << expected << " got " << got;
        }
      }
      EXPECT_EQ(mismatches, 0) << name_of(w) << " " << to_string(rnd) << "/" << to_string(ovf);
    }
  }
}

// The same check through each native integer type the datapath uses, so the int64 and int128
// fast paths are held to SystemC too (not only the unbounded reference path).
TEST_P(versus_systemc, native_paths_match_systemc) {
  const width_case w = GetParam();
  if (w.input_bits > 128 || w.word_bits + 1 > 128) GTEST_SKIP() << "wider than int128";
  std::mt19937_64 rng(0xabcdef12ULL + static_cast<std::uint64_t>(w.word_bits));
  std::vector<big_int> inputs = corner_inputs(w);
  for (int i = 0; i < 2000; ++i) inputs.push_back(random_input(rng, w.input_bits));
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::target tgt{{w.is_signed, w.word_bits, w.frac_bits}, rnd, ovf};
      fp::counters c;
      for (const big_int& x : inputs) {
        const big_int expected = reference_word(x, w.from_frac, tgt);
        if (w.input_bits <= 64 && w.word_bits + 1 <= 64) {
          const auto got = fp::requantize<std::int64_t>(fp::convert_int<std::int64_t>(x), w.from_frac, tgt, c);
          ASSERT_EQ(big_int(got), expected)
              << name_of(w) << " int64 " << to_string(rnd) << "/" << to_string(ovf) << " input " << x;
        }
        const auto got128 = fp::requantize<fp::int128>(fp::convert_int<fp::int128>(x), w.from_frac, tgt, c);
        ASSERT_EQ(fp::convert_int<big_int>(got128), expected)
            << name_of(w) << " int128 " << to_string(rnd) << "/" << to_string(ovf) << " input " << x;
      }
    }
  }
}

INSTANTIATE_TEST_SUITE_P(widths, versus_systemc,
                         ::testing::Values(width_case{true, 8, 4, 8, 16},      // drop 4 bits, overflow often
                                           width_case{true, 16, 15, 20, 40},   // Q0.15 from a wide product
                                           width_case{false, 12, 8, 12, 24},   // unsigned
                                           width_case{true, 16, 18, 24, 32},   // F > W
                                           width_case{true, 10, -3, 2, 24},    // negative F
                                           width_case{true, 24, 20, 16, 24},   // appending bits (left shift)
                                           width_case{true, 40, 30, 45, 62},   // accumulator-sized
                                           width_case{true, 64, 40, 60, 100},  // the full 64-bit word
                                           width_case{false, 63, 10, 30, 90},
                                           width_case{true, 80, 60, 90, 120},  // W > 64
                                           width_case{true, 128, 100, 120, 200}, width_case{false, 100, 50, 70, 160}),
                         test_name);

// from_double: a double is the exact rational m 2^e; SystemC's sc_fxval(double) is exact too.
TEST(from_double_vs_systemc, every_mode_pair_on_random_doubles) {
  std::mt19937_64 rng(77);
  std::uniform_real_distribution<double> uni(-3.0, 3.0);
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::target tgt{{true, 12, 9}, rnd, ovf};    // Q2.9: +-4, so |v| up to 3 overflows too... no: wide enough
      const fp::target narrow{{true, 8, 7}, rnd, ovf};  // Q0.7: overflows often
      for (const fp::target& t : {tgt, narrow}) {
        const fp::requantizer<std::int64_t> q(t);
        fp::counters c;
        for (int i = 0; i < 20000; ++i) {
          double v = uni(rng);
          if (i % 10 == 0) v = std::ldexp(std::round(v * 256.0) + 0.5, -8);  // exact ties of Q.8 -> Q.7
          const std::int64_t got = fp::from_double(v, q, c);
          const fp::binary_rational r = fp::decompose(v);
          ASSERT_EQ(big_int(got), reference_word(big_int(r.mantissa), -r.exponent, t))
              << "v=" << v << " " << to_string(rnd) << "/" << to_string(ovf);
        }
      }
    }
  }
}

// The accumulator contract acc <- Q(acc + Q(a * b)) is what an sc_fix accumulator computes
// when the exact product is first assigned to an accumulator-typed temporary and then added
// (IEEE 1666-2011 7.10: expressions are exact in sc_fxval, assignment quantises then
// overflows). Complex MAC, every mode pair, random full-range 16-bit operands.
TEST(accumulator_vs_systemc, complex_mac_every_mode_pair) {
  std::mt19937_64 rng(99);
  std::uniform_int_distribution<std::int64_t> word(-32768, 32767);
  const int acc_w = 30, acc_f = 24;  // Q5.24: saturates on some sequences
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    if (rnd == fp::rounding_mode::ceil) continue;  // no SystemC twin (checked by identity above)
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::target tgt{{true, acc_w, acc_f}, rnd, ovf};
      const fp::requantizer<std::int64_t> q(tgt);
      fp::complex_accumulator<std::int64_t> acc(q);
      fp::counters c;
      sc_dt::sc_fix acc_re(acc_w, acc_w - acc_f, sc_twin(rnd), sc_twin(ovf));
      sc_dt::sc_fix acc_im(acc_w, acc_w - acc_f, sc_twin(rnd), sc_twin(ovf));
      acc_re = 0;
      acc_im = 0;
      for (int k = 0; k < 300; ++k) {
        const fp::cword<std::int64_t> a{word(rng), word(rng)}, b{word(rng), word(rng)};
        acc.add(fp::cmul<std::int64_t>(a, b), 28, c);  // Q0.15 x Q1.13 -> 28 fraction bits
        const sc_dt::sc_fxval ar = exact_value(a.re, 15), ai = exact_value(a.im, 15);
        const sc_dt::sc_fxval br = exact_value(b.re, 13), bi = exact_value(b.im, 13);
        sc_dt::sc_fix term_re(acc_w, acc_w - acc_f, sc_twin(rnd), sc_twin(ovf));
        sc_dt::sc_fix term_im(acc_w, acc_w - acc_f, sc_twin(rnd), sc_twin(ovf));
        term_re = ar * br - ai * bi;
        term_im = ar * bi + ai * br;
        acc_re = acc_re + term_re;
        acc_im = acc_im + term_im;
        ASSERT_EQ(big_int(acc.value().re), raw_word(acc_re, true))
            << to_string(rnd) << "/" << to_string(ovf) << " k=" << k;
        ASSERT_EQ(big_int(acc.value().im), raw_word(acc_im, true))
            << to_string(rnd) << "/" << to_string(ovf) << " k=" << k;
      }
    }
  }
}

// `fxmimo quant` end to end on the worked table of the README ("Quantising single values"):
// the program's words must equal SystemC's for each row. The values are dyadic (exact in
// binary), chosen to land on ties and just past saturation.
struct quant_row {
  const char* format;  // Q notation
  const char* rounding;
  const char* overflow;
  const char* value;
};

constexpr quant_row readme_table[] = {
    {"Q1.6", "half_even", "saturate", "0.5078125"},   // 32.5 LSB: tie to even -> 32
    {"Q1.6", "half_up", "saturate", "0.5078125"},     // -> 33
    {"Q1.6", "half_even", "saturate", "-0.5078125"},  // -32.5 LSB -> -32
    {"Q1.6", "half_away", "saturate", "-0.5078125"},  // -> -33
    {"Q1.6", "half_up", "saturate", "1.9921875"},     // 127.5 LSB rounds to 128: saturates to 127
    {"Q1.6", "half_up", "wrap", "1.9921875"},         // 128 wraps to -128
    {"Q1.6", "floor", "saturate", "-2.0078125"},      // -128.5 LSB floors to -129: saturates
    {"Q1.6", "floor", "saturate_symmetric", "-2.0078125"},
    {"Q1.6", "floor", "wrap", "-2.0078125"},   // -129 wraps to 127
    {"Q0.15", "half_even", "saturate", "-1"},  // the most negative word, in range
    {"Q0.15", "half_even", "saturate_symmetric", "-1"},
    {"UQ0.8", "toward_zero", "saturate_zero", "1.5"},  // overflow -> 0
};

std::string run_and_capture(const std::string& command) {
  std::string out;
  FILE* pipe = popen(command.c_str(), "r");
  if (pipe == nullptr) return out;
  char buffer[4096];
  while (std::fgets(buffer, sizeof buffer, pipe) != nullptr) out += buffer;
  pclose(pipe);
  return out;
}

TEST(quant_command_vs_systemc, readme_table_rows) {
  for (const quant_row& row : readme_table) {
    const std::string command = std::string(FXMIMO_EXE) + " quant --json -f " + row.format + " -r " + row.rounding +
                                " -o " + row.overflow + " " + row.value;
    const std::string out = run_and_capture(command);
    const auto json = nlohmann::json::parse(out, nullptr, false);
    ASSERT_FALSE(json.is_discarded()) << command << " printed: " << out;
    const big_int got(json["values"][0]["word"].get<std::string>());
    const fp::format f = fp::parse_format(row.format);
    const fp::target tgt{f, *fp::parse_rounding_mode(row.rounding), *fp::parse_overflow_mode(row.overflow)};
    const fp::binary_rational exact = fp::decompose(std::stod(row.value));  // dyadic: exact
    EXPECT_EQ(got, reference_word(big_int(exact.mantissa), -exact.exponent, tgt)) << command;
  }
}

}  // namespace

// libsystemc supplies main() and calls sc_main: the test runner starts from here.
int sc_main(int argc, char* argv[]) {
  ::testing::InitGoogleTest(&argc, argv);
  return RUN_ALL_TESTS();
}
