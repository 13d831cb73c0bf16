#include "fxmimo/io/exact_double.hpp"

#include <fmt/core.h>

#include <bit>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <stdexcept>

namespace fxmimo::io {

std::string exact_double_text(double v) {
  if (std::isnan(v)) return fmt::format("nan:{:016x}", std::bit_cast<std::uint64_t>(v));
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  // to_chars in hex form is exact (C++17 [charconv.to.chars]: the shortest hex that reads back
  // to the same value); it writes neither "0x" nor, for negative values, anything before the sign.
  char digits[40];
  const auto [end, ec] = std::to_chars(digits, digits + sizeof digits, std::abs(v), std::chars_format::hex);
  if (ec != std::errc{}) throw std::logic_error("exact_double_text: to_chars failed");
  return (std::signbit(v) ? "-0x" : "0x") + std::string(digits, end);
}

std::optional<double> parse_exact_double(std::string_view text) {
  if (text == "inf") return HUGE_VAL;
  if (text == "-inf") return -HUGE_VAL;
  if (text.starts_with("nan:")) {
    const std::string_view hex = text.substr(4);
    std::uint64_t bits = 0;
    const auto [ptr, ec] = std::from_chars(hex.data(), hex.data() + hex.size(), bits, 16);
    if (hex.size() != 16 || ec != std::errc{} || ptr != hex.data() + hex.size()) return std::nullopt;
    const double v = std::bit_cast<double>(bits);
    if (!std::isnan(v)) return std::nullopt;
    return v;
  }
  const bool negative = text.starts_with('-');
  if (negative) text.remove_prefix(1);
  if (!text.starts_with("0x")) return std::nullopt;
  text.remove_prefix(2);
  // from_chars would take a second sign, or "inf" and "nan": the text after "0x" starts with a digit.
  if (text.empty() || std::isxdigit(static_cast<unsigned char>(text.front())) == 0) return std::nullopt;
  double v = 0;
  const auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), v, std::chars_format::hex);
  if (ec != std::errc{} || ptr != text.data() + text.size()) return std::nullopt;
  return negative ? -v : v;
}

}  // namespace fxmimo::io
