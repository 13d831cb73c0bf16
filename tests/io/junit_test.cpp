// JUnit XML: the documents the writer makes are validated by libxml2's xmllint against
// tests/io/junit.xsd (the structure CI servers read, after the Jenkins JUnit plugin's schema,
// from memory); texts with markup characters and control bytes come back as written.
#include "fxmimo/io/junit.hpp"

#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <array>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>

namespace {

namespace fs = std::filesystem;
using fxmimo::io::junit_case;
using fxmimo::io::junit_suite;

const fs::path schema = fs::path(FXMIMO_SOURCE_DIR) / "tests" / "io" / "junit.xsd";

struct run_result {
  int exit_code = -1;
  std::string output;
};

run_result run(const std::string& command) {
  run_result r;
  FILE* pipe = popen((command + " 2>&1").c_str(), "r");
  if (pipe == nullptr) return r;
  std::array<char, 4096> buffer{};
  while (std::fgets(buffer.data(), static_cast<int>(buffer.size()), pipe) != nullptr) r.output += buffer.data();
  const int status = pclose(pipe);
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  return r;
}

fs::path write_scratch(const std::string& name, const std::string& text) {
  const fs::path dir = fs::temp_directory_path() / ("fxmimo_junit_" + std::to_string(::getpid()));
  fs::create_directories(dir);
  std::ofstream(dir / name, std::ios::binary) << text;
  return dir / name;
}

bool have_xmllint() { return fs::exists("/usr/bin/xmllint"); }

std::vector<junit_suite> example_suites() {
  junit_suite check;
  check.name = "fxmimo check dac/out";
  check.properties = {{"scenario", "a <b> & \"c\""}};
  junit_case pass{"dac/out", "fxmimo.check.s", 0.25, false, "", "", "dac/out: PASS\n"};
  junit_case fail{"tx_acc/out",
                  "fxmimo.check.s",
                  0.0,
                  true,
                  "2 of 8 words differ\nsecond line",
                  "mismatch",
                  "flat 3: expected 0x1f, got 0x20 <x> & 'y'\x01\n"};
  check.cases = {pass, fail};
  junit_suite empty;
  empty.name = "nothing";
  return {check, empty};
}

TEST(junit, the_document_is_valid_against_the_ci_schema) {
  if (!have_xmllint()) GTEST_SKIP() << "xmllint (Debian package libxml2-utils) is absent: the schema is not checked";
  const std::string xml = fxmimo::io::to_junit_xml(example_suites(), "fxmimo");
  const fs::path file = write_scratch("valid.xml", xml);
  const run_result r = run("xmllint --noout --schema '" + schema.string() + "' '" + file.string() + "'");
  EXPECT_EQ(r.exit_code, 0) << r.output << xml;
  // The schema check can fail: a test case without its name does not validate.
  std::string broken = xml;
  broken.replace(broken.find("<testcase name=\"dac/out\""), 25, "<testcase");
  const fs::path bad = write_scratch("broken.xml", broken);
  EXPECT_NE(run("xmllint --noout --schema '" + schema.string() + "' '" + bad.string() + "'").exit_code, 0);
}

TEST(junit, counts_and_texts_come_back_as_written) {
  if (!have_xmllint()) GTEST_SKIP() << "xmllint (Debian package libxml2-utils) is absent";
  const fs::path file = write_scratch("texts.xml", fxmimo::io::to_junit_xml(example_suites(), "fxmimo"));
  // XPath through libxml2: the parser's view, not our own string search.
  const auto xpath = [&](const std::string& expr) {
    std::string out = run("xmllint --xpath '" + expr + "' '" + file.string() + "'").output;
    if (!out.empty() && out.back() == '\n') out.pop_back();  // xmllint ends a string result with one
    return out;
  };
  EXPECT_EQ(xpath("string(/testsuites/@tests)"), "2");
  EXPECT_EQ(xpath("string(/testsuites/@failures)"), "1");
  EXPECT_EQ(xpath("string(/testsuites/testsuite[1]/@failures)"), "1");
  EXPECT_EQ(xpath("string(/testsuites/testsuite[2]/@tests)"), "0");
  EXPECT_EQ(xpath("string(//property[@name=\"scenario\"]/@value)"), "a <b> & \"c\"");
  EXPECT_EQ(xpath("string(//testcase[@name=\"tx_acc/out\"]/failure/@message)"), "2 of 8 words differ second line")
      << "a message is one line";
  EXPECT_EQ(xpath("string(//testcase[@name=\"tx_acc/out\"]/failure)"), "flat 3: expected 0x1f, got 0x20 <x> & 'y'?\n")
      << "a control byte XML forbids becomes '?'";
  EXPECT_EQ(xpath("string(//testcase[@name=\"dac/out\"]/system-out)"), "dac/out: PASS\n");
  EXPECT_EQ(xpath("string(//testcase[@name=\"dac/out\"]/@time)"), "0.250");
}

}  // namespace
