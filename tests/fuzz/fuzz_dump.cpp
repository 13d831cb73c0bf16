// Fuzz target: hex and binary word dumps (RTL $fwrite output, vector files) through
// vectors::parse_word_lines. Words that parse must read back from their own file text.
//
// Input layout: byte 0 = radix (bit 7: binary) and signedness (bit 6: unsigned), byte 1 = word
// bits (1..64 signed, 1..63 unsigned, so every word fits the 64-bit words the reader returns),
// byte 2 = expected count (0: any, else 1..255); the rest is the file text.
#include <cstddef>
#include <cstdint>
#include <optional>
#include <string_view>
#include <vector>

#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/hex_file.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace fp = fxmimo::fixedpoint;
  namespace vec = fxmimo::vectors;
  if (size < 3) return 0;
  const vec::word_radix radix = (data[0] & 0x80U) != 0 ? vec::word_radix::bin : vec::word_radix::hex;
  fp::format fmt;
  fmt.is_signed = (data[0] & 0x40U) == 0;
  const int max_bits = fmt.is_signed ? 64 : 63;
  fmt.word_bits = 1 + data[1] % max_bits;
  if (fmt.is_signed && fmt.word_bits < 2) fmt.word_bits = 2;
  fmt.frac_bits = fmt.word_bits - 1;
  const std::optional<std::size_t> expected = data[2] == 0 ? std::nullopt : std::optional<std::size_t>(data[2]);
  const std::string_view text(reinterpret_cast<const char*>(data + 3), size - 3);

  std::vector<std::int64_t> words;
  try {
    words = vec::parse_word_lines(text, fmt, radix, expected, "fuzz.hex");
  } catch (const vec::vector_error&) {
    return 0;  // the documented error of a bad dump
  }
  if (expected && words.size() != *expected) __builtin_trap();
  // The canonical text of the words reads back as the same words.
  if (vec::parse_word_lines(vec::format_word_lines(words, fmt, radix), fmt, radix, words.size(), "again.hex") !=
      words) {
    __builtin_trap();
  }
  return 0;
}
