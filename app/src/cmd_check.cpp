// fxmimo check: an RTL output dump against the expected words of a vector set, bit for bit.
#include <fmt/core.h>

#include <memory>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "fxmimo/io/junit.hpp"
#include "fxmimo/vectors/compare.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "output_files.hpp"

namespace fxmimo::cli {

namespace {

struct check_options {
  std::string dir;
  std::string node;
  std::string port;
  std::vector<std::string> dumps;
  std::uint64_t tolerance_lsb = 0;
  std::size_t max_report = 10;
  bool json = false;
  std::string junit_path;
};

int run_check(const check_options& opt) {
  const vectors::vector_set set = vectors::read_vector_set(opt.dir);
  std::vector<std::filesystem::path> dumps(opt.dumps.begin(), opt.dumps.end());
  vectors::compare_options copt;
  copt.tolerance_lsb = opt.tolerance_lsb;
  copt.max_report = opt.max_report;
  const vectors::compare_report report = vectors::compare_dump(set, opt.node, dumps, copt, opt.port);
  if (opt.json) {
    fmt::print("{}\n", vectors::to_json(report).dump(2));
  } else {
    fmt::print("{}", vectors::format_report(report));
  }
  if (!opt.junit_path.empty()) {
    write_file_atomically(opt.junit_path,
                          io::to_junit_xml({vectors::to_junit(report, set.man.info.scenario_name)}, "fxmimo check"));
  }
  return report.passed() ? exit_ok : exit_check_failed;
}

}  // namespace

void add_check_command(CLI::App& app) {
  auto opt = std::make_shared<check_options>();
  CLI::App* cmd =
      app.add_subcommand("check", "Compare an RTL output dump with the expected words of a vector set, bit for bit");
  cmd->add_option("dir", opt->dir, "Vector set directory (holds manifest.json)")->required();
  cmd->add_option("-n,--node", opt->node, "Node whose expected (\"out\") words the dump must match")->required();
  cmd->add_option("-d,--dump", opt->dumps,
                  "Dump file in the set's word form, one word per line in the set's element order; a complex "
                  "node stored split takes two: --dump RE --dump IM")
      ->required();
  cmd->add_option("--port", opt->port, "Port of the node, when it has several \"out\" records");
  cmd->add_option("--tolerance-lsb", opt->tolerance_lsb, "Words within this many LSBs pass (default 0: bit-exact)")
      ->capture_default_str();
  cmd->add_option("--max-report", opt->max_report, "Failing words listed in full")->capture_default_str();
  cmd->add_flag("--json", opt->json, "Print the report as JSON");
  cmd->add_option("--junit", opt->junit_path, "Also write the verdict as JUnit XML (one test case: the node)");
  cmd->footer(
      "Exit code: 0 every word matches (or lies within --tolerance-lsb), 1 mismatch, 2 unreadable\n"
      "set or dump (x/z digits, wrong digit counts, too few or too many lines: the message names\n"
      "file and line).\n"
      "Examples:\n"
      "  fxmimo check vec/ --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex\n"
      "  fxmimo check vec/ --node tx_acc --dump sim/tx_acc_re.hex --dump sim/tx_acc_im.hex --max-report 50\n"
      "  fxmimo check vec/ --node norm --dump sim/norm.hex --tolerance-lsb 1 --json\n"
      "  fxmimo check vec/ --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex --junit check.xml");
  cmd->callback([opt] { run_guarded("check", [opt] { return run_check(*opt); }); });
}

}  // namespace fxmimo::cli
