// Exact doors in and out. Facts used: IEEE 754 binary64 stores 0.1 as 3602879701896397 * 2^-55
// (the nearest double; common knowledge, re-derivable: 2^55 / 10 = 3602879701896396.8 rounds to
// ...397); a binary fraction raw 2^-F has a finite decimal expansion raw 5^F 10^-F.
#include "fxmimo/fixedpoint/conversions.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <random>
#include <string>
#include <vector>

namespace fp = fxmimo::fixedpoint;
using fp::big_int;

namespace {

TEST(from_double, a_double_is_converted_without_prior_rounding) {
  fp::counters c;
  for (fp::rounding_mode mode : fp::all_rounding_modes) {
    const fp::requantizer<std::int64_t> q55(fp::target{{true, 60, 55}, mode, fp::overflow_mode::saturate});
    EXPECT_EQ(fp::from_double(0.1, q55, c), 3602879701896397) << "exact at F=55 in every mode";
    const fp::requantizer<std::int64_t> q58(fp::target{{true, 62, 58}, mode, fp::overflow_mode::saturate});
    EXPECT_EQ(fp::from_double(0.1, q58, c), std::int64_t{3602879701896397} * 8);
  }
  EXPECT_EQ(c.inexact, 0U);
}

TEST(from_decimal, decimal_text_is_exact_unlike_a_double) {
  // 0.1 exactly is 2^55 / 10 = 3602879701896396.8 LSBs of Q4.55.
  fp::counters c;
  const fp::decimal_value tenth = fp::parse_decimal("0.1");
  const fp::format f{true, 60, 55};
  EXPECT_EQ(fp::from_decimal<big_int>(tenth, {f, fp::rounding_mode::floor, fp::overflow_mode::saturate}, c),
            big_int(3602879701896396));
  EXPECT_EQ(fp::from_decimal<big_int>(tenth, {f, fp::rounding_mode::half_even, fp::overflow_mode::saturate}, c),
            big_int(3602879701896397));
  // -2.5 at F = 0 is a tie: half_even -> -2, half_away -> -3.
  const fp::decimal_value m25 = fp::parse_decimal("-25e-1");
  EXPECT_EQ(
      fp::from_decimal<big_int>(m25, {{true, 8, 0}, fp::rounding_mode::half_even, fp::overflow_mode::saturate}, c),
      big_int(-2));
  EXPECT_EQ(
      fp::from_decimal<big_int>(m25, {{true, 8, 0}, fp::rounding_mode::half_away, fp::overflow_mode::saturate}, c),
      big_int(-3));
}

TEST(from_decimal, rejects_what_is_not_a_number) {
  for (const char* bad : {"", "-", "1.2.3", "abc", "1e", "0x10", "1,5", "--1", "1e+"}) {
    EXPECT_THROW((void)fp::parse_decimal(bad), std::invalid_argument) << "'" << bad << "'";
  }
}

TEST(exact_decimal, binary_fractions_print_exactly) {
  EXPECT_EQ(fp::exact_decimal(big_int(1), 15), "0.000030517578125");
  EXPECT_EQ(fp::exact_decimal(big_int(-32768), 15), "-1");
  EXPECT_EQ(fp::exact_decimal(big_int(-3), 1), "-1.5");
  EXPECT_EQ(fp::exact_decimal(big_int(3), -4), "48");
  EXPECT_EQ(fp::exact_decimal(big_int(0), 7), "0");
}

TEST(from_double, infinities_overflow_and_nan_is_refused) {
  fp::counters c;
  const fp::requantizer<std::int64_t> sat(
      fp::target{{true, 16, 15}, fp::rounding_mode::floor, fp::overflow_mode::saturate});
  const fp::requantizer<std::int64_t> wrap(
      fp::target{{true, 16, 15}, fp::rounding_mode::floor, fp::overflow_mode::wrap});
  EXPECT_EQ(fp::from_double(std::numeric_limits<double>::infinity(), sat, c), 32767);
  EXPECT_EQ(fp::from_double(-std::numeric_limits<double>::infinity(), sat, c), -32768);
  EXPECT_EQ(fp::from_double(std::numeric_limits<double>::infinity(), wrap, c), 0);
  EXPECT_EQ(c.overflowed, 3U);
  EXPECT_THROW((void)fp::from_double(std::nan(""), sat, c), std::domain_error);
  // The smallest subnormal rounds to 0 or 1 LSB depending on the mode.
  const fp::requantizer<std::int64_t> ceil_q(
      fp::target{{true, 16, 15}, fp::rounding_mode::ceil, fp::overflow_mode::saturate});
  EXPECT_EQ(fp::from_double(std::numeric_limits<double>::denorm_min(), ceil_q, c), 1);
  EXPECT_EQ(fp::from_double(-std::numeric_limits<double>::denorm_min(), sat, c), -1);
}

}  // namespace

namespace {

// to_double_approx of 128-bit integers against Boost.Multiprecision's conversion of the same
// value (cpp_int::convert_to<double>, correctly rounded below 2^64 as the 64-bit conversion is):
// equal below 2^64 in magnitude, both signs; within one rounding (2^-52 relative) above. Small
// negative values once read as 0 (-5: the low half 2^64 - 5 rounded up to 2^64).
TEST(to_double_approx, int128_matches_boost_multiprecision) {
  using boost::multiprecision::cpp_int;
  auto reference = [](fp::int128 x) {
    const bool negative = x < 0;
    const fp::uint128 m = negative ? fp::uint128{0} - static_cast<fp::uint128>(x) : static_cast<fp::uint128>(x);
    cpp_int v = static_cast<std::uint64_t>(m >> 64);
    v <<= 64;
    v += static_cast<std::uint64_t>(m);
    return negative ? -v.convert_to<double>() : v.convert_to<double>();
  };
  std::vector<fp::int128> values{0, 1, -1, -5, 5, -(fp::int128{1} << 53) - 1, (fp::int128{1} << 53) + 1};
  values.push_back(static_cast<fp::int128>(std::numeric_limits<std::int64_t>::min()));
  values.push_back(static_cast<fp::int128>(std::numeric_limits<std::int64_t>::max()));
  values.push_back(-(fp::int128{1} << 64) + 1);
  values.push_back((fp::int128{1} << 100) + 12345);
  values.push_back(-(fp::int128{1} << 126));
  std::mt19937_64 rng(20261203);
  for (int i = 0; i < 2000; ++i) {
    const int bits = 1 + static_cast<int>(rng() % 126);
    const fp::uint128 raw = (static_cast<fp::uint128>(rng()) << 64) | rng();
    const auto magnitude = static_cast<fp::int128>(raw >> (128 - bits));
    values.push_back(rng() % 2 == 0 ? magnitude : -magnitude);
  }
  for (fp::int128 x : values) {
    const double got = fp::to_double_approx(x), want = reference(x);
    const fp::uint128 m = x < 0 ? fp::uint128{0} - static_cast<fp::uint128>(x) : static_cast<fp::uint128>(x);
    if ((m >> 64) == 0) {
      ASSERT_EQ(got, want) << "value " << std::to_string(static_cast<long double>(x));
      if (x >= std::numeric_limits<std::int64_t>::min() && x <= std::numeric_limits<std::int64_t>::max()) {
        ASSERT_EQ(got, static_cast<double>(static_cast<std::int64_t>(x)));
      }
    } else {
      ASSERT_NEAR(got, want, std::abs(want) * 0x1p-52) << "value " << std::to_string(static_cast<long double>(x));
    }
  }
  EXPECT_EQ(fp::to_double_approx(fp::int128{-5}), -5.0);
}

}  // namespace
