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
  const fp::requantizer<std::int64_t> q(fp::target{{true, 4, 0}, fp::rounding_mode::floor, fp::overflow_mode::saturate});
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
