#pragma once
/// Doors between the outside world and words: exact conversion from double (a double is an
/// exact binary rational m 2^e, so the target's rounding is the only rounding), exact decimal
/// text, and back to double for reporting.

#include <cmath>
#include <stdexcept>
#include <string_view>

#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/fixedpoint/divide.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::fixedpoint {

/// v = m 2^e exactly, |m| < 2^53. Throws std::domain_error for NaN.
struct binary_rational {
  std::int64_t mantissa;
  int exponent;
};
binary_rational decompose(double v);

/// round(v * 2^F) by the target's rounding, then its overflow mode; +-inf overflow toward
/// +-infinity. Exact: no rounding happens before the target's own.
template <class T>
T from_double(double v, const requantizer<T>& q, counters& c) {
  if (std::isinf(v)) {
    // +-1 shifted past every width stands for +-infinity.
    return q(T(v > 0 ? 1 : -1), q.fmt().frac_bits - (int_traits<T>::bits + q.fmt().word_bits + 2), c);
  }
  const binary_rational r = decompose(v);
  return q(T(r.mantissa), -r.exponent, c);
}

/// raw * 2^-frac as the nearest double (reporting and metrics only).
template <class T>
double to_double(const T& raw, int frac) {
  return std::ldexp(to_double_approx(raw), -frac);
}

/// A decimal number parsed exactly: value = digits * 10^exp10.
struct decimal_value {
  big_int digits;
  int exp10 = 0;
};
/// Parses "-12.5", "3e-4", "+0.125", ".5"; throws std::invalid_argument naming the text.
decimal_value parse_decimal(std::string_view text);

/// round(value * 2^F) for an exact decimal value, then overflow handling.
template <class T>
T from_decimal(const decimal_value& v, const target& tgt, counters& c) {
  if (v.exp10 >= 0) {
    big_int integer = v.digits;
    for (int i = 0; i < v.exp10; ++i) integer *= 10;
    return convert_int<T>(requantize<big_int>(integer, 0, tgt, c));
  }
  big_int den = 1;
  for (int i = 0; i < -v.exp10; ++i) den *= 10;
  return convert_int<T>(divide<big_int>(v.digits, 0, den, 0, tgt, c));
}

/// The exact decimal expansion of raw * 2^-frac (finite for every binary fraction).
std::string exact_decimal(const big_int& raw, int frac);

}  // namespace fxmimo::fixedpoint
