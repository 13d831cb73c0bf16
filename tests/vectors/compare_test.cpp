// Dump comparison on planted mismatches: the report must name exactly the planted indices,
// their coordinates, the differences in LSB and the per-dimension histograms; it must localise
// a lane fault and a timing slip. The planted faults are the ground truth.
#include "fxmimo/vectors/compare.hpp"

#include <fmt/core.h>
#include <gtest/gtest.h>

#include <nlohmann/json.hpp>
#include <random>

#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/hex_file.hpp"
#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

using testing::scratch_dir;
using testing::spit;

constexpr std::uint64_t seed = 7301;

/// tx_acc-like record: antenna x symbol = 4 x 6, complex, 18-bit words, random full range.
node_words expected_record() {
  std::mt19937_64 rng(seed);
  node_words r;
  r.node = "tx_acc";
  r.direction = "out";
  r.spec = {{true, 18, 12}, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  r.dim_names = {"antenna", "symbol"};
  r.dim_sizes = {4, 6};
  r.is_complex = true;
  for (std::size_t i = 0; i < 24; ++i) {
    r.re.push_back(static_cast<std::int64_t>(rng() << 46) >> 46);
    r.im.push_back(static_cast<std::int64_t>(rng() << 46) >> 46);
  }
  r.re[5] = -(std::int64_t{1} << 17);  // most negative word
  return r;
}

TEST(Compare, IdenticalPasses) {
  const node_words e = expected_record();
  const compare_report rep = compare_words(e, e, {});
  EXPECT_TRUE(rep.passed());
  EXPECT_EQ(rep.words_compared, 48U);
  EXPECT_EQ(rep.words_differing, 0U);
  EXPECT_TRUE(rep.first.empty());
  EXPECT_NE(format_report(rep).find("PASS"), std::string::npos);
}

TEST(Compare, PlantedMismatchesAreReportedExactly) {
  const node_words e = expected_record();
  node_words g = e;
  // Planted: (antenna 1, symbol 2) re +1; (antenna 3, symbol 5) im -3; (antenna 0, symbol 5)
  // re: the most negative word wrapped to the most positive (a wrap-vs-saturate bug),
  // difference 2^18 - 1 LSB.
  g.re[1 * 6 + 2] += 1;
  g.im[3 * 6 + 5] -= 3;
  g.re[5] = (std::int64_t{1} << 17) - 1;
  const compare_report rep = compare_words(e, g, {0, 10});
  EXPECT_FALSE(rep.passed());
  EXPECT_EQ(rep.words_differing, 3U);
  EXPECT_EQ(rep.words_beyond_tolerance, 3U);
  EXPECT_EQ(rep.max_abs_diff_lsb, (std::uint64_t{1} << 18) - 1);
  ASSERT_EQ(rep.first.size(), 3U);
  // Flat order: index 5 (re), 8 (re), 23 (im).
  EXPECT_EQ(rep.first[0].flat_index, 5U);
  EXPECT_EQ(rep.first[0].coords, (std::vector<std::size_t>{0, 5}));
  EXPECT_EQ(rep.first[0].part, "re");
  EXPECT_EQ(rep.first[0].diff_lsb, fp::int128((std::int64_t{1} << 18) - 1));
  EXPECT_EQ(rep.first[1].flat_index, 8U);
  EXPECT_EQ(rep.first[1].coords, (std::vector<std::size_t>{1, 2}));
  EXPECT_EQ(rep.first[1].diff_lsb, 1);
  EXPECT_EQ(rep.first[1].expected, e.re[8]);
  EXPECT_EQ(rep.first[1].got, e.re[8] + 1);
  EXPECT_EQ(rep.first[2].flat_index, 23U);
  EXPECT_EQ(rep.first[2].coords, (std::vector<std::size_t>{3, 5}));
  EXPECT_EQ(rep.first[2].part, "im");
  EXPECT_EQ(rep.first[2].diff_lsb, -3);
  // Histograms: antenna {1, 1, 0, 1}, symbol {0, 0, 1, 0, 0, 2}, part {2, 1}.
  ASSERT_EQ(rep.histograms.size(), 3U);
  EXPECT_EQ(rep.histograms[0].dim_name, "antenna");
  EXPECT_EQ(rep.histograms[0].counts, (std::vector<std::uint64_t>{1, 1, 0, 1}));
  EXPECT_EQ(rep.histograms[1].counts, (std::vector<std::uint64_t>{0, 0, 1, 0, 0, 2}));
  EXPECT_EQ(rep.histograms[2].dim_name, "part");
  EXPECT_EQ(rep.histograms[2].counts, (std::vector<std::uint64_t>{2, 1}));
  // The text report names node, first coordinates, both words as 18'h... literals.
  const std::string text = format_report(rep);
  EXPECT_NE(text.find("tx_acc/out: MISMATCH, 3 of 48"), std::string::npos) << text;
  EXPECT_NE(text.find("first mismatch: flat index 5 (antenna=0, symbol=5), part re"), std::string::npos) << text;
  EXPECT_NE(text.find("18'h20000"), std::string::npos) << text;  // expected: most negative
  EXPECT_NE(text.find("18'h1ffff"), std::string::npos) << text;  // got: most positive
  EXPECT_NE(text.find("262143"), std::string::npos) << text;     // 2^18 - 1 LSB
  // JSON carries the same facts.
  const nlohmann::json j = to_json(rep);
  EXPECT_EQ(j["mismatches"][1]["coords"]["antenna"], 1);
  EXPECT_EQ(j["mismatches"][1]["coords"]["symbol"], 2);
  EXPECT_EQ(j["histograms"]["symbol"][5], 2);
}

TEST(Compare, ToleranceAndMaxReport) {
  const node_words e = expected_record();
  node_words g = e;
  g.re[0] += 1;
  g.re[1] -= 1;
  g.im[2] += 2;
  const compare_report within = compare_words(e, g, {1, 10});
  EXPECT_FALSE(within.passed());  // the 2-LSB word fails a 1-LSB tolerance
  EXPECT_EQ(within.words_differing, 3U);
  EXPECT_EQ(within.words_beyond_tolerance, 1U);
  EXPECT_EQ(within.first.front().flat_index, 2U);
  EXPECT_TRUE(compare_words(e, g, {2, 10}).passed());
  const compare_report capped = compare_words(e, g, {0, 2});
  EXPECT_EQ(capped.first.size(), 2U);
  EXPECT_EQ(capped.words_beyond_tolerance, 3U);
}

TEST(Compare, LaneFaultIsNamed) {
  const node_words e = expected_record();
  node_words g = e;
  for (std::size_t i_sym = 0; i_sym < 6; ++i_sym) g.im[2 * 6 + i_sym] ^= 0x10;  // antenna 2, imaginary, bit 4 stuck
  const compare_report rep = compare_words(e, g, {});
  EXPECT_EQ(rep.histograms[0].counts, (std::vector<std::uint64_t>{0, 0, 6, 0}));
  const std::string text = format_report(rep);
  EXPECT_NE(text.find("every failing word has antenna=2"), std::string::npos) << text;
  EXPECT_NE(text.find("only the imaginary parts fail"), std::string::npos) << text;
}

TEST(Compare, TimingSlipIsNamed) {
  // The RTL output stream arrives one word late: got[i] = expected[i-1].
  node_words e = expected_record();
  node_words g = e;
  for (std::size_t i = 1; i < 24; ++i) {
    g.re[i] = e.re[i - 1];
    g.im[i] = e.im[i - 1];
  }
  const compare_report rep = compare_words(e, g, {});
  const std::string text = format_report(rep);
  EXPECT_NE(text.find("expected[i-1]"), std::string::npos) << text;
  EXPECT_NE(text.find("late by 1 word"), std::string::npos) << text;
}

class CompareDump : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = scratch_dir();
    expected_ = expected_record();
    write_vector_set(dir_ / "set", {}, {expected_});
    set_ = read_vector_set(dir_ / "set");
  }
  std::filesystem::path dir_;
  node_words expected_;
  vector_set set_;
};

TEST_F(CompareDump, ReadsDumpsAndNamesFiles) {
  node_words g = expected_;
  g.im[7] += 5;
  spit(dir_ / "re.hex", format_word_lines(g.re, g.spec.fmt, word_radix::hex));
  spit(dir_ / "im.hex", format_word_lines(g.im, g.spec.fmt, word_radix::hex));
  const compare_report rep = compare_dump(set_, "tx_acc", {dir_ / "re.hex", dir_ / "im.hex"}, {});
  EXPECT_EQ(rep.words_beyond_tolerance, 1U);
  EXPECT_EQ(rep.first.front().coords, (std::vector<std::size_t>{1, 1}));
  EXPECT_EQ(rep.first.front().diff_lsb, 5);
  EXPECT_EQ(rep.dump_files.size(), 2U);
  EXPECT_NE(rep.expected_files.front().find("tx_acc.out.re.hex"), std::string::npos);
}

TEST_F(CompareDump, MalformedDumpIsOneClearError) {
  std::string re = format_word_lines(expected_.re, expected_.spec.fmt, word_radix::hex);
  re.replace(5 * 6 + 2, 1, "x");  // line 6: an x digit (each line is 5 digits + '\n')
  spit(dir_ / "re.hex", re);
  spit(dir_ / "im.hex", format_word_lines(expected_.im, expected_.spec.fmt, word_radix::hex));
  try {
    (void)compare_dump(set_, "tx_acc", {dir_ / "re.hex", dir_ / "im.hex"}, {});
    FAIL() << "x digit not reported";
  } catch (const vector_error& e) {
    EXPECT_NE(std::string(e.what()).find("re.hex:6:"), std::string::npos) << e.what();
  }
  // A complex split node needs two dumps; an unknown node is named.
  EXPECT_THROW((void)compare_dump(set_, "tx_acc", {dir_ / "im.hex"}, {}), vector_error);
  try {
    (void)compare_dump(set_, "gram", {dir_ / "im.hex"}, {});
    FAIL();
  } catch (const vector_error& e) {
    EXPECT_NE(std::string(e.what()).find("'gram'"), std::string::npos) << e.what();
  }
}

TEST(Compare, DecimalOf128BitValues) {
  EXPECT_EQ(to_decimal(0), "0");
  EXPECT_EQ(to_decimal(-1), "-1");
  EXPECT_EQ(to_decimal(fp::int128(std::numeric_limits<std::int64_t>::max()) * 2 + 1), "18446744073709551615");
  EXPECT_EQ(to_decimal(-(fp::int128(1) << 64)), "-18446744073709551616");
}

}  // namespace
}  // namespace fxmimo::vectors
