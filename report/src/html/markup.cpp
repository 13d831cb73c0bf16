#include "markup.hpp"

#include <algorithm>
#include <cmath>

namespace fxmimo::report::html {

// ---------------------------------------------------------------------------------------------
// Text

/// Text for element content and attribute values: the five XML specials escaped; control
/// characters XML 1.0 forbids become '?'.
std::string esc(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    switch (ch) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default:
        if (static_cast<unsigned char>(ch) < 0x20 && ch != '\t' && ch != '\n' && ch != '\r') {
          out += '?';
        } else {
          out += ch;
        }
    }
  }
  return out;
}

/// A number for people: `sig` significant digits, exponents without padding ("1.5e-6").
std::string num(double v, int sig) {
  if (std::isnan(v)) return "NaN";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  std::string s = fmt::format("{:.{}g}", v, sig);
  const auto e = s.find('e');
  if (e == std::string::npos) return s;
  std::string mantissa = s.substr(0, e);
  const bool negative = s[e + 1] == '-';
  std::string digits = s.substr(e + 2);
  digits.erase(0, std::min(digits.find_first_not_of('0'), digits.size() - 1));
  return mantissa + "e" + (negative ? "-" : "") + digits;
}

/// "1 node", "3 nodes".
std::string count_of(std::size_t n, std::string_view noun) {
  return fmt::format("{} {}{}", n, noun, n == 1 ? "" : "s");
}

std::string count_text(std::uint64_t n) { return fmt::format("{}", n); }

std::string num_or_dash(const std::optional<double>& v, int sig) { return v ? num(*v, sig) : "—"; }

/// A pixel coordinate with two decimals (never "-0.00").
std::string px(double v) {
  if (std::abs(v) < 0.005) v = 0.0;
  return fmt::format("{:.2f}", v);
}

void page::row(const std::vector<std::string>& cells, bool header, std::string_view align) {
  out += "<tr>";
  for (std::size_t i = 0; i < cells.size(); ++i) {
    const char* tag = header ? "th" : "td";
    const bool left = i < align.size() && align[i] == 'l';
    out += fmt::format("<{0}{1}>{2}</{0}>", tag, left ? " class=\"l\"" : "", cells[i]);
  }
  out += "</tr>\n";
}

}  // namespace fxmimo::report::html
