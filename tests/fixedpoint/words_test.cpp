// Words as hardware prints them: Verilog %h of a sized value is the zero-padded
// two's-complement pattern, ceil(W/4) digits (IEEE 1364-2005 §17.1.1.3); $readmemh reads the
// same digits back (§17.2.9).
#include "fxmimo/fixedpoint/words.hpp"

#include <gtest/gtest.h>

namespace fp = fxmimo::fixedpoint;
using fp::big_int;

namespace {

TEST(words, hex_is_the_padded_twos_complement_pattern) {
  EXPECT_EQ(fp::to_hex_word(-1, 16), "ffff");
  EXPECT_EQ(fp::to_hex_word(-1, 13), "1fff");  // 13 bits: 4 digits, top digit holds 1 bit
  EXPECT_EQ(fp::to_hex_word(-4096, 13), "1000");
  EXPECT_EQ(fp::to_hex_word(5, 3), "5");
  EXPECT_EQ(fp::to_hex_word(std::numeric_limits<std::int64_t>::min(), 64), "8000000000000000");
  EXPECT_EQ(fp::to_hex_word(big_int(-1), fp::format{true, 80, 0}), std::string(20, 'f'));
  EXPECT_EQ(fp::to_bin_word(big_int(-2), fp::format{true, 5, 0}), "11110");
}

TEST(words, every_word_round_trips_for_small_widths) {
  // Exhaustive for W = 2..12, signed and unsigned: word -> hex -> word and word -> binary -> word.
  for (int w = 2; w <= 12; ++w) {
    for (bool is_signed : {true, false}) {
      const fp::format f{is_signed, w, 0};
      const std::int64_t lo = is_signed ? -(std::int64_t{1} << (w - 1)) : 0;
      const std::int64_t hi = is_signed ? (std::int64_t{1} << (w - 1)) - 1 : (std::int64_t{1} << w) - 1;
      for (std::int64_t raw = lo; raw <= hi; ++raw) {
        const std::string hex = fp::to_hex_word(raw, w);
        ASSERT_EQ(hex.size(), static_cast<std::size_t>((w + 3) / 4));
        ASSERT_EQ(hex, fp::to_hex_word(big_int(raw), f));
        ASSERT_EQ(fp::parse_word(hex, 16, f), big_int(raw)) << w << " " << raw;
        ASSERT_EQ(fp::parse_word(fp::to_bin_word(big_int(raw), f), 2, f), big_int(raw)) << w << " " << raw;
      }
    }
  }
}

TEST(words, patterns_wider_than_the_word_or_not_digits_are_refused) {
  const fp::format f{true, 13, 0};
  EXPECT_FALSE(fp::parse_word("2000", 16, f));  // bit 13 set
  EXPECT_FALSE(fp::parse_word("1x00", 16, f));
  EXPECT_FALSE(fp::parse_word("", 16, f));
  EXPECT_FALSE(fp::parse_word("102", 2, f));
  EXPECT_EQ(fp::parse_word("1FFF", 16, f), big_int(-1));
}

}  // namespace
