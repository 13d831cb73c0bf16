#pragma once
/// Reciprocal and reciprocal square root the way hardware builds them: normalise the input by
/// its leading-one position, look up a seed in a ROM of 2^a entries, run n Newton-Raphson steps
/// with every intermediate requantised to its own target, then denormalise by a shift into the
/// output target (README "How it computes", "Divide and root units"). Integer-only; the
/// intermediates are exact big integers until each requantisation point.
///
/// Reciprocal of d (word, f_d fraction bits; D = d 2^-f_d), with A = |d|, L = bit length of A:
///   m     = Q_mant(A 2^-L)                           mantissa, A 2^-L in [1/2, 1)
///   i     = clamp(floor(m 2^(a+1)) - 2^a, 0, 2^a - 1)
///   x_0   = rom[i],  rom[i] = Q_rom(2^(a+2) / (2^(a+1) + 2 i + 1))   1 / midpoint of its interval
///   p_k   = Q_prod(m x_k)                            k = 0 .. n-1
///   x_k+1 = Q_iter(x_k (2 - p_k))                    2 - p_k exact at p's fraction bits
///   out   = Q_out(sign(d) x_n 2^(f_d - L))           the shift is exact; Q_out rounds once
/// Reciprocal square root of x (> 0), e = L - f_x, e' = e or e + 1, whichever is even,
/// L' = L + (e' - e):
///   m     = Q_mant(A 2^-L')                          in [1/4, 1)
///   h     = (m >= 1/2);  j = floor(m 2^(a + 1 - h)) - 2^(a-1), clamped to [0, 2^(a-1) - 1]
///   i     = h 2^(a-1) + j,  rom[i] = Q_rom(1 / sqrt((2^a + 2 j + 1) 2^-(a + 2 - h)))
///   s_k   = Q_sq(x_k^2);  p_k = Q_prod(m s_k);  x_k+1 = Q_iter(x_k (3 - p_k) / 2)
///   out   = Q_out(x_n 2^(-e'/2))
/// Corner cases, as the exact units of divide.hpp: a reciprocal of 0 and an rsqrt of 0 are
/// overflows toward +infinity, an rsqrt of a negative word counts an overflow and gives 0; the
/// intermediates are then 0 and not counted.

#include <cstdint>
#include <vector>

#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::fixedpoint {

/// Which function a unit computes.
enum class newton_function { reciprocal, rsqrt };

/// A table + Newton-Raphson unit: its seed bits a, its step count n and the targets of its
/// intermediates (square: the rsqrt's x_k^2 only).
struct newton_unit {
  newton_function function = newton_function::reciprocal;
  int seed_bits = 6;
  int steps = 2;
  target mant, rom, square, prod, iter;
};

/// Largest seed_bits and steps a unit accepts.
inline constexpr int max_newton_seed_bits = 16;
inline constexpr int max_newton_steps = 8;

/// Counters of one unit's intermediates (the output counts into the caller's counters).
struct newton_counters {
  counters mant, square, prod, iter;
};

/// The words of one evaluation: the mantissa, the ROM index, and per step s_k (rsqrt), p_k and
/// x_k+1.
struct newton_trace {
  std::int64_t mant = 0;
  int index = 0;
  std::vector<std::int64_t> square, prod, iter;
};

/// The seed ROM of a unit, 2^a words of its rom target (counted into `c`); throws
/// std::invalid_argument for seed_bits outside [1, max_newton_seed_bits] or steps outside
/// [0, max_newton_steps].
std::vector<std::int64_t> newton_rom(const newton_unit& unit, counters& c);

/// One evaluation (definitions above): `rom` is newton_rom(unit); `out` the output target.
std::int64_t newton_evaluate(const newton_unit& unit, const std::vector<std::int64_t>& rom, std::int64_t x, int x_frac,
                             const target& out, counters& out_counters, newton_counters& c, newton_trace& trace);

}  // namespace fxmimo::fixedpoint
