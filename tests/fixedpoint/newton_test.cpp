// The table + Newton-Raphson reciprocal and reciprocal square root units (newton.hpp).
//  - Hand-computed cases: every intermediate word written out by hand (the arithmetic is in the
//    comments).
//  - Exhaustive over every word of a 12-bit input format: the error against the exact result
//    (Boost.Multiprecision: cpp_rational for 1/D, cpp_bin_float_50 for 1/sqrt(D)) stays within
//    the bound that the seed accuracy and the quadratic convergence give, derived below with every
//    rounding error of the unit's intermediates in it.
//  - With wide intermediates the unit converges to the exact-rounded result of divide.hpp.
// Newton-Raphson for 1/d and 1/sqrt(d): Ercegovac & Lang, Digital Arithmetic (2004), ch. 7
// (from memory): with e = 1 - d x, one step gives e' = e^2 (reciprocal) and e' = (3/4) e^2 +
// (1/4) e^3 (rsqrt) in exact arithmetic; a seed from the reciprocal (or root) of its interval's
// midpoint is the common-practice table.
#include "fxmimo/fixedpoint/newton.hpp"

#include <gtest/gtest.h>

#include <boost/multiprecision/cpp_bin_float.hpp>
#include <boost/multiprecision/cpp_int.hpp>
#include <cmath>
#include <iostream>

#include "fxmimo/fixedpoint/divide.hpp"
#include "fxmimo/fixedpoint/format.hpp"

namespace fxmimo::fixedpoint {
namespace {

using rational = boost::multiprecision::cpp_rational;
using float50 = boost::multiprecision::cpp_bin_float_50;

target tgt(const char* q, rounding_mode r = rounding_mode::half_even) {
  return target{parse_format(q), r, overflow_mode::saturate};
}

newton_unit unit(newton_function f, int a, int n, const char* rom, const char* iter, const char* prod,
                 const char* square = "Q2.12") {
  newton_unit u;
  u.function = f;
  u.seed_bits = a;
  u.steps = n;
  u.mant = tgt("UQ1.15");
  u.rom = tgt(rom);
  u.iter = tgt(iter);
  u.prod = tgt(prod);
  u.square = tgt(square);
  return u;
}

TEST(NewtonReciprocal, HandComputedOneStep) {
  // 1/3 with a = 2, n = 1. A = 3, L = 2: m = 3/4; i = floor(3/4 * 8) - 4 = 2.
  // rom[2] = Q2.8(16 / (8 + 5)) = Q(315.08 / 256) = 315; p_0 = Q1.12(3/4 * 315/256) = 3780 (exact:
  // 945/1024); x_1 = Q2.12(315/256 (2 - 945/1024)) = Q(5428.83 / 4096) = 5429; out = Q(5429/4096
  // 2^-2) at 10 fraction bits = Q(339.3125) = 339, where the exact-rounded 1/3 is 341.
  const newton_unit u = unit(newton_function::reciprocal, 2, 1, "Q2.8", "Q2.12", "Q1.12");
  counters rc;
  const auto rom = newton_rom(u, rc);
  ASSERT_EQ(rom.size(), 4U);
  EXPECT_EQ(rom[2], 315);
  EXPECT_EQ(rom[0], 455);  // 16/9 * 256 = 455.1
  EXPECT_EQ(rc.requantized, 4U);
  counters oc;
  newton_counters nc;
  newton_trace t;
  EXPECT_EQ(newton_evaluate(u, rom, 3, 0, tgt("Q3.10"), oc, nc, t), 339);
  EXPECT_EQ(t.mant, 3 << 13);  // 3/4 in UQ1.15
  EXPECT_EQ(t.index, 2);
  EXPECT_EQ(t.prod, std::vector<std::int64_t>{3780});
  EXPECT_EQ(t.iter, std::vector<std::int64_t>{5429});
  EXPECT_EQ(nc.prod.inexact, 0U);
  EXPECT_EQ(nc.iter.inexact, 1U);
  // The sign goes round the unit: -1/3 gives -339.
  EXPECT_EQ(newton_evaluate(u, rom, -3, 0, tgt("Q3.10"), oc, nc, t), -339);
  // Denormalisation: 3 * 2^-4 (word 3, 4 fraction bits) has the same mantissa: 16/3 = 5429/4096 4.
  EXPECT_EQ(newton_evaluate(u, rom, 3, 4, tgt("Q3.10"), oc, nc, t), 5429);
}

TEST(NewtonRsqrt, HandComputedOneStep) {
  // 1/sqrt(2) with a = 2, n = 1. A = 2, L = 2, e = 0 (even): m = 1/2, h = 1, j = floor(1/2 4) - 2
  // = 0, i = 2. rom[2] = Q2.8(1/sqrt(5/8)) = Q(323.8) = 324; s_0 = Q2.12(324^2 / 2^16) = 6561
  // (exact); p_0 = Q1.12(6561 / 2 / 4096) = Q(3280.5) = 3280 (half_even: the even neighbour);
  // x_1 = Q2.12(324/256 (3 - 3280/4096) / 2) = Q(5700.375) = 5700; out = Q(5700/4096 2^-1) at 10
  // fraction bits = Q(712.5) = 712 (even); the exact-rounded 1/sqrt(2) is 724.
  const newton_unit u = unit(newton_function::rsqrt, 2, 1, "Q2.8", "Q2.12", "Q1.12", "Q2.12");
  counters rc;
  const auto rom = newton_rom(u, rc);
  ASSERT_EQ(rom.size(), 4U);
  EXPECT_EQ(rom[2], 324);
  EXPECT_EQ(rom[0], 458);  // lower half, j = 0: Q2.8(1/sqrt(5/16)) = Q(457.95) = 458
  counters oc;
  newton_counters nc;
  newton_trace t;
  EXPECT_EQ(newton_evaluate(u, rom, 2, 0, tgt("Q3.10"), oc, nc, t), 712);
  EXPECT_EQ(t.mant, 1 << 14);
  EXPECT_EQ(t.index, 2);
  EXPECT_EQ(t.square, std::vector<std::int64_t>{6561});
  EXPECT_EQ(t.prod, std::vector<std::int64_t>{3280});
  EXPECT_EQ(t.iter, std::vector<std::int64_t>{5700});
}

TEST(NewtonUnits, CornerCasesAreThoseOfTheExactUnits) {
  const newton_unit r = unit(newton_function::reciprocal, 4, 2, "Q2.12", "Q2.16", "Q1.16");
  const newton_unit s = unit(newton_function::rsqrt, 4, 2, "Q2.12", "Q2.16", "Q1.16", "Q2.16");
  counters c, ce;
  newton_counters nc;
  newton_trace t;
  const auto rom_r = newton_rom(r, c), rom_s = newton_rom(s, c);
  const target out = tgt("Q3.10");
  EXPECT_EQ(newton_evaluate(r, rom_r, 0, 3, out, c, nc, t), divide<std::int64_t>(1, 0, 0, 3, out, ce));
  EXPECT_EQ(newton_evaluate(s, rom_s, 0, 3, out, c, nc, t), rsqrt<std::int64_t>(0, 3, out, ce));
  EXPECT_EQ(newton_evaluate(s, rom_s, -5, 3, out, c, nc, t), 0);
  EXPECT_EQ(c.overflowed, ce.overflowed + 1);
  newton_unit bad = r;
  bad.seed_bits = 0;
  EXPECT_THROW((void)newton_rom(bad, c), std::invalid_argument);
  bad.seed_bits = 4;
  bad.steps = max_newton_steps + 1;
  EXPECT_THROW((void)newton_rom(bad, c), std::invalid_argument);
}

// ---- The error bound -------------------------------------------------------------------------
// Notation: u_X = 2^-F of node X; every intermediate rounds to nearest (half_even), so its error
// is at most u_X / 2, and no intermediate overflows in the formats below (checked by counters).
// The mantissa is exact (UQ1.15 holds every 12-bit input's bits).
// Reciprocal, e_k = 1 - m x_k:
//   seed: the ROM interval [lo, lo + w), w = 2^-(a+1), holds 1/c, c = lo + w/2, so
//         |1 - m / c| <= (w/2) / c <= (w/2) / (1/2 + w/2) = w / (1 + w); rounding the entry adds
//         m |r| <= u_rom / 2 (m < 1): E_0 = w / (1 + w) + u_rom / 2.
//   step: p = m x + r_p, x' = x (2 - p) + r_x gives 1 - m x' = e^2 + (1 - e) r_p - m r_x, so
//         E_k+1 = E_k^2 + (1 + E_k) u_prod / 2 + u_iter / 2.
//   out:  y = x_n 2^-E + r_o: |1 - D y| <= E_n + D u_out / 2.
// Rsqrt, e_k = 1 - m x_k^2:
//   seed: intervals of width w = 2^-(a+1) in [1/4, 1/2) and 2^-a in [1/2, 1) hold 1/sqrt(c), c the
//         midpoint: |1 - m / c| <= 2^-a / (1 + 2^-a); an entry off by r adds 2 m |r| / sqrt(c) +
//         m r^2 <= 2 (1 + 2^-a) |r| + r^2 (m <= c + w/2 and c >= 1/4).
//   step: s = x^2 + r_s, p = m s + r_p, x' = x (3 - p) / 2 = x (1 + g), g = e/2 - d with
//         d = (m r_s + r_p) / 2: 1 - m x'^2 = 1 - (1 - e)(1 + g)^2 = 2 d - g^2 + 2 e g + e g^2, so
//         |e'| <= 2|d| + |g| (|g| + 2|e| + |e||g|), |g| <= |e|/2 + |d|, |d| <= (u_sq + u_prod) / 4;
//         rounding x' by r_x adds 2 m x' |r_x| + m r_x^2 <= 2 sqrt(1 + |e'|) |r_x| + r_x^2.
//   out:  |y sqrt(D) - 1| <= |1 - sqrt(1 - e_n)| + sqrt(D) u_out / 2, and 1 - sqrt(1 - e) =
//         e / (1 + sqrt(1 - e)), so |1 - sqrt(1 - e_n)| <= E_n / (1 + sqrt(1 - E_n)).
double ulp(const target& t) { return std::ldexp(1.0, -t.fmt.frac_bits); }

double converged_bound(const newton_unit& u) {
  const double a = u.seed_bits;
  double e = 0;
  if (u.function == newton_function::reciprocal) {
    const double w = std::ldexp(1.0, -(u.seed_bits + 1));
    e = w / (1 + w) + ulp(u.rom) / 2;
    for (int k = 0; k < u.steps; ++k) e = e * e + (1 + e) * ulp(u.prod) / 2 + ulp(u.iter) / 2;
  } else {
    const double w = std::ldexp(1.0, -u.seed_bits);
    const double r = ulp(u.rom) / 2;
    e = w / (1 + w) + 2 * (1 + std::ldexp(1.0, -static_cast<int>(a))) * r + r * r;
    for (int k = 0; k < u.steps; ++k) {
      const double d = (ulp(u.square) + ulp(u.prod)) / 4;
      const double g = e / 2 + d;
      const double e1 = 2 * d + g * (g + 2 * e + e * g);
      const double rx = ulp(u.iter) / 2;
      e = e1 + 2 * std::sqrt(1 + e1) * rx + rx * rx;
    }
  }
  return e;
}

struct sweep_result {
  double max_error = 0, max_bound_use = 0;  // largest error, largest error / its bound
};

sweep_result sweep_every_word(const newton_unit& u, const target& in, const target& out) {
  counters rc;
  const auto rom = newton_rom(u, rc);
  const double e_n = converged_bound(u);
  sweep_result res;
  const std::int64_t lo = -(std::int64_t{1} << (in.fmt.word_bits - 1)), hi = -lo - 1;
  newton_counters nc;
  counters oc;
  for (std::int64_t x = lo; x <= hi; ++x) {
    if (x == 0 || (u.function == newton_function::rsqrt && x < 0)) continue;
    newton_trace t;
    const std::int64_t y = newton_evaluate(u, rom, x, in.fmt.frac_bits, out, oc, nc, t);
    const rational d = rational(x) / rational(boost::multiprecision::cpp_int(1) << in.fmt.frac_bits);
    const rational yv = rational(y) / rational(boost::multiprecision::cpp_int(1) << out.fmt.frac_bits);
    double err = 0, bound = 0;
    if (u.function == newton_function::reciprocal) {
      err = std::abs(static_cast<double>(rational(1) - d * yv));
      bound = e_n + std::abs(static_cast<double>(d)) * ulp(out) / 2;
    } else {
      const float50 sd = boost::multiprecision::sqrt(float50(d));
      err = std::abs(static_cast<double>(float50(yv) * sd - 1));
      bound = e_n / (1 + std::sqrt(1 - e_n)) + static_cast<double>(sd) * ulp(out) / 2;
    }
    EXPECT_LE(err, bound) << "input word " << x << ": output " << y;
    res.max_error = std::max(res.max_error, err);
    res.max_bound_use = std::max(res.max_bound_use, err / bound);
  }
  EXPECT_EQ(nc.prod.overflowed + nc.iter.overflowed + nc.square.overflowed + oc.overflowed, 0U);
  return res;
}

TEST(NewtonUnits, EveryTwelveBitWordStaysWithinTheDerivedBound) {
  // Input Q5.6 (12 bits): D in [2^-6, 32); outputs Q7.20 (1/D up to 64) and Q4.24 (1/sqrt(D) up
  // to 8).
  const target in = tgt("Q5.6");
  for (int a : {3, 5, 7}) {
    for (int n : {0, 1, 2}) {
      const newton_unit r = unit(newton_function::reciprocal, a, n, "Q2.12", "Q2.18", "Q1.18");
      const sweep_result rr = sweep_every_word(r, in, tgt("Q7.20"));
      const newton_unit s = unit(newton_function::rsqrt, a, n, "Q2.12", "Q2.18", "Q1.18", "Q3.18");
      const sweep_result rs = sweep_every_word(s, in, tgt("Q4.24"));
      std::cout << "[ newton   ] a = " << a << ", n = " << n << ": reciprocal max |1 - D y| " << rr.max_error
                << " (bound " << converged_bound(r) << " + output LSB; at most " << rr.max_bound_use
                << " of the bound), rsqrt max |y sqrt(D) - 1| " << rs.max_error << " (bound " << converged_bound(s)
                << ", at most " << rs.max_bound_use << ")\n";
      // The seed alone is as coarse as its table: the bound is not vacuous (a seed within
      // half the bound would mean the table or the index is finer than defined).
      if (n == 0) {
        EXPECT_GT(rr.max_bound_use, 0.5);
        EXPECT_GT(rs.max_bound_use, 0.5);
      }
    }
  }
}

TEST(NewtonUnits, WideIntermediatesConvergeToTheExactRoundedResult) {
  // a = 8, n = 3, intermediates with 60 fraction bits: E_3 is about 2^-58, so the unit's result
  // lies within 2^-52 of 1/D (<= 64) and within 2^-55 of 1/sqrt(D) (<= 8). A 12-bit input D =
  // k 2^-6 puts the exact result at least that far from every rounding boundary of a 12-bit
  // fraction output, (2j+1) 2^-13: |2^6/k - (2j+1) 2^-13| = |2^19 - k (2j+1)| / (k 2^13) >= 2^-24
  // (zero would need k = 2^19 / odd >= 2^19); |8/sqrt(k) - B| >= |2^32 - k (2j+1)^2| / (k 2^26 16)
  // >= 2^-41 (zero would need k (2j+1)^2 = 2^32). So every word equals the exact unit's
  // (divide.hpp, rsqrt) for the round-to-nearest modes. Directed modes are left out on purpose:
  // an exact result (D a power of two) is their boundary, which the iterate approaches from below.
  for (rounding_mode mode : {rounding_mode::half_even, rounding_mode::half_up, rounding_mode::half_down}) {
    const target out = tgt("Q7.12", mode);
    const newton_unit r = unit(newton_function::reciprocal, 8, 3, "Q2.60", "Q2.60", "Q1.61");
    const newton_unit s = unit(newton_function::rsqrt, 8, 3, "Q2.60", "Q2.60", "Q1.61", "Q3.60");
    counters c;
    const auto rom_r = newton_rom(r, c), rom_s = newton_rom(s, c);
    newton_counters nc;
    int differ = 0;
    for (std::int64_t x = -2048; x < 2048; ++x) {
      if (x == 0) continue;
      newton_trace t;
      counters c1, c2;
      const std::int64_t y = newton_evaluate(r, rom_r, x, 6, out, c1, nc, t);
      const std::int64_t exact = divide<std::int64_t>(1, 0, x, 6, out, c2);
      differ += y != exact;
      EXPECT_EQ(y, exact) << "1/D, D word " << x << " mode " << to_string(mode);
      if (x > 0) {
        const std::int64_t ys = newton_evaluate(s, rom_s, x, 6, out, c1, nc, t);
        const std::int64_t exact_s = rsqrt<std::int64_t>(x, 6, out, c2);
        EXPECT_EQ(ys, exact_s) << "1/sqrt(D), D word " << x << " mode " << to_string(mode);
      }
    }
    EXPECT_EQ(differ, 0);
  }
}

}  // namespace
}  // namespace fxmimo::fixedpoint
