// fxmimo report: results files of run, range, sweep and tune drawn into one self-contained HTML page.
#include <fmt/core.h>

#include <filesystem>
#include <fstream>

#include "commands.hpp"
#include "fxmimo/report/report_html.hpp"
#include "output_files.hpp"

namespace fxmimo::cli {

namespace {

struct report_options {
  std::vector<std::string> inputs;
  std::string out_path;
};

int run_report(const report_options& opt) {
  std::vector<report::named_record> inputs;
  inputs.reserve(opt.inputs.size());
  try {
    for (const std::string& file : opt.inputs) inputs.push_back(report::read_results_file(file));
    write_file_atomically(opt.out_path, report::render_report_html(inputs));
  } catch (const report::report_input_error& e) {
    throw usage_error(e.what());
  }
  fmt::print("wrote {} ({} results file{})\n", opt.out_path, inputs.size(), inputs.size() == 1 ? "" : "s");
  return exit_ok;
}

}  // namespace

void add_report_command(CLI::App& app) {
  auto opt = std::make_shared<report_options>();
  CLI::App* cmd =
      app.add_subcommand("report", "Draw results files (run, range, sweep, tune JSON) into one HTML report");
  cmd->add_option("results", opt->inputs, "Results files written with --json by run, range, sweep or tune")->required();
  cmd->add_option("-o,--out", opt->out_path, "The HTML file to write")->required();
  cmd->footer(
      "The page is self-contained (inline SVG, no scripts, no external resources) and prints in black\n"
      "and white: SINR loss and EVM against the swept width per node, overflow rate against integer\n"
      "bits, the range histograms with the proposed integer bits, the tuned widths with cost, margins\n"
      "and the PASS/FAIL of the re-verification, and the tables of a run. Each file's \"kind\" says\n"
      "what it holds; a file of unknown kind or not JSON stops the command (exit code 2).\n"
      "Examples:\n"
      "  fxmimo report sweep.json -o report.html\n"
      "  fxmimo report range.json sweep-frac.json tune.json run.json -o report.html");
  cmd->callback([opt] { run_guarded("report", [opt] { return run_report(*opt); }); });
}

}  // namespace fxmimo::cli
