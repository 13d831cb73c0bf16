#pragma once
/// JUnit XML: the test-results format continuous-integration servers read (the de facto schema
/// of Ant's JUnit task, as CI servers accept it). One <testsuites> document of suites of test
/// cases; a case that failed carries a <failure> with a one-line message and the details as text.

#include <string>
#include <vector>

namespace fxmimo::io {

struct junit_property {
  std::string name, value;
};

struct junit_case {
  std::string name;       ///< e.g. "dac/out" or "implementation EVM"
  std::string classname;  ///< the group CI servers sort by, e.g. "fxmimo.check.village-16-mf"
  double time_s = 0.0;
  bool failed = false;
  std::string failure_message;  ///< one line (newlines become spaces)
  std::string failure_type;     ///< e.g. "mismatch", "limit"
  std::string details;          ///< the failure's text, or the case's <system-out> when it passed
};

struct junit_suite {
  std::string name;
  double time_s = 0.0;
  std::vector<junit_property> properties;
  std::vector<junit_case> cases;
};

/// The XML document (UTF-8, every text and attribute escaped; characters XML 1.0 forbids become
/// '?'), with tests/failures/errors/skipped counts on every suite and on the root.
std::string to_junit_xml(const std::vector<junit_suite>& suites, const std::string& name);

}  // namespace fxmimo::io
