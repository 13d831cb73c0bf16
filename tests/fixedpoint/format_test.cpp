// Formats and Q notation. Convention (common practice, the "sign excluded" form):
// signed Qm.n has 1 + m + n bits, unsigned UQm.n has m + n bits; a signed W-bit word with F
// fraction bits spans [-2^(W-1-F), 2^(W-1-F) - 2^-F].
#include "fxmimo/fixedpoint/format.hpp"

#include <gtest/gtest.h>

namespace fp = fxmimo::fixedpoint;

namespace {

struct q_case {
  const char* text;
  bool is_signed;
  int word_bits;
  int frac_bits;
  const char* printed;
};

class parse_q : public ::testing::TestWithParam<q_case> {};

TEST_P(parse_q, parses_and_prints) {
  const q_case c = GetParam();
  const fp::format f = fp::parse_format(c.text);
  EXPECT_EQ(f.is_signed, c.is_signed) << c.text;
  EXPECT_EQ(f.word_bits, c.word_bits) << c.text;
  EXPECT_EQ(f.frac_bits, c.frac_bits) << c.text;
  EXPECT_EQ(fp::to_q_string(f), c.printed) << c.text;
  EXPECT_EQ(fp::parse_format(fp::to_q_string(f)), f) << "round trip of " << c.text;
}

INSTANTIATE_TEST_SUITE_P(
    trade_notation, parse_q,
    ::testing::Values(q_case{"Q15", true, 16, 15, "Q0.15"},  // Q15 = 16-bit signed fraction (common practice)
                      q_case{"Q0.15", true, 16, 15, "Q0.15"}, q_case{"Q1.14", true, 16, 14, "Q1.14"},
                      q_case{"q3.12", true, 16, 12, "Q3.12"}, q_case{"UQ1.15", false, 16, 15, "UQ1.15"},
                      q_case{"UQ16", false, 16, 16, "UQ0.16"},
                      q_case{"Q-2.17", true, 16, 17, "Q-2.17"},  // F > W: values below 2^-3
                      q_case{"Q20.-4", true, 17, -4, "Q20.-4"},  // negative F: LSB = 16
                      q_case{"16,15", true, 16, 15, "Q0.15"}, q_case{"u12,4", false, 12, 4, "UQ8.4"},
                      q_case{"128,64", true, 128, 64, "Q63.64"}, q_case{"Q127.0", true, 128, 0, "Q127.0"}));

TEST(format, range_and_lsb_follow_the_q_convention) {
  const fp::format q15 = fp::parse_format("Q0.15");
  EXPECT_EQ(q15.min_value(), -1.0);
  EXPECT_EQ(q15.max_value(), 1.0 - 1.0 / 32768.0);
  EXPECT_EQ(q15.lsb(), 1.0 / 32768.0);
  const fp::format uq = fp::parse_format("UQ2.6");
  EXPECT_EQ(uq.min_value(), 0.0);
  EXPECT_EQ(uq.max_value(), 4.0 - 1.0 / 64.0);
  const fp::format neg = fp::parse_format("Q20.-4");
  EXPECT_EQ(neg.lsb(), 16.0);
  EXPECT_EQ(neg.max_value(), 1048576.0 - 16.0);
}

TEST(format, bad_texts_name_the_text) {
  for (const char* bad :
       {"", "Q", "Qx.3", "Q1.2.3", "R1.15", "Q200.0", "129,0", "0,0", "u0,0", "Q1.", "16;15", "Q0.0", "1,0"}) {
    try {
      (void)fp::parse_format(bad);
      ADD_FAILURE() << "accepted '" << bad << "'";
    } catch (const fp::format_error& e) {
      EXPECT_NE(std::string(e.what()).find(std::string("'") + bad + "'"), std::string::npos) << e.what();
    }
  }
}

}  // namespace
