// Set diff on planted changes: counts, max LSB difference and SQNR are recomputed here from
// their definitions (SQNR = 10 log10(sum a^2 / sum (b - a)^2), values = word 2^-F).
#include "fxmimo/vectors/set_diff.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <nlohmann/json.hpp>
#include <random>

#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

using testing::scratch_dir;

constexpr std::uint64_t seed = 7401;

std::vector<node_words> base_records() {
  std::mt19937_64 rng(seed);
  auto rec = [&](std::string node, fp::format fmt, std::size_t n, bool cplx) {
    node_words r;
    r.node = std::move(node);
    r.direction = "out";
    r.spec = {fmt, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
    r.dim_names = {"antenna", "symbol"};
    r.dim_sizes = {n / 4, 4};
    r.is_complex = cplx;
    const int w = fmt.word_bits;
    for (std::size_t i = 0; i < n; ++i) {
      r.re.push_back(static_cast<std::int64_t>(rng() << (64 - w)) >> (64 - w));
      if (cplx) r.im.push_back(static_cast<std::int64_t>(rng() << (64 - w)) >> (64 - w));
    }
    return r;
  };
  return {rec("tx_acc", {true, 20, 14}, 16, true), rec("dac", {true, 12, 9}, 16, true),
          rec("norm", {true, 16, 12}, 4, false)};
}

manifest_info info() {
  manifest_info i;
  i.scenario_text = "scenario of our own\n";
  i.seed = 5;
  return i;
}

TEST(SetDiff, IdenticalSetsPass) {
  const auto dir = scratch_dir();
  write_vector_set(dir / "a", info(), base_records());
  write_vector_set(dir / "b", info(), base_records(), file_form::npy);  // another form, same words
  const auto rep = diff_vector_sets(read_vector_set(dir / "a"), read_vector_set(dir / "b"));
  EXPECT_EQ(rep.unallowed_changes(), 0U);
  for (const auto& r : rep.records) {
    EXPECT_EQ(r.status, diff_status::identical) << r.label;
    EXPECT_TRUE(std::isinf(r.sqnr_db) && r.sqnr_db > 0) << r.label;
  }
}

TEST(SetDiff, PlantedChangesAreCountedAndMeasured) {
  const auto dir = scratch_dir();
  auto a = base_records();
  auto b = a;
  // dac: 3 words changed by +1, -2, +4 LSB.
  b[1].re[0] += b[1].re[0] < 2047 - 1 ? 1 : -1;
  b[1].im[3] += b[1].im[3] > -2048 + 2 ? -2 : 2;
  b[1].re[9] += b[1].re[9] < 2047 - 4 ? 4 : -4;
  write_vector_set(dir / "a", info(), a);
  write_vector_set(dir / "b", info(), b);
  const auto rep = diff_vector_sets(read_vector_set(dir / "a"), read_vector_set(dir / "b"));
  ASSERT_EQ(rep.records.size(), 3U);
  EXPECT_EQ(rep.records[0].status, diff_status::identical);
  const record_diff& d = rep.records[1];
  EXPECT_EQ(d.label, "dac/out");
  EXPECT_EQ(d.status, diff_status::changed);
  EXPECT_EQ(d.words, 32U);
  EXPECT_EQ(d.changed_words, 3U);
  EXPECT_DOUBLE_EQ(d.max_diff_lsb, 4.0);
  // SQNR from its definition, in long double.
  long double signal = 0, noise = 0;
  for (std::size_t i = 0; i < 16; ++i) {
    for (auto [pa, pb] : {std::pair{&a[1].re, &b[1].re}, std::pair{&a[1].im, &b[1].im}}) {
      const long double va = std::ldexp(static_cast<long double>((*pa)[i]), -9);
      const long double vb = std::ldexp(static_cast<long double>((*pb)[i]), -9);
      signal += va * va;
      noise += (vb - va) * (vb - va);
    }
  }
  EXPECT_NEAR(d.sqnr_db, static_cast<double>(10.0L * std::log10(signal / noise)), 1e-9);
  EXPECT_EQ(rep.unallowed_changes(), 1U);
  // Allowed: reported, not failed.
  const auto allowed = diff_vector_sets(read_vector_set(dir / "a"), read_vector_set(dir / "b"), {"dac"});
  EXPECT_EQ(allowed.unallowed_changes(), 0U);
  EXPECT_TRUE(allowed.records[1].allowed);
  EXPECT_NE(format_diff(allowed).find("changed (allowed)"), std::string::npos);
}

TEST(SetDiff, FormatChangeComparesValues) {
  // B stores norm with two more fraction bits and the same values: the format is the change,
  // zero words differ in value. Then one value moves by a quarter LSB of A.
  const auto dir = scratch_dir();
  auto a = base_records();
  auto b = a;
  b[2].spec.fmt = {true, 18, 14};
  for (auto& w : b[2].re) w *= 4;
  write_vector_set(dir / "a", info(), a);
  write_vector_set(dir / "b", info(), b);
  auto rep = diff_vector_sets(read_vector_set(dir / "a"), read_vector_set(dir / "b"));
  EXPECT_EQ(rep.records[2].status, diff_status::changed);
  EXPECT_EQ(rep.records[2].changed_words, 0U);
  ASSERT_FALSE(rep.records[2].what.empty());
  EXPECT_NE(rep.records[2].what[0].find("format"), std::string::npos);
  b[2].re[1] += 1;
  write_vector_set(dir / "b", info(), b);
  rep = diff_vector_sets(read_vector_set(dir / "a"), read_vector_set(dir / "b"));
  EXPECT_EQ(rep.records[2].changed_words, 1U);
  EXPECT_DOUBLE_EQ(rep.records[2].max_diff_lsb, 0.25);
}

TEST(SetDiff, AddedRemovedAndNotes) {
  const auto dir = scratch_dir();
  auto a = base_records();
  auto b = std::vector<node_words>(a.begin(), a.begin() + 2);
  node_words extra = a[2];
  extra.node = "gram";
  b.push_back(extra);
  manifest_info ib = info();
  ib.seed = 6;
  ib.scenario_text = "another scenario\n";
  write_vector_set(dir / "a", info(), a);
  write_vector_set(dir / "b", ib, b);
  const auto rep = diff_vector_sets(read_vector_set(dir / "a"), read_vector_set(dir / "b"));
  ASSERT_EQ(rep.records.size(), 4U);
  EXPECT_EQ(rep.records[2].status, diff_status::only_in_a);
  EXPECT_EQ(rep.records[3].status, diff_status::only_in_b);
  EXPECT_EQ(rep.records[3].label, "gram/out");
  EXPECT_EQ(rep.unallowed_changes(), 2U);
  EXPECT_EQ(rep.notes.size(), 2U);  // scenario and seed differ
  const auto j = to_json(rep);
  EXPECT_EQ(j["records"][2]["status"], "removed");
  EXPECT_TRUE(j["records"][2]["sqnr_db"].is_null());
}

}  // namespace
}  // namespace fxmimo::vectors
