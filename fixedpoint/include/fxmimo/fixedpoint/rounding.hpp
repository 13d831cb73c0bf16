#pragma once
/// The one definition of rounding. Every operation (requantise, divide, square root) first
/// finds the exact result as q + f with q = floor(exact) and 0 <= f < 1 in units of the new
/// LSB, classifies f, and asks round_up() whether the result is q or q + 1.

#include "fxmimo/fixedpoint/modes.hpp"

namespace fxmimo::fixedpoint {

/// Where the dropped part f = exact - floor(exact) lies, 0 <= f < 1.
enum class remainder_class { zero, below_half, half, above_half };

/// True when the mode rounds the exact value q + f up to q + 1; false when it keeps q. The
/// dropped part f is described by three facts: nonzero (f > 0), at_least_half (f >= 1/2) and
/// exactly_half (f = 1/2); `negative` is the sign of the exact value, `q_odd` the parity of q.
/// Corner cases: an exact value (f = 0) is never changed; ties (f = 1/2) are the only place the
/// half_* modes differ. This is the single definition of every rounding mode.
[[gnu::always_inline]] constexpr bool round_up_by_facts(rounding_mode mode, bool nonzero, bool at_least_half,
                                                        bool exactly_half, bool negative, bool q_odd) {
  switch (mode) {
    case rounding_mode::floor: return false;
    case rounding_mode::ceil: return nonzero;
    // Bitwise & and | on bools: the same truth table as && and ||, without the branches that
    // random data would mispredict half of the time.
    case rounding_mode::toward_zero: return negative & nonzero;
    case rounding_mode::half_up: return at_least_half;
    case rounding_mode::half_down: return at_least_half & !exactly_half;
    case rounding_mode::half_toward_zero: return at_least_half & (!exactly_half | negative);
    case rounding_mode::half_away: return at_least_half & (!exactly_half | !negative);
    case rounding_mode::half_even: return at_least_half & (!exactly_half | q_odd);
  }
  return false;
}

/// round_up_by_facts for a classified remainder.
[[gnu::always_inline]] constexpr bool round_up(rounding_mode mode, remainder_class f, bool negative, bool q_odd) {
  return round_up_by_facts(mode, f != remainder_class::zero,
                           f == remainder_class::half || f == remainder_class::above_half, f == remainder_class::half,
                           negative, q_odd);
}

}  // namespace fxmimo::fixedpoint
