// Fuzz target: the quant command's inputs, decimal numbers (parse_decimal, from_decimal) and
// hex or binary words (parse_word), into a format chosen by the first bytes.
//
// Input layout: byte 0 = signedness (bit 7) and word bits (low 7 bits, 1..128), bytes 1-2 =
// fraction bits (-4096..4096), byte 3 = rounding (bits 0-2), overflow (bits 3-4) and what the
// text is (bits 5-6: decimal, hex word, binary word); the rest is the text.
#include <cstddef>
#include <cstdint>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>

#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/words.hpp"

namespace {

namespace fp = fxmimo::fixedpoint;

/// True when raw is a word of fmt: [-2^(W-1), 2^(W-1) - 1] signed, [0, 2^W - 1] unsigned.
bool is_word_of(const fp::big_int& raw, const fp::format& fmt) {
  const fp::big_int one = 1;
  if (fmt.is_signed) {
    const fp::big_int half = one << (fmt.word_bits - 1);
    return raw >= -half && raw < half;
  }
  return raw >= 0 && raw < (one << fmt.word_bits);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size < 4) return 0;
  fp::target tgt;
  tgt.fmt.is_signed = (data[0] & 0x80U) == 0;
  tgt.fmt.word_bits = 1 + (data[0] & 0x7F);
  if (tgt.fmt.is_signed && tgt.fmt.word_bits < 2) tgt.fmt.word_bits = 2;  // sign and one more bit
  tgt.fmt.frac_bits = (data[1] | (data[2] << 8)) % 8193 - 4096;
  tgt.rounding = fp::all_rounding_modes[data[3] & 0x07U];
  tgt.overflow = fp::all_overflow_modes[(data[3] >> 3) & 0x03U];
  const unsigned kind = (data[3] >> 5) & 0x03U;
  const std::string_view text(reinterpret_cast<const char*>(data + 4), size - 4);

  if (kind == 1 || kind == 2) {
    const int base = kind == 1 ? 16 : 2;
    const std::optional<fp::big_int> word = fp::parse_word(text, base, tgt.fmt);
    if (!word) return 0;  // not digits of the base, or bits beyond W: the documented refusal
    if (!is_word_of(*word, tgt.fmt)) __builtin_trap();
    // Word -> pattern -> word is the identity.
    const std::string pattern = base == 16 ? fp::to_hex_word(*word, tgt.fmt) : fp::to_bin_word(*word, tgt.fmt);
    if (fp::parse_word(pattern, base, tgt.fmt) != word) __builtin_trap();
    return 0;
  }

  fp::decimal_value value;
  try {
    value = fp::parse_decimal(text);
  } catch (const std::invalid_argument&) {
    return 0;  // the documented error of a bad number
  }
  fp::counters c;
  const fp::big_int word = fp::from_decimal<fp::big_int>(value, tgt, c);
  // Whatever the overflow mode, the result is a word of the target format.
  if (!is_word_of(word, tgt.fmt)) __builtin_trap();
  if (fp::fits_container<std::int64_t>(tgt.fmt)) {
    // The 64-bit path gives the same word as the exact one.
    fp::counters c64;
    if (fp::big_int(fp::from_decimal<std::int64_t>(value, tgt, c64)) != word) __builtin_trap();
  }
  return 0;
}
