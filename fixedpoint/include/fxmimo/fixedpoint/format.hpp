#pragma once
/// Run-time fixed-point formats: (signedness, word bits W, fraction bits F). A word r stands
/// for the value r * 2^-F. F may be negative or larger than W.

#include <stdexcept>
#include <string>
#include <string_view>

namespace fxmimo::fixedpoint {

/// Thrown for a malformed format text or an impossible format; what() names the text.
struct format_error : std::invalid_argument {
  using std::invalid_argument::invalid_argument;
};

inline constexpr int max_word_bits = 128;

struct format {
  bool is_signed = true;
  int word_bits = 16;  ///< W, 1..128
  int frac_bits = 15;  ///< F, any integer with |F| <= 4096

  /// Integer bits m of Qm.n: signed m = W - 1 - F (sign bit excluded), unsigned m = W - F.
  [[nodiscard]] int int_bits() const { return is_signed ? word_bits - 1 - frac_bits : word_bits - frac_bits; }
  /// The format of the same signedness with m integer and n fraction bits: signed Qm.n has
  /// 1 + m + n bits, unsigned UQm.n has m + n.
  [[nodiscard]] format with_int_frac(int int_bits_m, int frac_bits_n) const {
    return {is_signed, (is_signed ? 1 : 0) + int_bits_m + frac_bits_n, frac_bits_n};
  }
  /// Value of one LSB, 2^-F.
  [[nodiscard]] double lsb() const;
  /// Smallest and largest representable values (signed: -2^(W-1-F) and 2^(W-1-F) - 2^-F).
  [[nodiscard]] double min_value() const;
  [[nodiscard]] double max_value() const;
  /// Bits a two's-complement container needs to hold every word of this format
  /// (W for signed, W + 1 for unsigned, because the container is signed).
  [[nodiscard]] int container_bits() const { return is_signed ? word_bits : word_bits + 1; }

  friend bool operator==(const format&, const format&) = default;
};

/// Checks W in 1..128 and |F| <= 4096; throws format_error naming the values otherwise.
void validate(const format& fmt);

/// Parses "Q3.12" (signed, 1+3+12 bits), "UQ1.15" (unsigned, 16 bits), "Q15" (= Q0.15),
/// "UQ16" (= UQ0.16), "Q-2.17" (negative integer bits: W = 16, F = 17), or the explicit forms
/// "16,12" (signed W,F) and "u16,12" (unsigned). Case-insensitive, no spaces inside.
/// Throws format_error("bad format 'TEXT': ...") naming the text.
format parse_format(std::string_view text);

/// Q notation as the trade writes it, sign bit excluded from m: "Q3.12", "UQ1.15", "Q-2.17".
std::string to_q_string(const format& fmt);
/// Q notation followed by the explicit width, e.g. "Q3.12 (16 bits)".
std::string describe(const format& fmt);

}  // namespace fxmimo::fixedpoint
