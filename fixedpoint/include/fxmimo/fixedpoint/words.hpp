#pragma once
/// Words as hardware sees them: W-bit two's-complement patterns in hex or binary.

#include <optional>
#include <string>
#include <string_view>

#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/integer.hpp"

namespace fxmimo::fixedpoint {

/// Exactly ceil(W/4) lower-case hex digits of the W-bit two's-complement pattern of raw
/// (raw must be a word of `fmt`). -1 in 16 bits -> "ffff" (as Verilog %h prints it).
std::string to_hex_word(const big_int& raw, const format& fmt);
std::string to_hex_word(std::int64_t raw, int word_bits);
/// Exactly W binary digits of the same pattern.
std::string to_bin_word(const big_int& raw, const format& fmt);

/// Reads a pattern of hex (base 16) or binary (base 2) digits, no prefix, into the word it
/// stands for in `fmt` (sign-extended from bit W-1 when signed). std::nullopt when a digit is
/// not of the base or the pattern has bits beyond W set.
std::optional<big_int> parse_word(std::string_view digits, int base, const format& fmt);

}  // namespace fxmimo::fixedpoint
