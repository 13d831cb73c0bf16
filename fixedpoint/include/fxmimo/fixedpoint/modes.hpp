#pragma once
/// Rounding and overflow modes of the requantise operation (README "How it computes").

#include <array>
#include <optional>
#include <string>
#include <string_view>

namespace fxmimo::fixedpoint {

/// How fraction bits are dropped. Each mode is defined on the exact value x (in units of the
/// new LSB): floor = largest integer <= x; ceil = smallest integer >= x; toward_zero = floor for
/// x >= 0, ceil for x < 0; the half_* modes pick the nearest integer and differ only on exact
/// ties (x = n + 1/2): half_up -> n+1 (toward +inf), half_down -> n (toward -inf),
/// half_toward_zero -> the one nearer 0, half_away -> the one farther from 0, half_even -> the
/// even one. IEEE 1666 SystemC twins: SC_TRN, -, SC_TRN_ZERO, SC_RND, SC_RND_MIN_INF,
/// SC_RND_ZERO, SC_RND_INF, SC_RND_CONV.
enum class rounding_mode { floor, ceil, toward_zero, half_up, half_down, half_toward_zero, half_away, half_even };

/// What happens to a value outside the destination range [min, max]:
/// wrap = keep the W low bits (two's complement modulo 2^W); saturate = clip to min/max;
/// saturate_symmetric = clip to +-max (so the most negative word -2^(W-1), itself in range,
/// also becomes -max, as SystemC SC_SAT_SYM does); saturate_zero = the value becomes 0.
enum class overflow_mode { wrap, saturate, saturate_symmetric, saturate_zero };

inline constexpr std::array all_rounding_modes{rounding_mode::floor,       rounding_mode::ceil,
                                               rounding_mode::toward_zero, rounding_mode::half_up,
                                               rounding_mode::half_down,   rounding_mode::half_toward_zero,
                                               rounding_mode::half_away,   rounding_mode::half_even};
inline constexpr std::array all_overflow_modes{overflow_mode::wrap, overflow_mode::saturate,
                                               overflow_mode::saturate_symmetric, overflow_mode::saturate_zero};

/// Lower-case name as written in scenario files and on the command line ("half_even").
std::string_view to_string(rounding_mode mode);
std::string_view to_string(overflow_mode mode);
/// Inverse of to_string; std::nullopt for an unknown name.
std::optional<rounding_mode> parse_rounding_mode(std::string_view text);
std::optional<overflow_mode> parse_overflow_mode(std::string_view text);
/// "floor, ceil, ..." for error messages and help text.
std::string list_rounding_modes();
std::string list_overflow_modes();

}  // namespace fxmimo::fixedpoint
