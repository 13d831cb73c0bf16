#pragma once
/// Choosing the integer type of a node once, from its formats: int64 where every value fits,
/// int128 for wider products and sums, int256 beyond that.

#include <stdexcept>
#include <string>

#include "fxmimo/fixedpoint/integer.hpp"

namespace fxmimo::fixedpoint {

enum class int_width { i64, i128, i256 };

/// The narrowest type holding `bits` bits of two's complement (bits <= 256).
inline int_width select_width(int bits) {
  if (bits <= 64) return int_width::i64;
  if (bits <= 128) return int_width::i128;
  if (bits <= 256) return int_width::i256;
  throw std::invalid_argument("no integer type holds " + std::to_string(bits) + " bits");
}

/// Calls f(T{}) with the type chosen by `w`; f's result type must not depend on T.
template <class F>
decltype(auto) with_int_type(int_width w, F&& f) {
  switch (w) {
    case int_width::i64: return f(std::int64_t{});
    case int_width::i128: return f(int128{});
    case int_width::i256: break;
  }
  return f(int256{});
}

}  // namespace fxmimo::fixedpoint
