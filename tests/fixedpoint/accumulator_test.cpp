// The accumulator's order of requantisation (acc <- Q(acc + Q(term)), index order) against an
// unbounded cpp_int evaluation of the same recurrence, and the sequential-saturation property
// that distinguishes it from saturating the exact sum once. The bit-exact check against
// SystemC sc_fix MAC semantics is in systemc/requantize_vs_systemc.cpp.
#include "fxmimo/fixedpoint/accumulator.hpp"

#include <gtest/gtest.h>

#include <random>

namespace fp = fxmimo::fixedpoint;

namespace {

TEST(accumulator, saturation_happens_in_index_order) {
  // Q3.0 (4 bits, [-8, 7]): 6 + 6 saturates to 7, then -6 gives 1; the exact sum 6 would fit.
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, 4, 0}, fp::rounding_mode::floor, fp::overflow_mode::saturate});
  fp::accumulator<std::int64_t> acc(q);
  fp::counters c;
  for (std::int64_t term : {6, 6, -6}) acc.add(term, 0, c);
  EXPECT_EQ(acc.value(), 1);
  EXPECT_EQ(c.overflowed, 1U);
  // With wrap the sequence is modular: 6 + 6 = 12 -> -4, then -10 -> 6 (mod 16): equals the exact sum.
  const fp::requantizer<std::int64_t> w(fp::target{{true, 4, 0}, fp::rounding_mode::floor, fp::overflow_mode::wrap});
  fp::accumulator<std::int64_t> wrapped(w);
  for (std::int64_t term : {6, 6, -6}) wrapped.add(term, 0, c);
  EXPECT_EQ(wrapped.value(), 6);
}

TEST(accumulator, narrow_product_terms_are_requantised_before_the_add) {
  // Terms 13/16, 7/16, -3/16 (4 fraction bits) into a Q3.4 accumulator. Worked by hand:
  // without a term format the sum is exact, 17/16 (word 17). With term_format Q3.2 and floor
  // (a truncated DSP output port): floor(3.25) = 3, floor(1.75) = 1, floor(-0.75) = -1 quarters,
  // so 3/4 (word 12); with half_even: 3, 2, -1 quarters, so 1 (word 16).
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, 8, 4}, fp::rounding_mode::half_even, fp::overflow_mode::saturate});
  const auto sum = [&](fp::accumulation how, fp::counters& c) {
    fp::accumulator<std::int64_t> acc(q, how);
    for (std::int64_t term : {13, 7, -3}) acc.add(term, 4, c);
    return acc.result(c);
  };
  fp::counters plain, floor_c, even_c;
  EXPECT_EQ(sum({}, plain), 17);
  fp::accumulation narrow;
  narrow.term_format = fp::format{true, 6, 2};  // Q3.2
  EXPECT_EQ(sum(narrow, floor_c), 12);
  narrow.term_rounding = fp::rounding_mode::half_even;
  EXPECT_EQ(sum(narrow, even_c), 16);
  // One requantisation point more per term; the term format made all three inexact.
  EXPECT_EQ(plain.requantized, 6U);
  EXPECT_EQ(floor_c.requantized, 9U);
  EXPECT_EQ(floor_c.inexact, 3U);
  // The term format's overflow is the accumulator's: 13/16 into Q0.2 ([-1, 3/4]) saturates to 3/4.
  fp::accumulation tiny;
  tiny.term_format = fp::format{true, 3, 2};
  fp::counters tiny_c;
  fp::accumulator<std::int64_t> acc(q, tiny);
  acc.add(60, 4, tiny_c);  // 3.75 -> 3/4
  EXPECT_EQ(acc.result(tiny_c), 12);
  EXPECT_EQ(tiny_c.overflowed, 1U);
  // Pairwise and lanes take the narrowed terms too.
  narrow.term_rounding = fp::rounding_mode::floor;
  narrow.order = fp::accumulation_order::pairwise;
  fp::counters pair_c;
  EXPECT_EQ(sum(narrow, pair_c), 12);
}

TEST(accumulator, int64_complex_mac_matches_unbounded_recurrence) {
  std::mt19937_64 rng(4242);
  std::uniform_int_distribution<std::int64_t> word(-32768, 32767);
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::target tgt{{true, 24, 20}, rnd, ovf};  // narrow enough to saturate sometimes
      const fp::requantizer<std::int64_t> q(tgt);
      const fp::requantizer<fp::big_int> qb(tgt);
      fp::complex_accumulator<std::int64_t> acc(q);
      fp::counters c, cb;
      fp::big_int ref_re = 0, ref_im = 0;
      for (int k = 0; k < 400; ++k) {
        const fp::cword<std::int64_t> a{word(rng), word(rng)}, b{word(rng), word(rng)};
        acc.add(fp::cmul<std::int64_t>(a, b), 28, c);  // Q0.15 * Q1.13 products at 28 frac bits
        const fp::big_int pr = fp::big_int(a.re) * b.re - fp::big_int(a.im) * b.im;
        const fp::big_int pi = fp::big_int(a.re) * b.im + fp::big_int(a.im) * b.re;
        ref_re = qb.overflow(fp::big_int(ref_re + qb(pr, 28, cb)), cb);
        ref_im = qb.overflow(fp::big_int(ref_im + qb(pi, 28, cb)), cb);
        ASSERT_EQ(fp::big_int(acc.value().re), ref_re) << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " k=" << k;
        ASSERT_EQ(fp::big_int(acc.value().im), ref_im) << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " k=" << k;
      }
      EXPECT_EQ(c.overflowed, cb.overflowed);
      EXPECT_EQ(c.inexact, cb.inexact);
    }
  }
}

TEST(complex, most_negative_word_squared_needs_the_wide_type) {
  // (-2^15 - j 2^15) * (-2^15 - j 2^15) = 0 + j 2^31: the imaginary part needs 33 bits signed.
  const fp::cword<std::int64_t> a{-32768, -32768};
  const auto p = fp::cmul<std::int64_t>(a, a);
  EXPECT_EQ(p.re, 0);
  EXPECT_EQ(p.im, std::int64_t{1} << 31);
  const auto pc = fp::cmul_conj<std::int64_t>(a, a);  // |a|^2 = 2^31
  EXPECT_EQ(pc.re, std::int64_t{1} << 31);
  EXPECT_EQ(pc.im, 0);
}

}  // namespace

namespace {

// The three accumulation orders (accumulator.hpp; README "How it computes", "Accumulation
// orders") on hand-computed cases where the order of saturation changes the result. Q3.0
// (4 bits, [-8, 7]), saturate, integer terms so that only the overflow stages act. Worked by
// hand (the exact sum is 3 in the second case, 0 in the first):
//   terms 7, 7, -7, -7:
//     sequential: 7, sat(14) = 7, 0, -7                       -> -7
//     pairwise:   [sat(14) = 7, sat(-14) = -8] -> 7 - 8       -> -1
//     lanes 2:    lane0 = 7 - 7 = 0, lane1 = 7 - 7 = 0 -> 0   -> 0
//   terms 7, 7, -7, -7, 3 (odd count: the last term is passed up):
//     sequential: -7 + 3                                      -> -4
//     pairwise:   [7, -8, 3] -> [sat(-1) = -1, 3] -> 2        -> 2
//     lanes 2:    lane0 = 7 - 7 + 3 = 3, lane1 = 0 -> 3       -> 3
//     lanes 3:    lane0 = 7 - 7 = 0, lane1 = sat(7 + 3) = 7, lane2 = -7 -> [7, -7] -> 0 -> 0
struct order_case {
  const char* name;
  std::vector<std::int64_t> terms;
  fp::accumulation how;
  std::int64_t expected;
  std::uint64_t overflows;
};

std::ostream& operator<<(std::ostream& os, const order_case& c) { return os << c.name; }

class accumulation_orders : public testing::TestWithParam<order_case> {};

TEST_P(accumulation_orders, hand_computed_saturation_order) {
  const order_case& c = GetParam();
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, 4, 0}, fp::rounding_mode::floor, fp::overflow_mode::saturate});
  fp::accumulator<std::int64_t> acc(q, c.how);
  fp::counters counters;
  for (std::int64_t t : c.terms) acc.add(t, 0, counters);
  EXPECT_EQ(acc.result(counters), c.expected);
  EXPECT_EQ(counters.overflowed, c.overflows);
  // reset() starts a new sum: the same terms give the same result.
  acc.reset();
  fp::counters again;
  for (std::int64_t t : c.terms) acc.add(t, 0, again);
  EXPECT_EQ(acc.result(again), c.expected);
}

using fp::accumulation_order;
INSTANTIATE_TEST_SUITE_P(
    cases, accumulation_orders,
    testing::Values(order_case{"sequential4", {7, 7, -7, -7}, {accumulation_order::sequential, 1}, -7, 1},
                    order_case{"pairwise4", {7, 7, -7, -7}, {accumulation_order::pairwise, 1}, -1, 2},
                    order_case{"lanes2_4", {7, 7, -7, -7}, {accumulation_order::lanes, 2}, 0, 0},
                    order_case{"sequential5", {7, 7, -7, -7, 3}, {accumulation_order::sequential, 1}, -4, 1},
                    order_case{"pairwise5", {7, 7, -7, -7, 3}, {accumulation_order::pairwise, 1}, 2, 2},
                    order_case{"lanes2_5", {7, 7, -7, -7, 3}, {accumulation_order::lanes, 2}, 3, 0},
                    order_case{"lanes3_5", {7, 7, -7, -7, 3}, {accumulation_order::lanes, 3}, 0, 1},
                    // one term and no term: the tree is the term itself, or 0
                    order_case{"pairwise1", {5}, {accumulation_order::pairwise, 1}, 5, 0},
                    order_case{"pairwise0", {}, {accumulation_order::pairwise, 1}, 0, 0},
                    // more lanes than terms, the idle lanes hold 0: [7, 7, -3, 0, 0, 0, 0, 0]
                    // -> [sat(14) = 7, -3, 0, 0] -> [4, 0] -> 4
                    order_case{"lanes8_3", {7, 7, -3}, {accumulation_order::lanes, 8}, 4, 1}),
    [](const testing::TestParamInfo<order_case>& i) { return std::string(i.param.name); });

// Without overflow every order gives the exact sum (wide target), for lengths around the tree's
// powers of two and lane counts 1..9, on random full-range terms (seed printed on failure).
TEST(accumulation_orders_property, all_orders_agree_without_overflow) {
  const std::uint64_t seed = 909;
  std::mt19937_64 rng(seed);
  std::uniform_int_distribution<std::int64_t> term(-(1 << 15), (1 << 15) - 1);
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, 40, 0}, fp::rounding_mode::floor, fp::overflow_mode::saturate});
  for (std::size_t n : {1U, 2U, 3U, 7U, 8U, 9U, 15U, 16U, 17U, 31U, 64U, 65U}) {
    std::vector<std::int64_t> terms(n);
    std::int64_t exact = 0;
    for (auto& t : terms) exact += (t = term(rng));
    for (int lanes = 1; lanes <= 9; ++lanes) {
      for (fp::accumulation how :
           {fp::accumulation{accumulation_order::pairwise, 1}, fp::accumulation{accumulation_order::lanes, lanes}}) {
        fp::accumulator<std::int64_t> acc(q, how);
        fp::counters c;
        for (std::int64_t t : terms) acc.add(t, 0, c);
        ASSERT_EQ(acc.result(c), exact) << "seed " << seed << " n " << n << " lanes " << lanes;
        EXPECT_EQ(c.overflowed, 0U);
      }
    }
  }
}

TEST(accumulation_orders_property, names_round_trip) {
  for (fp::accumulation_order o : fp::all_accumulation_orders)
    EXPECT_EQ(fp::parse_accumulation_order(fp::to_string(o)), o);
  EXPECT_FALSE(fp::parse_accumulation_order("tree"));
  EXPECT_EQ(fp::list_accumulation_orders(), "sequential, pairwise, lanes");
}

}  // namespace
