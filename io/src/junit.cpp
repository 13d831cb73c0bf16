#include "fxmimo/io/junit.hpp"

#include <fmt/core.h>

#include <algorithm>

namespace fxmimo::io {

namespace {

/// Text and attribute values: the five XML specials escaped, control characters other than tab,
/// newline and carriage return (forbidden in XML 1.0) as '?'; in attributes, newlines too.
std::string esc(std::string_view text, bool attribute) {
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    switch (ch) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&apos;"; break;
      case '\n':
      case '\r': out += attribute ? ' ' : ch; break;
      default: out += static_cast<unsigned char>(ch) < 0x20 && ch != '\t' ? '?' : ch;
    }
  }
  return out;
}

std::string seconds(double s) { return fmt::format("{:.3f}", std::max(0.0, s)); }

}  // namespace

std::string to_junit_xml(const std::vector<junit_suite>& suites, const std::string& name) {
  std::size_t tests = 0, failures = 0;
  double time = 0.0;
  for (const junit_suite& s : suites) {
    tests += s.cases.size();
    failures += static_cast<std::size_t>(
        std::count_if(s.cases.begin(), s.cases.end(), [](const junit_case& c) { return c.failed; }));
    time += s.time_s;
  }
  std::string out = "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n";
  out += fmt::format("<testsuites name=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"0\" time=\"{}\">\n",
                     esc(name, true), tests, failures, seconds(time));
  for (std::size_t i = 0; i < suites.size(); ++i) {
    const junit_suite& s = suites[i];
    const auto failed = std::count_if(s.cases.begin(), s.cases.end(), [](const junit_case& c) { return c.failed; });
    out += fmt::format(
        "  <testsuite name=\"{}\" id=\"{}\" tests=\"{}\" failures=\"{}\" errors=\"0\" skipped=\"0\" time=\"{}\">\n",
        esc(s.name, true), i, s.cases.size(), failed, seconds(s.time_s));
    if (!s.properties.empty()) {
      out += "    <properties>\n";
      for (const junit_property& p : s.properties) {
        out += fmt::format("      <property name=\"{}\" value=\"{}\"/>\n", esc(p.name, true), esc(p.value, true));
      }
      out += "    </properties>\n";
    }
    for (const junit_case& c : s.cases) {
      out += fmt::format("    <testcase name=\"{}\" classname=\"{}\" time=\"{}\"", esc(c.name, true),
                         esc(c.classname, true), seconds(c.time_s));
      if (c.failed) {
        out += fmt::format(">\n      <failure message=\"{}\" type=\"{}\">{}</failure>\n    </testcase>\n",
                           esc(c.failure_message, true), esc(c.failure_type, true), esc(c.details, false));
      } else if (!c.details.empty()) {
        out += fmt::format(">\n      <system-out>{}</system-out>\n    </testcase>\n", esc(c.details, false));
      } else {
        out += "/>\n";
      }
    }
    out += "  </testsuite>\n";
  }
  out += "</testsuites>\n";
  return out;
}

}  // namespace fxmimo::io
