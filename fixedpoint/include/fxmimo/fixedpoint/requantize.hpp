#pragma once
/// requantize: an exact value x * 2^-from_frac is brought into a target format, once:
///   q = round(x * 2^(F - from_frac))   (rounding.hpp; exact when F >= from_frac)
///   result = overflow(q)               (saturate / wrap / ... into W bits)
/// Corner cases: ties at exactly half an LSB (the rounding mode decides); shifts wider than the
/// integer type (the exact value is then either 0, or smaller than half an LSB in magnitude,
/// or -half exactly); the most negative word with saturate_symmetric (becomes -max); F < 0 or
/// F > W (only the arithmetic of the shift changes). The integer type T must hold the input
/// and every word of the target (fits_container()); the harness picks T once per node.

#include <stdexcept>

#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/integer.hpp"
#include "fxmimo/fixedpoint/modes.hpp"
#include "fxmimo/fixedpoint/rounding.hpp"

namespace fxmimo::fixedpoint {

/// A format together with the rounding and overflow modes that bring values into it.
struct target {
  format fmt;
  rounding_mode rounding = rounding_mode::floor;
  overflow_mode overflow = overflow_mode::saturate;
  friend bool operator==(const target&, const target&) = default;
};

/// True when integer type T holds every word of `fmt` plus one bit of headroom for a sum.
template <class T>
constexpr bool fits_container(const format& fmt, int headroom_bits = 0) {
  return fmt.container_bits() + headroom_bits <= int_traits<T>::bits;
}

/// Result of the rounding stage before overflow handling: q and what rounding saw.
template <class T>
struct rounded {
  T value;
  bool inexact;
};

/// Rounds q_floor + f by `mode` (rounding.hpp) and returns the integer.
template <class T>
[[gnu::always_inline]] inline T apply_rounding(const T& q_floor, remainder_class f, bool negative, rounding_mode mode) {
  bool q_odd;
  if constexpr (int_traits<T>::native) {
    q_odd = (q_floor & 1) != 0;
  } else {
    q_odd = boost::multiprecision::bit_test(q_floor >= 0 ? q_floor : T(-q_floor), 0);
  }
  return round_up(mode, f, negative, q_odd) ? T(q_floor + 1) : q_floor;
}

/// Rounding stage of a right shift: round(x / 2^s) by `mode`, s >= 1, any s.
template <class T>
[[gnu::always_inline]] inline rounded<T> round_shift(const T& x, int s, rounding_mode mode) {
  constexpr int bits = int_traits<T>::bits;
  const bool negative = x < 0;
  auto classify = [](const auto& rest, const auto& half) {
    return rest == 0      ? remainder_class::zero
           : rest < half  ? remainder_class::below_half
           : rest == half ? remainder_class::half
                          : remainder_class::above_half;
  };
  if constexpr (int_traits<T>::native) {
    if (s <= bits - 1) {
      // The rest x - q*2^s lies in [0, 2^s); computed modulo 2^bits it is exact.
      using U = typename int_traits<T>::unsigned_type;
      const T q = floor_shift(x, s);
      const U rest = static_cast<U>(static_cast<U>(x) - static_cast<U>(shift_left(q, s)));
      // The facts as flags, not a classified remainder: random low bits would mispredict the
      // branches of a classification about half of the time.
      const U half = static_cast<U>(U{1} << (s - 1));
      const bool nonzero = rest != 0;
      const bool up = round_up_by_facts(mode, nonzero, rest >= half, rest == half, negative, (q & 1) != 0);
      return {static_cast<T>(q + static_cast<T>(up)), nonzero};
    }
    // s >= bits: |x| <= 2^(bits-1) <= 2^(s-1), so floor is 0 or -1, and x = -2^(s-1) (a tie)
    // happens only for s == bits and the type's most negative value.
    if (x == 0) return {T(0), false};
    if (!negative) return {apply_rounding(T(0), remainder_class::below_half, false, mode), true};
    const bool tie = s == bits && x == std::numeric_limits<T>::min();
    return {apply_rounding(T(-1), tie ? remainder_class::half : remainder_class::above_half, true, mode), true};
  } else {
    if (!std::is_same_v<T, big_int> && s >= bits) {
      // Beyond a fixed Boost width: redo the shift without a width limit.
      const rounded<big_int> wide = round_shift(big_int(x), s, mode);
      return {T(wide.value), wide.inexact};
    }
    const T q = floor_shift(x, s);
    const T rest = T(x - shift_left(q, s));
    const remainder_class f = classify(rest, pow2<T>(s - 1));
    return {apply_rounding(q, f, negative, mode), f != remainder_class::zero};
  }
}

/// A target prepared for integer type T: its range as T, and the requantise operation.
template <class T>
class requantizer {
 public:
  explicit requantizer(const target& tgt) : tgt_(tgt) {
    validate(tgt.fmt);
    if (!fits_container<T>(tgt.fmt)) {
      throw std::invalid_argument("requantizer: integer type too narrow for " + describe(tgt.fmt));
    }
    const int w = tgt.fmt.word_bits;
    if (tgt.fmt.is_signed) {
      hi_ = pow2_minus_one(w - 1);
      lo_ = T(-hi_ - 1);
    } else {
      hi_ = pow2_minus_one(w);
      lo_ = 0;
    }
  }

  [[nodiscard]] const target& spec() const { return tgt_; }
  [[nodiscard]] const format& fmt() const { return tgt_.fmt; }
  [[nodiscard]] const T& min_word() const { return lo_; }
  [[nodiscard]] const T& max_word() const { return hi_; }

  /// The exact value x * 2^-from_frac requantised to the target; counts into `c`.
  [[gnu::always_inline]] T operator()(const T& x, int from_frac, counters& c) const {
    ++c.requantized;
    const int s = from_frac - tgt_.fmt.frac_bits;  // fraction bits dropped (< 0: appended)
    if (s == 0) return overflow(x, c);
    if (s < 0) {
      const int k = -s;
      if (shift_left_fits(x, k)) return overflow(shift_left(x, k), c);
      return overflow_unrepresentable(x, k, c);
    }
    const rounded<T> r = round_shift(x, s);
    if (r.inexact) ++c.inexact;
    return overflow(r.value, c);
  }

  /// Overflow stage alone: q is already an integer in units of the target LSB.
  [[gnu::always_inline]] T overflow(const T& q, counters& c) const {
    if (q > hi_ || q < lo_) {
      ++c.overflowed;
      const double excess = q > hi_ ? to_double_approx(T(q - hi_)) : to_double_approx(lo_) - to_double_approx(q);
      if (excess > c.max_excess_lsb) c.max_excess_lsb = excess;
      switch (tgt_.overflow) {
        case overflow_mode::wrap: return wrap(q);
        case overflow_mode::saturate: return q > hi_ ? hi_ : lo_;
        case overflow_mode::saturate_symmetric: return q > hi_ ? hi_ : (tgt_.fmt.is_signed ? T(-hi_) : lo_);
        case overflow_mode::saturate_zero: return T(0);
      }
    }
    if (tgt_.overflow == overflow_mode::saturate_symmetric && tgt_.fmt.is_signed && q == lo_) {
      ++c.overflowed;
      if (c.max_excess_lsb < 1.0) c.max_excess_lsb = 1.0;
      return T(-hi_);
    }
    return q;
  }

  /// Rounding stage of a right shift by s >= 1 (see round_shift below).
  rounded<T> round_shift(const T& x, int s) const { return fixedpoint::round_shift(x, s, tgt_.rounding); }

 private:
  static T pow2_minus_one(int e) {
    if constexpr (int_traits<T>::native) {
      using U = typename int_traits<T>::unsigned_type;
      const U all = ~U{0};
      return static_cast<T>(e >= int_traits<T>::bits ? all : static_cast<U>((U{1} << e) - 1));
    } else {
      return T(pow2<T>(e) - 1);
    }
  }

  /// x mod 2^W, then sign-extended from bit W-1 for signed formats (two's complement wrap).
  T wrap(const T& x) const {
    const int w = tgt_.fmt.word_bits;
    if constexpr (int_traits<T>::native) {
      using U = typename int_traits<T>::unsigned_type;
      const U mask = w >= int_traits<T>::bits ? ~U{0} : static_cast<U>((U{1} << w) - 1);
      U u = static_cast<U>(x) & mask;
      if (tgt_.fmt.is_signed && ((u >> (w - 1)) & 1U) != 0) u |= ~mask;
      return static_cast<T>(u);
    } else {
      T low = T(x - shift_left(floor_shift(x, w), w));  // 0 <= low < 2^W
      if (tgt_.fmt.is_signed && low > hi_) low -= pow2<T>(w);
      return low;
    }
  }

  /// x * 2^k does not fit in T: it lies outside the target's range (which fits in T).
  T overflow_unrepresentable(const T& x, int k, counters& c) const {
    ++c.overflowed;
    const double excess = std::ldexp(std::abs(to_double_approx(x)), k);
    if (excess > c.max_excess_lsb) c.max_excess_lsb = excess;
    switch (tgt_.overflow) {
      case overflow_mode::wrap: {
        const int w = tgt_.fmt.word_bits;
        if (k >= w) return T(0);                                        // every kept bit is an appended zero
        const T low = T(x - shift_left(floor_shift(x, w - k), w - k));  // x mod 2^(W-k)
        return wrap(shift_left(low, k));
      }
      case overflow_mode::saturate: return x > 0 ? hi_ : lo_;
      case overflow_mode::saturate_symmetric: return x > 0 ? hi_ : (tgt_.fmt.is_signed ? T(-hi_) : lo_);
      case overflow_mode::saturate_zero: return T(0);
    }
    return T(0);
  }

  target tgt_;
  T lo_{};
  T hi_{};
};

/// One-shot form of requantizer<T>(tgt)(x, from_frac, c).
template <class T>
T requantize(const T& x, int from_frac, const target& tgt, counters& c) {
  return requantizer<T>(tgt)(x, from_frac, c);
}

}  // namespace fxmimo::fixedpoint
