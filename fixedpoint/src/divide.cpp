#include "fxmimo/fixedpoint/divide.hpp"

namespace fxmimo::fixedpoint::detail {

big_int round_with_sticky(const big_int& r_floor, bool exact, int guard_bits, rounding_mode mode, bool& inexact) {
  // value = (r_floor + f) / 2^t with 0 <= f < 1 and f > 0 iff !exact. With t >= 1 the half
  // point 2^(t-1) is an integer, so a non-zero f can never make a tie: it only breaks one.
  const big_int q = floor_shift(r_floor, guard_bits);
  const big_int rest = r_floor - shift_left(q, guard_bits);
  const big_int half = pow2<big_int>(guard_bits - 1);
  remainder_class f;
  if (rest == 0)
    f = exact ? remainder_class::zero : remainder_class::below_half;
  else if (rest < half)
    f = remainder_class::below_half;
  else if (rest == half)
    f = exact ? remainder_class::half : remainder_class::above_half;
  else
    f = remainder_class::above_half;
  inexact = f != remainder_class::zero;
  return apply_rounding(q, f, false, mode);
}

}  // namespace fxmimo::fixedpoint::detail
