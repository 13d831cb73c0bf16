#pragma once
/// The one definition of rounding. Every operation (requantise, divide, square root) first
/// finds the exact result as q + f with q = floor(exact) and 0 <= f < 1 in units of the new
/// LSB, classifies f, and asks round_up() whether the result is q or q + 1.

#include "fxmimo/fixedpoint/modes.hpp"

namespace fxmimo::fixedpoint {

/// Where the dropped part f = exact - floor(exact) lies, 0 <= f < 1.
enum class remainder_class { zero, below_half, half, above_half };

/// True when the mode rounds the exact value q + f up to q + 1; false when it keeps q.
/// `negative` is the sign of the exact value, `q_odd` the parity of q. Corner cases: an exact
/// value (f = 0) is never changed; ties (f = 1/2) are the only place the half_* modes differ.
constexpr bool round_up(rounding_mode mode, remainder_class f, bool negative, bool q_odd) {
  switch (mode) {
    case rounding_mode::floor:
      return false;
    case rounding_mode::ceil:
      return f != remainder_class::zero;
    case rounding_mode::toward_zero:
      return negative && f != remainder_class::zero;
    case rounding_mode::half_up:
      return f == remainder_class::half || f == remainder_class::above_half;
    case rounding_mode::half_down:
      return f == remainder_class::above_half;
    case rounding_mode::half_toward_zero:
      return f == remainder_class::above_half || (f == remainder_class::half && negative);
    case rounding_mode::half_away:
      return f == remainder_class::above_half || (f == remainder_class::half && !negative);
    case rounding_mode::half_even:
      return f == remainder_class::above_half || (f == remainder_class::half && q_odd);
  }
  return false;
}

}  // namespace fxmimo::fixedpoint
