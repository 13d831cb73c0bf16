#pragma once
/// Exact division, square root and reciprocal square root, each rounded once by the target's
/// mode and then overflow-handled: they define what a divider or root IP of that width must
/// produce. Computed on unbounded integers (these operations are rare in a datapath).
///   divide:  round( (n 2^-fn) / (d 2^-fd) * 2^F )
///   sqrt:    round( sqrt(x 2^-fx) * 2^F )
///   rsqrt:   round( 2^F / sqrt(x 2^-fx) )
/// Corner cases: d = 0 and rsqrt(0) are overflows toward +-infinity (saturate gives max or min,
/// wrap and saturate_zero give 0; 0/0 gives 0); sqrt and rsqrt of a negative value are counted
/// as overflows and give 0. A root is a tie only when it is exact (e.g. sqrt(19329212.25) =
/// 4396.5); an inexact root always lies strictly on one side of the half.

#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/fixedpoint/integer.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::fixedpoint {

namespace detail {

/// Rounds R + f at t guard bits (value (R + f) / 2^t, 0 <= f < 1, f > 0 iff !exact) by mode.
big_int round_with_sticky(const big_int& r_floor, bool exact, int guard_bits, rounding_mode mode, bool& inexact);

/// Overflow stage in unbounded integers, then the word as T (it fits after overflow handling).
template <class T>
T finish(const big_int& q, const target& tgt, counters& c) {
  const requantizer<big_int> big(tgt);
  return convert_int<T>(big.overflow(q, c));
}

/// Overflow toward +infinity (positive) or -infinity.
template <class T>
T infinite(bool positive, const target& tgt, counters& c) {
  // 2^(W+1) in magnitude is outside every W-bit range; its low W bits are 0.
  const big_int beyond = pow2<big_int>(tgt.fmt.word_bits + 1);
  return finish<T>(positive ? beyond : big_int(-beyond), tgt, c);
}

}  // namespace detail

template <class T>
T divide(const T& num, int num_frac, const T& den, int den_frac, const target& tgt, counters& c) {
  ++c.requantized;
  big_int n = convert_int<big_int>(num);
  big_int d = convert_int<big_int>(den);
  if (d == 0) {
    if (n == 0) {
      ++c.overflowed;
      return T(0);
    }
    return detail::infinite<T>(n > 0, tgt, c);
  }
  const int k = tgt.fmt.frac_bits + den_frac - num_frac;  // raw = n 2^k / d
  if (k >= 0)
    n = shift_left(n, k);
  else
    d = shift_left(d, -k);
  if (d < 0) {
    n = -n;
    d = -d;
  }
  big_int q = n / d;  // truncates toward zero
  big_int r = n - q * d;
  if (r < 0) {
    q -= 1;
    r += d;
  }
  const big_int twice = r * 2;
  const remainder_class f = r == 0       ? remainder_class::zero
                            : twice < d  ? remainder_class::below_half
                            : twice == d ? remainder_class::half
                                         : remainder_class::above_half;
  if (f != remainder_class::zero) ++c.inexact;
  return detail::finish<T>(apply_rounding(q, f, n < 0, tgt.rounding), tgt, c);
}

template <class T>
T sqrt(const T& x, int x_frac, const target& tgt, counters& c) {
  ++c.requantized;
  const big_int v = convert_int<big_int>(x);
  if (v < 0) {
    ++c.overflowed;
    return T(0);
  }
  // raw * 2^t = sqrt(v * 2^(2F - fx + 2t)), with t >= 1 guard bits making the exponent >= 0.
  const int e = 2 * tgt.fmt.frac_bits - x_frac;
  const int t = std::max(1, (-e + 1) / 2);
  const big_int n = shift_left(v, e + 2 * t);
  big_int rem;
  const big_int root = boost::multiprecision::sqrt(n, rem);
  bool inexact = false;
  const big_int q = detail::round_with_sticky(root, rem == 0, t, tgt.rounding, inexact);
  if (inexact) ++c.inexact;
  return detail::finish<T>(q, tgt, c);
}

template <class T>
T rsqrt(const T& x, int x_frac, const target& tgt, counters& c) {
  ++c.requantized;
  const big_int v = convert_int<big_int>(x);
  if (v == 0) return detail::infinite<T>(true, tgt, c);
  if (v < 0) {
    ++c.overflowed;
    return T(0);
  }
  // raw * 2^t = sqrt(2^(2F + fx + 2t) / v); floor(sqrt(floor(y))) = floor(sqrt(y)) for y >= 0.
  const int e = 2 * tgt.fmt.frac_bits + x_frac;
  const int t = std::max(1, (-e + 1) / 2);
  const big_int num = pow2<big_int>(e + 2 * t);
  const big_int quotient = num / v;
  const bool exact_division = quotient * v == num;
  big_int rem;
  const big_int root = boost::multiprecision::sqrt(quotient, rem);
  bool inexact = false;
  const big_int q = detail::round_with_sticky(root, exact_division && rem == 0, t, tgt.rounding, inexact);
  if (inexact) ++c.inexact;
  return detail::finish<T>(q, tgt, c);
}

}  // namespace fxmimo::fixedpoint
