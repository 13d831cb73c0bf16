#include "fxmimo/fixedpoint/words.hpp"

namespace fxmimo::fixedpoint {

namespace {

/// The W-bit two's-complement pattern of raw as a non-negative integer.
big_int pattern_of(const big_int& raw, int word_bits) {
  const big_int modulus = pow2<big_int>(word_bits);
  big_int p = raw % modulus;  // sign of raw
  if (p < 0) p += modulus;
  return p;
}

std::string digits_of(big_int pattern, int num_digits, int bits_per_digit) {
  static constexpr char hex[] = "0123456789abcdef";
  std::string out(static_cast<std::size_t>(num_digits), '0');
  const unsigned mask = (1U << bits_per_digit) - 1U;
  for (int i = num_digits - 1; i >= 0; --i) {
    out[static_cast<std::size_t>(i)] = hex[static_cast<unsigned>(pattern & mask)];
    pattern >>= static_cast<unsigned>(bits_per_digit);
  }
  return out;
}

}  // namespace

std::string to_hex_word(const big_int& raw, const format& fmt) {
  return digits_of(pattern_of(raw, fmt.word_bits), (fmt.word_bits + 3) / 4, 4);
}

std::string to_hex_word(std::int64_t raw, int word_bits) {
  static constexpr char hex[] = "0123456789abcdef";
  const int num_digits = (word_bits + 3) / 4;
  auto pattern = static_cast<std::uint64_t>(raw);
  std::string out(static_cast<std::size_t>(num_digits), '0');
  for (int i = num_digits - 1; i >= 0; --i) {
    out[static_cast<std::size_t>(i)] = hex[pattern & 0xFU];
    pattern >>= 4U;
  }
  if (word_bits % 4 != 0) {
    // The top digit keeps only the bits of the word.
    const unsigned top_bits = static_cast<unsigned>(word_bits % 4);
    const auto top = static_cast<std::uint64_t>(raw) >> (4U * static_cast<unsigned>(num_digits - 1));
    out[0] = hex[top & ((1U << top_bits) - 1U)];
  }
  return out;
}

std::string to_bin_word(const big_int& raw, const format& fmt) {
  return digits_of(pattern_of(raw, fmt.word_bits), fmt.word_bits, 1);
}

std::optional<big_int> parse_word(std::string_view digits, int base, const format& fmt) {
  if (digits.empty()) return std::nullopt;
  big_int pattern = 0;
  for (char ch : digits) {
    int d = -1;
    if (ch >= '0' && ch <= '9')
      d = ch - '0';
    else if (ch >= 'a' && ch <= 'f')
      d = ch - 'a' + 10;
    else if (ch >= 'A' && ch <= 'F')
      d = ch - 'A' + 10;
    if (d < 0 || d >= base) return std::nullopt;
    pattern = pattern * base + d;
  }
  const big_int modulus = pow2<big_int>(fmt.word_bits);
  if (pattern >= modulus) return std::nullopt;
  if (fmt.is_signed && pattern >= pow2<big_int>(fmt.word_bits - 1)) pattern -= modulus;
  return pattern;
}

}  // namespace fxmimo::fixedpoint
