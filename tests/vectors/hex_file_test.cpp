// Word files: exactly ceil(W/4) hex digits (or W binary digits) of the W-bit two's-complement
// pattern per line, the form $readmemh/$readmemb read (IEEE 1364-2005 §17.2.9) and %h writes
// (§17.1.1.3). The expected text is built here by an independent route (the pattern as an
// unsigned integer printed by fmt's {:0Nx} / {:0Nb}), never by the formatter under test.
#include "fxmimo/vectors/hex_file.hpp"

#include <fmt/core.h>
#include <gtest/gtest.h>

#include <limits>
#include <random>

#include "fxmimo/vectors/errors.hpp"
#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

fp::format signed_format(int w) { return fp::format{true, w, w - 1}; }

std::int64_t min_word(int w) {
  return w == 64 ? std::numeric_limits<std::int64_t>::min() : -(std::int64_t{1} << (w - 1));
}
std::int64_t max_word(int w) {
  return w == 64 ? std::numeric_limits<std::int64_t>::max() : (std::int64_t{1} << (w - 1)) - 1;
}

/// The W-bit pattern of a word as an unsigned number (two's complement modulo 2^W).
std::uint64_t pattern(std::int64_t word, int w) {
  const auto u = static_cast<std::uint64_t>(word);
  return w == 64 ? u : u & ((std::uint64_t{1} << w) - 1U);
}

/// Corner words of W bits: most negative, -1, 0, 1, most positive, and random full-range words.
std::vector<std::int64_t> corner_words(int w, std::mt19937_64& rng) {
  std::vector<std::int64_t> words{min_word(w), 0, max_word(w)};
  if (w >= 2)
    words.insert(words.end(), {-1, 1});
  else
    words.push_back(-1);
  for (int i = 0; i < 20; ++i) {
    std::int64_t r = static_cast<std::int64_t>(rng());
    if (w < 64)
      r = static_cast<std::int64_t>(static_cast<std::uint64_t>(r) << (64 - w)) >> (64 - w);  // sign-extend W bits
    words.push_back(r);
  }
  return words;
}

TEST(HexFile, EveryWidthOneToSixtyFour) {
  const std::uint64_t seed = 7001;
  std::mt19937_64 rng(seed);
  for (int w = 1; w <= 64; ++w) {
    const fp::format fmt = signed_format(w);
    const std::vector<std::int64_t> words = corner_words(w, rng);
    const std::string text = format_word_lines(words, fmt, word_radix::hex);
    std::string expected;
    const int digits = (w + 3) / 4;
    for (std::int64_t word : words) expected += fmt::format("{:0{}x}\n", pattern(word, w), digits);
    ASSERT_EQ(text, expected) << "W=" << w << " seed " << seed;
    EXPECT_EQ(parse_word_lines(text, fmt, word_radix::hex, words.size(), "mem"), words) << "W=" << w;

    const std::string bin = format_word_lines(words, fmt, word_radix::bin);
    std::string expected_bin;
    for (std::int64_t word : words) expected_bin += fmt::format("{:0{}b}\n", pattern(word, w), w);
    ASSERT_EQ(bin, expected_bin) << "W=" << w << " seed " << seed;
    EXPECT_EQ(parse_word_lines(bin, fmt, word_radix::bin, words.size(), "mem"), words) << "W=" << w;
  }
}

TEST(HexFile, KnownPatterns) {
  // Hand-worked: -1 in 16 bits is ffff (§17.1.1.3 example of %h), the most negative 14-bit word
  // 10 0000 0000 0000 is 2000, -1 in 14 bits is 3fff (top digit holds 2 bits), -2^63 in 64 bits.
  EXPECT_EQ(format_word_lines(std::vector<std::int64_t>{-1}, signed_format(16), word_radix::hex), "ffff\n");
  EXPECT_EQ(format_word_lines(std::vector<std::int64_t>{-8192, -1, 5}, signed_format(14), word_radix::hex),
            "2000\n3fff\n0005\n");
  EXPECT_EQ(format_word_lines(std::vector<std::int64_t>{std::numeric_limits<std::int64_t>::min()}, signed_format(64),
                              word_radix::hex),
            "8000000000000000\n");
  EXPECT_EQ(format_word_lines(std::vector<std::int64_t>{-1, 0}, signed_format(1), word_radix::hex), "1\n0\n");
  EXPECT_EQ(format_word_lines(std::vector<std::int64_t>{-3}, signed_format(3), word_radix::bin), "101\n");
  // Unsigned 12-bit: 4095 is fff.
  EXPECT_EQ(format_word_lines(std::vector<std::int64_t>{4095}, fp::format{false, 12, 4}, word_radix::hex), "fff\n");
}

TEST(HexFile, ReaderToleratesOnlyHarmlessVariants) {
  const fp::format fmt = signed_format(16);
  // Upper case (Verilog %H), CRLF line ends, no final newline, trailing blanks.
  EXPECT_EQ(parse_word_lines("FFFF\r\n8000 \n0001", fmt, word_radix::hex, 3, "d"),
            (std::vector<std::int64_t>{-1, -32768, 1}));
}

struct bad_dump {
  const char* name;
  std::string text;
  std::size_t expected_count;
  int bad_line;
  const char* says;  ///< a phrase the message must contain
};

class HexFileErrors : public ::testing::TestWithParam<bad_dump> {};

TEST_P(HexFileErrors, NameFileAndLine) {
  const bad_dump& c = GetParam();
  const fp::format fmt = signed_format(14);  // 4 digits, top digit <= 3
  try {
    (void)parse_word_lines(c.text, fmt, word_radix::hex, c.expected_count, "sim/dac_re.hex");
    FAIL() << c.name << ": no error";
  } catch (const vector_error& e) {
    const std::string msg = e.what();
    EXPECT_NE(msg.find(fmt::format("sim/dac_re.hex:{}:", c.bad_line)), std::string::npos) << c.name << ": " << msg;
    EXPECT_NE(msg.find(c.says), std::string::npos) << c.name << ": " << msg;
  }
}

INSTANTIATE_TEST_SUITE_P(Dumps, HexFileErrors,
                         ::testing::Values(bad_dump{"x_digit", "0001\n00x1\n0003\n", 3, 2, "x/z"},
                                           bad_dump{"z_digit", "0001\n0002\nzzzz\n", 3, 3, "x/z"},
                                           bad_dump{"upper_x", "XXXX\n", 1, 1, "x/z"},
                                           bad_dump{"short_word", "0001\n002\n0003\n", 3, 2, "3 digits"},
                                           bad_dump{"long_word", "00001\n", 1, 1, "5 digits"},
                                           bad_dump{"prefix", "0x01\n", 1, 1, "prefix"},
                                           bad_dump{"comment", "0001 // first\n", 1, 1, "not a hex digit"},
                                           bad_dump{"address", "@0\n0001\n", 1, 1, "not a hex digit"},
                                           bad_dump{"above_w", "0001\n4000\n", 2, 2, "bits above bit 13"},
                                           bad_dump{"empty_line", "0001\n\n0002\n", 2, 2, "empty line"},
                                           bad_dump{"too_many", "0001\n0002\n0003\n", 2, 3, "more lines"},
                                           bad_dump{"too_few", "0001\n0002\n", 3, 3, "ends after 2 words"}),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

TEST(HexFile, MissingFileIsAnError) {
  EXPECT_THROW(read_word_file("/nonexistent/fxmimo/dump.hex", signed_format(8), word_radix::hex, 1), vector_error);
}

}  // namespace
}  // namespace fxmimo::vectors
