// Doubles as exact text: every finite value is C's "%a" hexadecimal form (ISO C99 7.19.6.1, as
// glibc's printf writes it) and reads back through strtod (ISO C99 7.20.1.3) to the same 64 bits;
// infinities and NaNs, bits included, read back too.
#include "fxmimo/io/exact_double.hpp"

#include <gtest/gtest.h>

#include <bit>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <limits>
#include <random>

namespace {

using fxmimo::io::exact_double_text;
using fxmimo::io::parse_exact_double;

std::uint64_t bits_of(double v) { return std::bit_cast<std::uint64_t>(v); }

std::string printf_a(double v) {
  char text[64];
  std::snprintf(text, sizeof text, "%a", v);
  return text;
}

TEST(exact_double, finite_values_are_the_c_hex_form_and_read_back_bit_for_bit) {
  std::vector<double> values = {0.0,
                                -0.0,
                                1.0,
                                -3.0,
                                0.1,
                                1e300,
                                -1e-300,
                                std::numeric_limits<double>::min(),
                                std::numeric_limits<double>::denorm_min(),
                                -std::numeric_limits<double>::denorm_min(),
                                std::numeric_limits<double>::max(),
                                std::nextafter(1.0, 2.0)};
  std::mt19937_64 random(20261203);
  for (int i = 0; i < 100000; ++i) {
    const double v = std::bit_cast<double>(random());
    if (std::isfinite(v)) values.push_back(v);
  }
  for (double v : values) {
    const std::string text = exact_double_text(v);
    EXPECT_EQ(text, printf_a(v)) << "glibc printf %a of the same value";
    const auto back = parse_exact_double(text);
    ASSERT_TRUE(back.has_value()) << text;
    EXPECT_EQ(bits_of(*back), bits_of(v)) << text;
    EXPECT_EQ(bits_of(std::strtod(text.c_str(), nullptr)), bits_of(v)) << "strtod reads the same text: " << text;
  }
}

TEST(exact_double, infinities_and_nans_keep_their_bits) {
  EXPECT_EQ(exact_double_text(HUGE_VAL), "inf");
  EXPECT_EQ(exact_double_text(-HUGE_VAL), "-inf");
  EXPECT_EQ(bits_of(*parse_exact_double("inf")), bits_of(HUGE_VAL));
  EXPECT_EQ(bits_of(*parse_exact_double("-inf")), bits_of(-HUGE_VAL));
  for (std::uint64_t bits : {0x7ff8000000000000ull, 0xfff8000000000000ull, 0x7ff0000000000001ull, 0x7ff4000000000abcull,
                             0xffffffffffffffffull}) {
    const double nan = std::bit_cast<double>(bits);
    const std::string text = exact_double_text(nan);
    EXPECT_EQ(text.substr(0, 4), "nan:");
    const auto back = parse_exact_double(text);
    ASSERT_TRUE(back.has_value()) << text;
    EXPECT_EQ(bits_of(*back), bits) << text;
  }
}

TEST(exact_double, anything_else_is_refused) {
  for (const char* text : {"",
                           "1.5",
                           "0x",
                           "0x.p1",
                           "x1p0",
                           "+0x1p+0",
                           "--0x1p+0",
                           "-+0x1p+0",
                           "0x-1p+0",
                           "0x1p+0 ",
                           " 0x1p+0",
                           "0xinf",
                           "0xnan",
                           "nan",
                           "-nan",
                           "Infinity",
                           "nan:7ff800000000000",
                           "nan:7ff8000000000000f",
                           "nan:0000000000000001",
                           "nan:7ff800000000000g"}) {
    EXPECT_FALSE(parse_exact_double(text).has_value()) << "'" << text << "'";
  }
}

}  // namespace
