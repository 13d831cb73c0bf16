// dot_accumulate_many (whatever target the dispatcher picks) against its scalar twin, a loop of
// dot_accumulate, the project's definition of a sequential complex MAC: bit for bit and counter
// for counter, for every rounding x overflow mode x product form, at output counts around the
// vector width and term counts from 1 to 256. The words cover their whole range (the most
// negative and largest words, zero, +-1, and values at every scale), the accumulators are narrow
// enough to overflow often, and shifts of 1 make exact half-LSB ties common.
#include "fxmimo/fixedpoint/mac_lanes.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cctype>
#include <cstdlib>
#include <random>
#include <set>
#include <string>
#include <vector>

#include "word_checks.hpp"

namespace fp = fxmimo::fixedpoint;
using cw = fp::cword<std::int64_t>;
using fxmimo::test_support::describe;
using fxmimo::test_support::draw_signed_word;
using fxmimo::test_support::hex;

namespace {

struct many_case {
  const char* name;
  int a_bits, a_frac;
  fp::lane_spread a_spread;
  int b_bits, b_frac;
  fp::lane_spread b_spread;
  fp::format acc;
  std::uint64_t seed;
};

std::ostream& operator<<(std::ostream& os, const many_case& c) { return os << c.name; }

constexpr auto column = fp::lane_spread::column;
constexpr auto shared = fp::lane_spread::shared;

/// Every output equal as integers and the counters equal; otherwise the first mismatching
/// output (index, expected, got in hex and value).
::testing::AssertionResult expect_bit_exact(const std::vector<cw>& expected, const std::vector<cw>& got,
                                            const fp::counters& c_expected, const fp::counters& c_got) {
  for (std::size_t j = 0; j < expected.size(); ++j) {
    if (expected[j] != got[j]) {
      return ::testing::AssertionFailure()
             << "first mismatch at output " << j << ": expected re " << hex(expected[j].re) << " im "
             << hex(expected[j].im) << ", got re " << hex(got[j].re) << " im " << hex(got[j].im);
    }
  }
  if (!(c_expected == c_got)) {
    return ::testing::AssertionFailure() << "counters differ: expected " << describe(c_expected) << ", got "
                                         << describe(c_got);
  }
  return ::testing::AssertionSuccess();
}

/// The operand's words for num_terms terms and num_outputs outputs, with a term stride longer
/// than the column (so a kernel that ignores the stride reads the wrong words).
struct operand_data {
  std::vector<cw> words;
  fp::lane_operand view;
};

operand_data make_operand(std::mt19937_64& rng, int bits, int frac, fp::lane_spread spread, std::size_t num_terms,
                          std::size_t num_outputs) {
  operand_data d;
  const std::size_t stride = spread == column ? num_outputs + 3 : 2;
  d.words.resize(std::max<std::size_t>(num_terms, 1) * stride);
  for (cw& w : d.words) w = {draw_signed_word(rng, bits), draw_signed_word(rng, bits)};
  d.view = {d.words.data(), stride, spread, bits, frac};
  return d;
}

template <fp::product_form Form>
void run_form(const many_case& tc, const char* form_name, std::mt19937_64& rng) {
  const std::size_t lanes = fp::many_kernel_outputs_per_vector();
  std::set<std::size_t> output_counts{0, 1, 7, 13, 31, 1024};
  for (std::size_t k : {lanes - 1, lanes, lanes + 1, 2 * lanes - 1, 2 * lanes, 2 * lanes + 1, 4 * lanes + 1})
    output_counts.insert(k);
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::requantizer<std::int64_t> q({tc.acc, rnd, ovf});
      for (std::size_t num_terms : {0UL, 1UL, 2UL, 17UL, 256UL}) {
        for (std::size_t num_outputs : output_counts) {
          if (num_outputs * num_terms > 1024 * 17 && rnd != fp::rounding_mode::half_even &&
              rnd != fp::rounding_mode::floor) {
            continue;  // the largest size runs for two modes only, to keep the suite fast
          }
          const operand_data a = make_operand(rng, tc.a_bits, tc.a_frac, tc.a_spread, num_terms, num_outputs);
          const operand_data b = make_operand(rng, tc.b_bits, tc.b_frac, tc.b_spread, num_terms, num_outputs);
          // Counters that already hold counts: both implementations must add to them alike.
          fp::counters c_twin{5, 3, 2, 0.5}, c_many = c_twin;
          std::vector<cw> twin(num_outputs, cw{-7, 7}), many(num_outputs, cw{7, -7});
          fp::dot_accumulate_many_scalar<Form>(a.view, b.view, num_terms, num_outputs, q, twin.data(), c_twin);
          fp::dot_accumulate_many<Form>(a.view, b.view, num_terms, num_outputs, q, many.data(), c_many);
          ASSERT_TRUE(expect_bit_exact(twin, many, c_twin, c_many))
              << tc.name << " " << form_name << " " << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " terms "
              << num_terms << " outputs " << num_outputs << " seed " << tc.seed << " target "
              << fp::many_kernel_target();
        }
      }
    }
  }
}

class mac_lanes : public ::testing::TestWithParam<many_case> {};

TEST_P(mac_lanes, matches_the_scalar_twin_bit_for_bit) {
  const many_case& tc = GetParam();
  std::mt19937_64 rng(tc.seed);
  run_form<fp::product_form::plain>(tc, "plain", rng);
  run_form<fp::product_form::conj_second>(tc, "conj_second", rng);
  run_form<fp::product_form::conj_both>(tc, "conj_both", rng);
}

// Formats: Q0.15 words are 16 bits with 15 fraction bits; an accumulator {signed, W, F}.
const many_case cases[] = {
    // Shift 1: every odd product is an exact tie; a 24-bit accumulator saturates most sums.
    {"q15_column_times_shared_ties_narrow_acc", 16, 15, column, 16, 15, shared, {true, 24, 29}, 101},
    // The benchmark's formats: Q0.15 x into Q9.30 (shift 1), overflow only at the extremes.
    {"q15_times_q16_into_q9_30", 16, 15, column, 16, 16, shared, {true, 40, 30}, 102},
    // No bit dropped (terms exact; dot_accumulate takes its 128-bit twin here), narrow accumulator.
    {"exact_terms_narrow_acc", 16, 15, column, 16, 15, shared, {true, 33, 30}, 103},
    // The shared operand first (a weight times a row of symbols), odd widths, shift 4.
    {"shared_times_column_odd_widths", 12, 11, shared, 14, 13, column, {true, 18, 20}, 104},
    // Both operands columns (element-wise products per output), shift 4.
    {"column_times_column", 16, 15, column, 16, 15, column, {true, 22, 26}, 105},
    // 32 x 30-bit words: products of 61 bits, the widest the vector form takes; shift 20.
    {"wide_words_32_by_30", 32, 31, column, 30, 29, shared, {true, 48, 40}, 106},
    // A 32-bit shared operand (its negation needs 33 bits): the path without per-lane signs.
    {"shared_32_bit_words", 30, 29, column, 32, 31, shared, {true, 48, 40}, 112},
    // Exact terms into a wide accumulator that still saturates after many terms: the grouped
    // overflow test (safe zone of 4 terms) enters and leaves its step-by-step fallback.
    {"exact_terms_grouped_overflow_test", 16, 15, column, 16, 15, shared, {true, 36, 30}, 113},
    // Unsigned accumulator: the range starts at 0, wrap keeps W bits unsigned.
    {"unsigned_accumulator", 16, 15, column, 16, 15, shared, {false, 20, 26}, 107},
    // The largest shift (62): almost every term rounds to 0 or -1 by the sign and the mode.
    {"largest_shift", 31, 40, column, 31, 40, shared, {true, 20, 18}, 108},
    // Outside the vector form (33-bit words, bits appended, both shared): the twin must run.
    {"wider_than_32_bits_falls_back", 33, 30, column, 16, 15, shared, {true, 40, 40}, 109},
    {"bits_appended_falls_back", 16, 15, column, 16, 15, shared, {true, 40, 32}, 110},
    {"both_shared_falls_back", 16, 15, shared, 16, 15, shared, {true, 24, 29}, 111},
};

INSTANTIATE_TEST_SUITE_P(cases, mac_lanes, ::testing::ValuesIn(cases),
                         [](const ::testing::TestParamInfo<many_case>& param) {
                           return std::string(param.param.name);
                         });

fp::lane_operand view_of(const many_case& tc, bool first) {
  return first ? fp::lane_operand{nullptr, 0, tc.a_spread, tc.a_bits, tc.a_frac}
               : fp::lane_operand{nullptr, 0, tc.b_spread, tc.b_bits, tc.b_frac};
}

TEST(mac_lanes_form, applies_exactly_where_documented) {
  for (const many_case& tc : cases) {
    const fp::requantizer<std::int64_t> q({tc.acc, fp::rounding_mode::floor, fp::overflow_mode::saturate});
    const bool falls_back = std::string(tc.name).ends_with("falls_back");
    EXPECT_EQ(fp::many_vector_form_applies(view_of(tc, true), view_of(tc, false), q), !falls_back) << tc.name;
  }
}

// requantize_many (a vector of words from one format into another, as the DAC stage does)
// against its scalar twin, the loop of requantizer calls: every rounding x overflow mode, signed
// and unsigned targets, word counts around the vector width, and shifts from 0 (exact) to 62.
// A quarter of the words are exact ties (q 2^s + 2^(s-1)), the rest cover the whole range, and
// the targets are narrow enough to overflow often.
struct requantize_case {
  const char* name;
  int in_bits, in_frac;
  fp::format out;
  bool vector_form;  // requantize_vector_form_applies
};

const requantize_case requantize_cases[] = {
    {"tx_acc_to_dac", 20, 18, {true, 16, 15}, true},                // the DAC's shape: shift 3
    {"shift_1_ties", 16, 15, {true, 12, 14}, true},                 // every odd word a tie, saturating
    {"exact_no_bit_dropped", 24, 10, {true, 16, 10}, true},         // shift 0: the overflow step only
    {"unsigned_target", 20, 12, {false, 8, 6}, true},               // negatives overflow below 0
    {"widest_words_largest_shift", 62, 70, {true, 20, 8}, true},    // |x| up to 2^61, shift 62
    {"words_of_63_bits_fall_back", 63, 40, {true, 32, 20}, false},  // beyond the biased shift
    {"appended_bits_fall_back", 16, 10, {true, 24, 14}, false},     // shift < 0
};

std::int64_t draw_requantize_word(std::mt19937_64& rng, int bits, int shift) {
  const std::int64_t w = draw_signed_word(rng, bits);
  if (shift < 1 || shift >= bits - 1 || rng() % 4 != 0) return w;
  // A tie: w's bits above `shift`, then exactly half an LSB of the target.
  const auto tie =
      static_cast<std::int64_t>((static_cast<std::uint64_t>(w) >> shift << shift) | (std::uint64_t{1} << (shift - 1)));
  return tie;
}

TEST(mac_lanes_requantize, matches_the_scalar_twin_bit_for_bit) {
  std::mt19937_64 rng(2027);
  const std::size_t lanes = 2 * fp::many_kernel_outputs_per_vector();  // int64 words per vector
  for (const requantize_case& tc : requantize_cases) {
    for (fp::rounding_mode rnd : fp::all_rounding_modes) {
      for (fp::overflow_mode ovf : fp::all_overflow_modes) {
        const fp::requantizer<std::int64_t> q({tc.out, rnd, ovf});
        EXPECT_EQ(fp::requantize_vector_form_applies(tc.in_bits, tc.in_frac, q), tc.vector_form) << tc.name;
        const int shift = tc.in_frac - tc.out.frac_bits;
        for (std::size_t n : {std::size_t{0}, std::size_t{1}, lanes - 1, lanes, lanes + 1, std::size_t{997}}) {
          std::vector<std::int64_t> in(n);
          for (std::int64_t& w : in) w = draw_requantize_word(rng, tc.in_bits, shift);
          fp::counters c_twin{5, 3, 2, 0.5}, c_many = c_twin;
          std::vector<std::int64_t> twin(n, -7), many(n, 7);
          fp::requantize_many_scalar(in.data(), n, tc.in_frac, q, twin.data(), c_twin);
          fp::requantize_many(in.data(), n, tc.in_bits, tc.in_frac, q, many.data(), c_many);
          for (std::size_t i = 0; i < n; ++i) {
            ASSERT_EQ(twin[i], many[i]) << tc.name << " " << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " n "
                                        << n << " word " << i << " in " << hex(in[i]) << " target "
                                        << fp::many_kernel_target();
          }
          ASSERT_TRUE(c_twin == c_many) << tc.name << " " << fp::to_string(rnd) << "/" << fp::to_string(ovf)
                                        << ": expected " << describe(c_twin) << ", got " << describe(c_many);
          // In place, as a stage may run it.
          fp::counters c_in_place{5, 3, 2, 0.5};
          std::vector<std::int64_t> words = in;
          fp::requantize_many(words.data(), n, tc.in_bits, tc.in_frac, q, words.data(), c_in_place);
          ASSERT_EQ(words, twin) << tc.name << " in place";
        }
      }
    }
  }
}

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char ch) { return static_cast<char>(std::tolower(ch)); });
  return s;
}

// Without FXMIMO_SIMD, a CPU with AVX2 must run a vector target, so the comparisons above are
// not the twin against itself; with it, the named implementation must run.
TEST(mac_lanes_target, the_dispatcher_runs_the_vector_form_unless_told_otherwise) {
  const char* forced = std::getenv("FXMIMO_SIMD");
  const std::string target = fp::many_kernel_target();
  std::cout << "dot_accumulate_many runs on " << target << ", " << fp::many_kernel_outputs_per_vector()
            << " outputs per vector\n";
  if (forced != nullptr && *forced != '\0') {
    EXPECT_EQ(lower(target), lower(forced));
    if (lower(forced) == "scalar") {
      EXPECT_EQ(fp::many_kernel_outputs_per_vector(), 1U);
    }
    return;
  }
#if defined(FXMIMO_WITHOUT_VECTOR_KERNELS)
  GTEST_SKIP() << "built without the vector kernels (FXMIMO_VECTOR_KERNELS=OFF: the sanitizer build)";
#elif defined(__x86_64__)
  if (!__builtin_cpu_supports("avx2")) GTEST_SKIP() << "this CPU has no AVX2";
  EXPECT_NE(lower(target), "scalar");
  EXPECT_GE(fp::many_kernel_outputs_per_vector(), 2U);  // 256-bit vectors hold two complex int64 outputs
#else
  GTEST_SKIP() << "the vector-target check is written for x86-64";
#endif
}

}  // namespace
