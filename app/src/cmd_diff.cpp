// fxmimo diff: regression between two vector sets, record by record.
#include <fmt/core.h>

#include <memory>
#include <nlohmann/json.hpp>

#include "commands.hpp"
#include "fxmimo/io/junit.hpp"
#include "fxmimo/vectors/set_diff.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "output_files.hpp"

namespace fxmimo::cli {

namespace {

struct diff_options {
  std::string dir_a;
  std::string dir_b;
  std::vector<std::string> allowed;
  bool json = false;
  std::string junit_path;
};

int run_diff(const diff_options& opt) {
  const vectors::vector_set a = vectors::read_vector_set(opt.dir_a);
  const vectors::vector_set b = vectors::read_vector_set(opt.dir_b);
  const vectors::set_diff_report report = vectors::diff_vector_sets(a, b, opt.allowed);
  if (opt.json) {
    fmt::print("{}\n", vectors::to_json(report).dump(2));
  } else {
    fmt::print("A: {}\nB: {}\n{}", opt.dir_a, opt.dir_b, vectors::format_diff(report));
  }
  if (!opt.junit_path.empty()) {
    write_file_atomically(opt.junit_path, io::to_junit_xml({vectors::to_junit(report)}, "fxmimo diff"));
  }
  return report.unallowed_changes() == 0 ? exit_ok : exit_check_failed;
}

}  // namespace

void add_diff_command(CLI::App& app) {
  auto opt = std::make_shared<diff_options>();
  CLI::App* cmd =
      app.add_subcommand("diff", "Compare two vector sets node by node (regression after a datapath change)");
  cmd->add_option("dir_a", opt->dir_a, "Reference vector set (A)")->required();
  cmd->add_option("dir_b", opt->dir_b, "New vector set (B)")->required();
  cmd->add_option("--allow", opt->allowed, "Nodes whose change is intended (reported, not failed)");
  cmd->add_flag("--json", opt->json, "Print the report as JSON");
  cmd->add_option("--junit", opt->junit_path, "Also write the result as JUnit XML (one test case per record)");
  cmd->footer(
      "Per record: identical / changed / added / removed, changed words, max |B - A| in LSBs of A,\n"
      "SQNR of B against A in dB.\n"
      "Exit code: 0 nothing changed outside --allow, 1 an unallowed change, 2 unreadable set.\n"
      "Examples:\n"
      "  fxmimo diff vec_main/ vec_branch/\n"
      "  fxmimo diff vec_main/ vec_branch/ --allow tx_acc --allow dac\n"
      "  fxmimo diff vec_main/ vec_branch/ --json > diff.json\n"
      "  fxmimo diff vec_main/ vec_branch/ --junit diff.xml");
  cmd->callback([opt] { run_guarded("diff", [opt] { return run_diff(*opt); }); });
}

}  // namespace fxmimo::cli
