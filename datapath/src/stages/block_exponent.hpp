#pragma once
// The fixed rule of block floating point (README "Block floating point"), shared by the stages
// that find a block's exponent (estimate.cpp: per user column; precoder.cpp: the whole matrix):
// the smallest exponent in [lowest, top] at which every part of the block, read at that many more
// fraction bits and rounded by the node's mode, lies in [-1, 1). Private to the datapath room.

#include <algorithm>
#include <cmath>

#include "../stage_support.hpp"
#include "fxmimo/datapath/block_float.hpp"

namespace fxmimo::datapath::detail {

/// The largest whole number a format holds (0 when it holds none above 0), at most the span of
/// the golden exponents: the largest exponent word u.
inline int largest_whole(const fp::format& fmt) {
  const double top = std::floor(fmt.max_value());
  return top < 1.0 ? 0 : static_cast<int>(std::min(top, static_cast<double>(max_exponent_span)));
}

/// Whether the parts hi >= 0 >= lo (exact, at `frac` fraction bits), read at frac + e and rounded
/// by the node's mode into its fraction bits, lie in [-1, 1). Rounding is monotone, so a block's
/// largest and smallest parts decide for all of it.
template <class P>
bool block_fits(const P& hi, const P& lo, int frac, int e, const node_state& node) {
  const int f = node.frac(), s = frac + e - f;  // bits dropped by the requantisation
  if (s <= 0) {
    // No rounding: x 2^-s in [-2^f, 2^f) iff x in [-2^(f+s), 2^(f+s)), f + s = frac + e.
    const int b = frac + e;
    if (b < 0) return hi == 0 && lo == 0;
    if (b >= fp::int_traits<P>::bits - 2) return true;
    return hi < fp::pow2<P>(b) && lo >= P(-fp::pow2<P>(b));
  }
  const P limit = fp::pow2<P>(f);
  return fp::round_shift(hi, s, node.spec.rounding).value < limit &&
         fp::round_shift(lo, s, node.spec.rounding).value >= P(-limit);
}

/// The block's exponent: the smallest in [lowest, top] at which it fits (top when none does: the
/// requantisation then overflows by the node's mode; lowest for an all-zero block).
template <class P>
int block_exponent(const P& hi, const P& lo, int frac, const node_state& node, int lowest, int top) {
  if (hi == 0 && lo == 0) return lowest;
  // A first guess from the magnitude (within one of the answer), then the exact test.
  int bits = 0;
  std::frexp(std::max(fp::to_double_approx(hi), -fp::to_double_approx(lo)), &bits);
  int e = std::clamp(bits - frac + 1, lowest, top);
  while (e < top && !block_fits(hi, lo, frac, e, node)) ++e;
  while (e > lowest && block_fits(hi, lo, frac, e - 1, node)) --e;
  return e;
}

}  // namespace fxmimo::datapath::detail
