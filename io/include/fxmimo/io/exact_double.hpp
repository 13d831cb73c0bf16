#pragma once
/// Doubles as text that reads back to the same 64 bits: a finite value as a hexadecimal
/// floating-point literal (C99 / C++17 hexfloat, e.g. "0x1.8p+1", "-0x0p+0", "0x0.0000000000001p-1022"),
/// "inf" and "-inf", and a NaN as "nan:" and its 16 hex digits of bits. Files that hand per-trial
/// figures from one process to another (fxmimo's partial results) write doubles so; decimal text
/// would need 17 significant digits and a correctly rounding reader on both sides.

#include <optional>
#include <string>
#include <string_view>

namespace fxmimo::io {

/// The text of `v` (see above).
std::string exact_double_text(double v);

/// The double of a text exact_double_text wrote; nullopt for anything else.
std::optional<double> parse_exact_double(std::string_view text);

}  // namespace fxmimo::io
