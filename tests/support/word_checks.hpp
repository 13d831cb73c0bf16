#pragma once
// What the bit-exact tests of fixed-point words share: words drawn over a whole range so that the
// corners occur, and failure messages that show words in hex and value, and counters.
#include <bit>
#include <cstdint>
#include <random>
#include <sstream>
#include <string>

#include "fxmimo/fixedpoint/counters.hpp"

namespace fxmimo::test_support {

/// A word in [lo, hi] (lo <= 0 < hi): an extreme (lo, hi, -hi where it is in range, 0) one time
/// in four, otherwise a uniform word shifted right by 0 .. bit_width(hi) bits, so that every
/// magnitude from 1 LSB to full scale occurs (a 0 becomes +-1, or 1 when lo is 0).
inline std::int64_t draw_word(std::mt19937_64& rng, std::int64_t lo, std::int64_t hi) {
  std::uniform_int_distribution<std::int64_t> full(lo, hi);
  std::uniform_int_distribution<int> pick(0, 15), scale(0, std::bit_width(static_cast<std::uint64_t>(hi)));
  switch (pick(rng)) {
    case 0: return lo;
    case 1: return hi;
    case 2: return -hi >= lo ? -hi : 0;
    case 3: return 0;
    default: break;
  }
  const std::int64_t x = full(rng) >> scale(rng);  // arithmetic shift (C++20)
  if (x != 0) return x;
  if (lo == 0) return 1;
  return pick(rng) % 2 == 0 ? 1 : -1;
}

/// A word of `bits` two's complement bits, drawn as above.
inline std::int64_t draw_signed_word(std::mt19937_64& rng, int bits) {
  const std::int64_t hi = (std::int64_t{1} << (bits - 1)) - 1;
  return draw_word(rng, -hi - 1, hi);
}

/// "0x<two's complement hex> (<value>)".
inline std::string hex(std::int64_t v) {
  std::ostringstream os;
  os << "0x" << std::hex << static_cast<std::uint64_t>(v) << std::dec << " (" << v << ")";
  return os.str();
}

inline std::string describe(const fixedpoint::counters& c) {
  std::ostringstream os;
  os << "{requantized " << c.requantized << ", overflowed " << c.overflowed << ", inexact " << c.inexact
     << ", max_excess_lsb " << c.max_excess_lsb << "}";
  return os.str();
}

}  // namespace fxmimo::test_support
