#include "fxmimo/fixedpoint/format.hpp"

#include <cctype>
#include <charconv>
#include <cmath>
#include <optional>

namespace fxmimo::fixedpoint {

namespace {

constexpr int max_abs_frac_bits = 4096;

[[noreturn]] void fail(std::string_view text, std::string_view why) {
  throw format_error("bad format '" + std::string(text) + "': " + std::string(why));
}

/// Whole-string signed integer; nullopt when anything else is there.
std::optional<int> parse_int(std::string_view s) {
  if (s.empty()) return std::nullopt;
  std::string_view digits = s;
  if (digits.front() == '+') digits.remove_prefix(1);
  int value = 0;
  const char* end = digits.data() + digits.size();
  auto [ptr, ec] = std::from_chars(digits.data(), end, value);
  if (ec != std::errc{} || ptr != end) return std::nullopt;
  return value;
}

}  // namespace

double format::lsb() const { return std::ldexp(1.0, -frac_bits); }
double format::min_value() const { return is_signed ? -std::ldexp(1.0, word_bits - 1 - frac_bits) : 0.0; }
double format::max_value() const {
  const int top = is_signed ? word_bits - 1 : word_bits;
  return std::ldexp(1.0, top - frac_bits) - std::ldexp(1.0, -frac_bits);
}

void validate(const format& fmt) {
  if (fmt.word_bits < 1 || fmt.word_bits > max_word_bits)
    throw format_error("bad format: word bits " + std::to_string(fmt.word_bits) + " outside 1..128");
  if (fmt.frac_bits < -max_abs_frac_bits || fmt.frac_bits > max_abs_frac_bits)
    throw format_error("bad format: fraction bits " + std::to_string(fmt.frac_bits) + " outside -4096..4096");
  if (fmt.is_signed && fmt.word_bits < 2)
    throw format_error("bad format: a signed format needs at least 2 bits (sign and one more)");
}

format parse_format(std::string_view text) {
  std::string lower;
  for (char ch : text) lower += static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  std::string_view s = lower;
  if (s.empty()) fail(text, "empty");
  format fmt;
  if (s.find(',') != std::string_view::npos) {
    // Explicit "W,F" or "uW,F".
    fmt.is_signed = s.front() != 'u';
    if (!fmt.is_signed) s.remove_prefix(1);
    const auto comma = s.find(',');
    const auto w = parse_int(s.substr(0, comma));
    const auto f = parse_int(s.substr(comma + 1));
    if (!w || !f) fail(text, "expected W,F or uW,F with integers, e.g. 16,15");
    fmt.word_bits = *w;
    fmt.frac_bits = *f;
  } else {
    // Q notation: Qm.n, UQm.n, Qn (= Q0.n).
    if (s.rfind("uq", 0) == 0) {
      fmt.is_signed = false;
      s.remove_prefix(2);
    } else if (s.rfind("q", 0) == 0) {
      fmt.is_signed = true;
      s.remove_prefix(1);
    } else {
      fail(text, "expected Qm.n, UQm.n, W,F or uW,F");
    }
    int m = 0;
    int n = 0;
    const auto dot = s.find('.');
    if (dot == std::string_view::npos) {
      const auto only = parse_int(s);
      if (!only) fail(text, "expected Qm.n, e.g. Q1.14");
      n = *only;
    } else {
      const auto mm = parse_int(s.substr(0, dot));
      const auto nn = parse_int(s.substr(dot + 1));
      if (!mm || !nn) fail(text, "expected Qm.n with integers m and n, e.g. Q1.14");
      m = *mm;
      n = *nn;
    }
    fmt.frac_bits = n;
    const long width = static_cast<long>(m) + n + (fmt.is_signed ? 1 : 0);
    if (width < 1 || width > max_word_bits) fail(text, "word length " + std::to_string(width) + " outside 1..128");
    fmt.word_bits = static_cast<int>(width);
  }
  try {
    validate(fmt);
  } catch (const format_error& e) {
    fail(text, std::string(e.what()).substr(std::string("bad format: ").size()));
  }
  return fmt;
}

std::string to_q_string(const format& fmt) {
  return std::string(fmt.is_signed ? "Q" : "UQ") + std::to_string(fmt.int_bits()) + "." + std::to_string(fmt.frac_bits);
}

std::string describe(const format& fmt) {
  return to_q_string(fmt) + " (" + std::to_string(fmt.word_bits) +
         (fmt.is_signed ? " bits signed)" : " bits unsigned)");
}

}  // namespace fxmimo::fixedpoint
