// Divide, square root and reciprocal square root against their definitions, evaluated with
// Boost.Multiprecision's exact rationals (cpp_rational) and integers: the result q must be the
// mode's rounding of the exact value (floor: q <= v < q + 1; nearest: |v - q| <= 1/2 with the
// mode's tie rule), then the overflow mode.
#include "fxmimo/fixedpoint/divide.hpp"

#include <gtest/gtest.h>

#include <boost/multiprecision/cpp_int.hpp>
#include <random>

namespace fp = fxmimo::fixedpoint;
using boost::multiprecision::cpp_rational;
using fp::big_int;

namespace {

cpp_rational pow2q(int e) {
  return e >= 0 ? cpp_rational(big_int(1) << e) : cpp_rational(big_int(1), big_int(1) << -e);
}

/// Checks that q is `mode`'s rounding of the exact value v (in output LSBs).
::testing::AssertionResult rounds_by_definition(const big_int& q, const cpp_rational& v, fp::rounding_mode mode) {
  const cpp_rational err = cpp_rational(q) - v;  // q - v
  const cpp_rational half(1, 2);
  bool ok = false;
  switch (mode) {
    case fp::rounding_mode::floor: ok = err <= 0 && err > -1; break;
    case fp::rounding_mode::ceil: ok = err >= 0 && err < 1; break;
    case fp::rounding_mode::toward_zero: ok = v >= 0 ? (err <= 0 && err > -1) : (err >= 0 && err < 1); break;
    default: {
      ok = abs(err) <= half;
      if (ok && abs(err) == half) {
        const bool up = err == half;
        switch (mode) {
          case fp::rounding_mode::half_up: ok = up; break;
          case fp::rounding_mode::half_down: ok = !up; break;
          case fp::rounding_mode::half_toward_zero: ok = up == (v < 0); break;
          case fp::rounding_mode::half_away: ok = up == (v > 0); break;
          case fp::rounding_mode::half_even: ok = (q % 2) == 0; break;
          default: break;
        }
      }
    }
  }
  if (ok) return ::testing::AssertionSuccess();
  return ::testing::AssertionFailure() << "q=" << q << " exact=" << v << " mode=" << fp::to_string(mode);
}

TEST(divide, quotients_round_by_definition) {
  std::mt19937_64 rng(31);
  std::uniform_int_distribution<std::int64_t> num(-(1 << 20), 1 << 20), den(-(1 << 12), 1 << 12);
  for (fp::rounding_mode mode : fp::all_rounding_modes) {
    const fp::target tgt{{true, 40, 16}, mode, fp::overflow_mode::saturate};
    fp::counters c;
    for (int i = 0; i < 20000; ++i) {
      std::int64_t n = num(rng), d = den(rng);
      if (d == 0) d = 3;
      if (i % 7 == 0) n = d * (2 * (i % 11) + 1);  // ties: n/d * 2^(F + fd - fn) lands on halves
      const int nf = 8, df = 8;                    // raw = n 2^16 / d, below 2^36: no overflow
      const std::int64_t q = fp::divide<std::int64_t>(n, nf, d, df, tgt, c);
      // (Boost 1.74 cpp_rational refuses a negative denominator: move the sign up.)
      const cpp_rational exact =
          cpp_rational(big_int(d < 0 ? -n : n), big_int(d < 0 ? -d : d)) * pow2q(tgt.fmt.frac_bits + df - nf);
      ASSERT_TRUE(rounds_by_definition(big_int(q), exact, mode)) << "n=" << n << " d=" << d;
    }
    EXPECT_EQ(c.overflowed, 0U);
  }
}

TEST(divide, exact_halves_are_ties) {
  fp::counters c;
  // 1 / 2^-1... 3 / 2 at F = 0 is 1.5: half_even -> 2, half_down -> 1, half_toward_zero -> 1.
  const auto div = [&](std::int64_t n, std::int64_t d, fp::rounding_mode m) {
    return fp::divide<std::int64_t>(n, 0, d, 0, {{true, 8, 0}, m, fp::overflow_mode::saturate}, c);
  };
  EXPECT_EQ(div(3, 2, fp::rounding_mode::half_even), 2);
  EXPECT_EQ(div(5, 2, fp::rounding_mode::half_even), 2);
  EXPECT_EQ(div(-5, 2, fp::rounding_mode::half_even), -2);
  EXPECT_EQ(div(-3, 2, fp::rounding_mode::half_down), -2);
  EXPECT_EQ(div(-3, 2, fp::rounding_mode::half_toward_zero), -1);
  EXPECT_EQ(div(-3, 2, fp::rounding_mode::half_away), -2);
  EXPECT_EQ(div(3, -2, fp::rounding_mode::half_up), -1);
}

TEST(divide, by_zero_is_an_overflow_toward_infinity) {
  fp::counters c;
  const fp::format f{true, 12, 4};
  EXPECT_EQ(fp::divide<std::int64_t>(5, 0, 0, 0, {f, fp::rounding_mode::floor, fp::overflow_mode::saturate}, c), 2047);
  EXPECT_EQ(fp::divide<std::int64_t>(-5, 0, 0, 0, {f, fp::rounding_mode::floor, fp::overflow_mode::saturate}, c),
            -2048);
  EXPECT_EQ(
      fp::divide<std::int64_t>(-5, 0, 0, 0, {f, fp::rounding_mode::floor, fp::overflow_mode::saturate_symmetric}, c),
      -2047);
  EXPECT_EQ(fp::divide<std::int64_t>(5, 0, 0, 0, {f, fp::rounding_mode::floor, fp::overflow_mode::wrap}, c), 0);
  EXPECT_EQ(fp::divide<std::int64_t>(0, 0, 0, 0, {f, fp::rounding_mode::floor, fp::overflow_mode::saturate}, c), 0);
  EXPECT_EQ(c.overflowed, 5U);
}

TEST(square_root, roots_round_by_definition) {
  // q^2 brackets: floor(sqrt(w)) = largest q with q^2 <= w, w = x 2^(2F - fx); nearest modes:
  // |sqrt(w) - q| <= 1/2 <=> (q - 1/2)^2 <= w <= (q + 1/2)^2, equality being a tie (possible
  // when w is the square of a half-integer, e.g. 4396.5^2), resolved by the mode's tie rule.
  std::mt19937_64 rng(8);
  std::uniform_int_distribution<std::int64_t> dist(0, std::int64_t{1} << 40);
  for (fp::rounding_mode mode : fp::all_rounding_modes) {
    for (int fx : {0, 7, 30}) {
      const fp::target tgt{{false, 40, 12}, mode, fp::overflow_mode::saturate};
      fp::counters c;
      for (int i = 0; i < 5000; ++i) {
        std::int64_t x = dist(rng);
        if (i % 9 == 0) x = (i * 977LL) * (i * 977LL);  // perfect squares are exact
        const big_int q = big_int(fp::sqrt<std::int64_t>(x, fx, tgt, c));
        // w = x 2^(2F - fx) as a rational; the exact result is sqrt(w).
        const cpp_rational w = cpp_rational(x) * pow2q(2 * tgt.fmt.frac_bits - fx);
        const cpp_rational lo2 = cpp_rational(q) * q, hi2 = cpp_rational(q + 1) * (q + 1);
        const cpp_rational below2 = q == 0 ? cpp_rational(-1) : cpp_rational(2 * q - 1) * (2 * q - 1) / 4;
        const cpp_rational above2 = cpp_rational(2 * q + 1) * (2 * q + 1) / 4;
        switch (mode) {
          case fp::rounding_mode::floor:
          case fp::rounding_mode::toward_zero: ASSERT_TRUE(lo2 <= w && w < hi2) << x << " fx=" << fx; break;
          case fp::rounding_mode::ceil:
            ASSERT_TRUE(lo2 >= w && (q == 0 || cpp_rational(q - 1) * (q - 1) < w)) << x << " fx=" << fx;
            break;
          default: {
            ASSERT_TRUE(below2 <= w && w <= above2) << fp::to_string(mode) << " x=" << x << " fx=" << fx;
            const bool even_q = q % 2 == 0;
            if (w == above2) {  // tie rounded down (value positive)
              ASSERT_TRUE(mode == fp::rounding_mode::half_down || mode == fp::rounding_mode::half_toward_zero ||
                          (mode == fp::rounding_mode::half_even && even_q))
                  << fp::to_string(mode) << " x=" << x;
            }
            if (w == below2) {  // tie rounded up
              ASSERT_TRUE(mode == fp::rounding_mode::half_up || mode == fp::rounding_mode::half_away ||
                          (mode == fp::rounding_mode::half_even && even_q))
                  << fp::to_string(mode) << " x=" << x;
            }
          }
        }
      }
    }
  }
}

TEST(square_root, reciprocal_root_rounds_by_definition) {
  // rsqrt: q ~ 2^F / sqrt(w), w = x 2^-fx: floor means q^2 <= 2^(2F) / w < (q+1)^2.
  std::mt19937_64 rng(9);
  std::uniform_int_distribution<std::int64_t> dist(1, std::int64_t{1} << 36);
  for (fp::rounding_mode mode : {fp::rounding_mode::floor, fp::rounding_mode::ceil, fp::rounding_mode::half_even}) {
    const fp::target tgt{{false, 32, 30}, mode, fp::overflow_mode::saturate};
    fp::counters c;
    for (int i = 0; i < 5000; ++i) {
      const std::int64_t x = dist(rng);
      const int fx = 20;
      const big_int q = big_int(fp::rsqrt<std::int64_t>(x, fx, tgt, c));
      const cpp_rational y = pow2q(2 * tgt.fmt.frac_bits + fx) / cpp_rational(x);  // exact q^2 target
      const cpp_rational lo2 = cpp_rational(q) * q, hi2 = cpp_rational(q + 1) * (q + 1);
      const big_int max_word = (big_int(1) << 32) - 1;
      if (q == max_word) {  // saturated: the exact root is at least max - 1/2 (nearest) or max (floor)
        ASSERT_GE(y, cpp_rational(2 * max_word - 1) * (2 * max_word - 1) / 4) << x;
        continue;
      }
      switch (mode) {
        case fp::rounding_mode::floor: ASSERT_TRUE(lo2 <= y && y < hi2) << x; break;
        case fp::rounding_mode::ceil: ASSERT_TRUE(lo2 >= y && cpp_rational(q - 1) * (q - 1) < y) << x; break;
        default:
          ASSERT_TRUE(cpp_rational(2 * q - 1) * (2 * q - 1) / 4 < y && y < cpp_rational(2 * q + 1) * (2 * q + 1) / 4)
              << x;
      }
    }
  }
  fp::counters c;
  // rsqrt(0) overflows toward +infinity; rsqrt(1/4) = 2 exactly.
  EXPECT_EQ(fp::rsqrt<std::int64_t>(0, 0, {{false, 8, 4}, fp::rounding_mode::floor, fp::overflow_mode::saturate}, c),
            255);
  EXPECT_EQ(fp::rsqrt<std::int64_t>(1, 2, {{false, 8, 4}, fp::rounding_mode::floor, fp::overflow_mode::saturate}, c),
            32);
  EXPECT_EQ(c.inexact, 0U);
}

}  // namespace
