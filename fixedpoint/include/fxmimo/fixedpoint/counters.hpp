#pragma once
/// Per-node counters of the requantise stage. They never stop a run; reports show them.

#include <algorithm>
#include <cstdint>

namespace fxmimo::fixedpoint {

struct counters {
  std::uint64_t requantized = 0;  ///< values that passed through a requantise stage
  std::uint64_t overflowed = 0;   ///< values outside [min, max] before overflow handling
                                  ///< (and, for saturate_symmetric, the word -2^(W-1))
  std::uint64_t inexact = 0;      ///< values whose rounding dropped a non-zero part
  double max_excess_lsb = 0.0;    ///< largest distance outside [min, max], in LSBs of the
                                  ///< destination (for reporting; saturate_symmetric on
                                  ///< -2^(W-1) counts 1)

  void merge(const counters& other) {
    requantized += other.requantized;
    overflowed += other.overflowed;
    inexact += other.inexact;
    max_excess_lsb = std::max(max_excess_lsb, other.max_excess_lsb);
  }
  friend bool operator==(const counters&, const counters&) = default;
};

}  // namespace fxmimo::fixedpoint
