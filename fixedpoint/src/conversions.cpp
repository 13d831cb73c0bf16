#include "fxmimo/fixedpoint/conversions.hpp"

#include <cctype>

namespace fxmimo::fixedpoint {

binary_rational decompose(double v) {
  if (std::isnan(v)) throw std::domain_error("not a number (NaN) has no fixed-point value");
  if (v == 0.0) return {0, 0};
  int exp = 0;
  const double mant = std::frexp(v, &exp);  // v = mant 2^exp, 0.5 <= |mant| < 1
  // mant 2^53 is an integer: a double carries at most 53 significant bits.
  const auto m = static_cast<std::int64_t>(std::ldexp(mant, 53));
  return {m, exp - 53};
}

decimal_value parse_decimal(std::string_view text) {
  auto bad = [&](const char* why) { return std::invalid_argument("bad number '" + std::string(text) + "': " + why); };
  std::size_t i = 0;
  bool negative = false;
  if (i < text.size() && (text[i] == '+' || text[i] == '-')) negative = text[i++] == '-';
  decimal_value out;
  bool any_digit = false;
  bool after_point = false;
  for (; i < text.size(); ++i) {
    const char ch = text[i];
    if (std::isdigit(static_cast<unsigned char>(ch))) {
      out.digits = out.digits * 10 + (ch - '0');
      if (after_point) --out.exp10;
      any_digit = true;
    } else if (ch == '.' && !after_point) {
      after_point = true;
    } else {
      break;
    }
  }
  if (!any_digit) throw bad("expected a decimal number such as -0.375 or 1.5e-3");
  if (i < text.size() && (text[i] == 'e' || text[i] == 'E')) {
    ++i;
    bool exp_negative = false;
    if (i < text.size() && (text[i] == '+' || text[i] == '-')) exp_negative = text[i++] == '-';
    long exp = 0;
    bool exp_digit = false;
    for (; i < text.size() && std::isdigit(static_cast<unsigned char>(text[i])); ++i) {
      exp = exp * 10 + (text[i] - '0');
      exp_digit = true;
      if (exp > 100000) throw bad("exponent too large");
    }
    if (!exp_digit) throw bad("exponent without digits");
    out.exp10 += static_cast<int>(exp_negative ? -exp : exp);
  }
  if (i != text.size()) throw bad("unexpected character");
  if (out.exp10 < -100000 || out.exp10 > 100000) throw bad("exponent too large");
  if (negative) out.digits = -out.digits;
  return out;
}

std::string exact_decimal(const big_int& raw, int frac) {
  if (frac <= 0) return shift_left(raw, -frac).str();
  // raw / 2^frac = raw 5^frac / 10^frac.
  const bool negative = raw < 0;
  big_int scaled = negative ? big_int(-raw) : raw;
  for (int i = 0; i < frac; ++i) scaled *= 5;
  std::string digits = scaled.str();
  if (digits.size() <= static_cast<std::size_t>(frac))
    digits.insert(0, static_cast<std::size_t>(frac) + 1 - digits.size(), '0');
  std::string out = digits.substr(0, digits.size() - static_cast<std::size_t>(frac)) + "." +
                    digits.substr(digits.size() - static_cast<std::size_t>(frac));
  while (out.back() == '0') out.pop_back();
  if (out.back() == '.') out.pop_back();
  return (negative && raw != 0 ? "-" : "") + out;
}

}  // namespace fxmimo::fixedpoint
