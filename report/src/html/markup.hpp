#pragma once
// The HTML report's text and table markup: escaping, numbers for people, pixel coordinates, and
// the page being written. The page is HTML that is also well-formed XML: every element closed,
// attributes quoted, every text escaped, no named entities besides the five of XML.

#include <fmt/core.h>

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace fxmimo::report::html {

/// Text for element content and attribute values: the five XML specials escaped; control
/// characters XML 1.0 forbids become '?'.
std::string esc(std::string_view text);

/// A number for people: `sig` significant digits, exponents without padding ("1.5e-6").
std::string num(double v, int sig = 4);

/// "1 node", "3 nodes".
std::string count_of(std::size_t n, std::string_view noun);

/// A count in full ("161280"), as every table of the page writes one.
std::string count_text(std::uint64_t n);

/// A figure, or "—" when it has no value.
std::string num_or_dash(const std::optional<double>& v, int sig = 4);

/// A pixel coordinate with two decimals (never "-0.00").
std::string px(double v);

/// The page being written, with unique chart ids.
class page {
 public:
  std::string out;

  std::string next_id(std::string_view what) { return fmt::format("c{}-{}", ++num_ids_, what); }

  /// One table row of ready markup; `align` has an 'l' for each left-aligned (text) column, the
  /// others are right-aligned numbers.
  void row(const std::vector<std::string>& cells, bool header = false, std::string_view align = "l");

 private:
  int num_ids_ = 0;
};

}  // namespace fxmimo::report::html
