// Properties of requantize that follow from the definitions of the modes (README "How it
// computes"), checked exhaustively where the space is small, and the fixed-width fast paths
// (int64, int128, int256) against Boost.Multiprecision's unbounded cpp_int arithmetic.
// The bit-for-bit check against IEEE 1666 SystemC lives in systemc/requantize_vs_systemc.cpp.
#include "fxmimo/fixedpoint/requantize.hpp"

#include <gtest/gtest.h>

#include <boost/multiprecision/cpp_int.hpp>
#include <random>

namespace fp = fxmimo::fixedpoint;
using fp::big_int;

namespace {

/// Every 16-bit word (frac 8) into Q3.4 (drop 4 bits) under each mode: the result lies where
/// the mode's definition puts it (exact value v = x / 16 in output LSBs):
/// floor <= v < floor+1 etc. Overflow is disabled by choosing a wide enough output (Q11.4).
TEST(requantize, exhaustive_16_bit_words_round_by_definition) {
  for (fp::rounding_mode mode : fp::all_rounding_modes) {
    const fp::target tgt{{true, 16, 4}, mode, fp::overflow_mode::saturate};
    const fp::requantizer<std::int64_t> q(tgt);
    fp::counters c;
    for (std::int64_t x = -32768; x <= 32767; ++x) {
      const std::int64_t got = q(x, 8, c);
      // Reference by integer definition: v = x / 16 exactly; 16*got - x is the error in 1/16 LSB.
      const std::int64_t err16 = got * 16 - x;  // in (-16, 16)
      const bool exact = x % 16 == 0;
      switch (mode) {
        case fp::rounding_mode::floor: ASSERT_TRUE(err16 <= 0 && err16 > -16) << x; break;
        case fp::rounding_mode::ceil: ASSERT_TRUE(err16 >= 0 && err16 < 16) << x; break;
        case fp::rounding_mode::toward_zero:
          ASSERT_TRUE(x >= 0 ? (err16 <= 0 && err16 > -16) : (err16 >= 0 && err16 < 16)) << x;
          break;
        default: {
          ASSERT_LE(std::abs(err16), 8) << fp::to_string(mode) << " x=" << x;
          if (std::abs(err16) == 8) {  // a tie: check the direction the mode names
            const bool went_up = err16 == 8;
            switch (mode) {
              case fp::rounding_mode::half_up: ASSERT_TRUE(went_up) << x; break;
              case fp::rounding_mode::half_down: ASSERT_FALSE(went_up) << x; break;
              case fp::rounding_mode::half_toward_zero: ASSERT_EQ(went_up, x < 0) << x; break;
              case fp::rounding_mode::half_away: ASSERT_EQ(went_up, x > 0) << x; break;
              case fp::rounding_mode::half_even: ASSERT_EQ(got % 2, 0) << x; break;
              default: break;
            }
          }
        }
      }
      if (exact) {
        ASSERT_EQ(err16, 0) << "exact values never change, x=" << x;
      }
    }
    EXPECT_EQ(c.requantized, 65536U);
    EXPECT_EQ(c.inexact, 65536U - 4096U) << "exactly the words with non-zero low 4 bits are inexact";
    EXPECT_EQ(c.overflowed, 0U);
  }
}

/// Mirror identities of the definitions: ceil(x) = -floor(-x), half_up(x) = -half_down(-x), and
/// the symmetric modes are odd functions (toward_zero, half_toward_zero, half_away, half_even:
/// f(x) = -f(-x)); each exhaustively on 16 bits, ties included.
TEST(requantize, mirror_identities_hold_exhaustively) {
  auto make = [](fp::rounding_mode m) {
    return fp::requantizer<std::int64_t>(fp::target{{true, 20, 3}, m, fp::overflow_mode::saturate});
  };
  const auto floor_q = make(fp::rounding_mode::floor), ceil_q = make(fp::rounding_mode::ceil);
  const auto up = make(fp::rounding_mode::half_up), down = make(fp::rounding_mode::half_down);
  const auto tz = make(fp::rounding_mode::half_toward_zero), away = make(fp::rounding_mode::half_away);
  const auto even = make(fp::rounding_mode::half_even), trunc = make(fp::rounding_mode::toward_zero);
  fp::counters c;
  for (std::int64_t x = -32768; x <= 32767; ++x) {
    ASSERT_EQ(ceil_q(x, 7, c), -floor_q(-x, 7, c)) << x;
    ASSERT_EQ(up(x, 7, c), -down(-x, 7, c)) << x;
    for (const auto* odd : {&tz, &away, &even, &trunc}) ASSERT_EQ((*odd)(x, 7, c), -(*odd)(-x, 7, c)) << x;
  }
}

/// Idempotence (requantising a word of the target again changes nothing) and monotonicity
/// (x <= y implies q(x) <= q(y) for every saturating mode), every 16-bit word, every mode.
TEST(requantize, idempotent_and_monotone_exhaustively) {
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : {fp::overflow_mode::saturate, fp::overflow_mode::saturate_symmetric}) {
      const fp::requantizer<std::int64_t> q(fp::target{{true, 10, 5}, rnd, ovf});
      fp::counters c;
      std::int64_t previous = std::numeric_limits<std::int64_t>::min();
      for (std::int64_t x = -32768; x <= 32767; ++x) {
        const std::int64_t y = q(x, 9, c);
        ASSERT_GE(y, previous) << "monotone " << fp::to_string(rnd) << " x=" << x;
        previous = y;
        ASSERT_EQ(q(y, 5, c), y) << "idempotent " << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " x=" << x;
      }
    }
  }
}

/// Overflow modes on every 12-bit input into a 6-bit signed word with F unchanged: saturate
/// clips to [-32, 31], saturate_symmetric to [-31, 31], saturate_zero gives 0 outside, and wrap
/// keeps the 6 low bits: q == x (mod 64). The counter counts exactly the out-of-range inputs.
TEST(requantize, overflow_modes_exhaustively) {
  for (fp::overflow_mode ovf : fp::all_overflow_modes) {
    const fp::requantizer<std::int64_t> q(fp::target{{true, 6, 0}, fp::rounding_mode::floor, ovf});
    fp::counters c;
    std::uint64_t expected_overflows = 0;
    for (std::int64_t x = -2048; x <= 2047; ++x) {
      const std::int64_t y = q(x, 0, c);
      const bool outside = x < -32 || x > 31;
      expected_overflows += outside || (ovf == fp::overflow_mode::saturate_symmetric && x == -32);
      switch (ovf) {
        case fp::overflow_mode::saturate: ASSERT_EQ(y, std::clamp<std::int64_t>(x, -32, 31)) << x; break;
        case fp::overflow_mode::saturate_symmetric: ASSERT_EQ(y, std::clamp<std::int64_t>(x, -31, 31)) << x; break;
        case fp::overflow_mode::saturate_zero: ASSERT_EQ(y, outside ? 0 : x) << x; break;
        case fp::overflow_mode::wrap:
          ASSERT_TRUE(y >= -32 && y <= 31) << x;
          ASSERT_EQ(((x - y) % 64 + 64) % 64, 0) << x;
          break;
      }
    }
    EXPECT_EQ(c.overflowed, expected_overflows) << fp::to_string(ovf);
    EXPECT_EQ(c.max_excess_lsb, 2047.0 - 31.0) << fp::to_string(ovf);
  }
}

/// The type's own corners on the native paths: the most negative int64 shifted by 63 and 64
/// (a tie and a below-half case), and appended bits that leave the type.
TEST(requantize, native_type_corners) {
  fp::counters c;
  const std::int64_t min64 = std::numeric_limits<std::int64_t>::min();
  const fp::target even{{true, 8, 0}, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  const fp::target up{{true, 8, 0}, fp::rounding_mode::half_up, fp::overflow_mode::saturate};
  const fp::target down{{true, 8, 0}, fp::rounding_mode::half_down, fp::overflow_mode::saturate};
  // -2^63 / 2^63 = -1 exactly.
  EXPECT_EQ(fp::requantize<std::int64_t>(min64, 63, even, c), -1);
  // -2^63 / 2^64 = -1/2: a tie.
  EXPECT_EQ(fp::requantize<std::int64_t>(min64, 64, even, c), 0);
  EXPECT_EQ(fp::requantize<std::int64_t>(min64, 64, up, c), 0);
  EXPECT_EQ(fp::requantize<std::int64_t>(min64, 64, down, c), -1);
  // 2^62 / 2^63 = +1/2: a tie on the s = bits - 1 path.
  EXPECT_EQ(fp::requantize<std::int64_t>(std::int64_t{1} << 62, 63, up, c), 1);
  EXPECT_EQ(fp::requantize<std::int64_t>(std::int64_t{1} << 62, 63, down, c), 0);
  // -2^63 / 2^65 = -1/4: rounds to 0 for nearest modes, -1 for floor.
  EXPECT_EQ(fp::requantize<std::int64_t>(min64, 65, even, c), 0);
  EXPECT_EQ(
      fp::requantize<std::int64_t>(min64, 65, {{true, 8, 0}, fp::rounding_mode::floor, fp::overflow_mode::wrap}, c),
      -1);
  // 3 * 2^70 does not fit int64: saturates; wraps to 0 in 8 bits (the low 70 bits are zero).
  const fp::target sat{{true, 64, 0}, fp::rounding_mode::floor, fp::overflow_mode::saturate};
  EXPECT_EQ(fp::requantize<std::int64_t>(3, -70, sat, c), std::numeric_limits<std::int64_t>::max());
  EXPECT_EQ(fp::requantize<std::int64_t>(-3, -70, {{true, 8, 0}, fp::rounding_mode::floor, fp::overflow_mode::wrap}, c),
            0);
  // 9 * 2^60 = 2^63 + 2^60 leaves int64; wrapped in 64 bits its pattern reads -2^63 + 2^60.
  EXPECT_EQ(fp::requantize<std::int64_t>(9, -60, {{true, 64, 0}, fp::rounding_mode::floor, fp::overflow_mode::wrap}, c),
            std::numeric_limits<std::int64_t>::min() + (std::int64_t{1} << 60));
}

/// Random bits of two's complement, full range (so saturation is exercised).
big_int random_big(std::mt19937_64& rng, int bits) {
  big_int v = 0;
  for (int got = 0; got < bits; got += 64) v = (v << 64) + big_int(rng());
  v &= (big_int(1) << bits) - 1;
  if (v >= (big_int(1) << (bits - 1))) v -= big_int(1) << bits;
  return v;
}

template <class T>
void check_products_against_cpp_int(int operand_bits, int word_bits, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  fp::counters c_fast;
  fp::counters c_ref;
  for (int i = 0; i < 20000; ++i) {
    const big_int a = random_big(rng, operand_bits);
    const big_int b = random_big(rng, operand_bits);
    const fp::rounding_mode rnd = fp::all_rounding_modes[static_cast<std::size_t>(i) % 8];
    const fp::overflow_mode ovf = fp::all_overflow_modes[static_cast<std::size_t>(i / 8) % 4];
    const fp::target tgt{{true, word_bits, operand_bits - 8}, rnd, ovf};
    const int product_frac = 2 * (operand_bits - 2);
    // Fast path: product in T (which holds 2 * operand_bits), then requantize in T.
    const T fast_product = T(fp::convert_int<T>(a) * fp::convert_int<T>(b));
    const T fast = fp::requantize<T>(fast_product, product_frac, tgt, c_fast);
    // Reference: Boost.Multiprecision's unbounded cpp_int product.
    const big_int ref = fp::requantize<big_int>(big_int(a * b), product_frac, tgt, c_ref);
    ASSERT_EQ(fp::convert_int<big_int>(fast), ref)
        << "seed " << seed << " a=" << a << " b=" << b << " " << fp::to_string(rnd) << "/" << fp::to_string(ovf);
  }
  EXPECT_EQ(c_fast, c_ref) << "counters agree too";
}

TEST(wide_path, int128_products_match_unbounded_cpp_int) {
  check_products_against_cpp_int<fp::int128>(64, 64, 1001);  // 64x64 -> 127-bit products
  check_products_against_cpp_int<fp::int128>(60, 100, 1002);
}

TEST(wide_path, int256_products_match_unbounded_cpp_int) {
  check_products_against_cpp_int<fp::int256>(128, 128, 1003);  // 128x128 -> 255-bit products
  check_products_against_cpp_int<fp::int256>(100, 96, 1004);
}

}  // namespace
