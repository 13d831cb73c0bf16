#include "results_output.hpp"

#include <fmt/core.h>

#include "fxmimo/report/records.hpp"
#include "fxmimo/report/report.hpp"
#include "output_files.hpp"

namespace fxmimo::cli {

void print_and_write(const analysis::run_results& r, const std::string& json_path) {
  fmt::print("{}", report::format_run_table(r));
  if (!json_path.empty()) write_file_atomically(json_path, report::to_json(report::make_record(r)).dump(2) + "\n");
}

void print_and_write(const analysis::sweep_results& r, const std::string& json_path, const std::string& csv_path) {
  fmt::print("{}", report::format_sweep_table(r));
  if (!json_path.empty()) write_file_atomically(json_path, report::to_json(report::make_record(r)).dump(2) + "\n");
  if (!csv_path.empty()) write_file_atomically(csv_path, report::to_csv(r));
}

void print_and_write(const analysis::key_sweep_results& r, const std::string& json_path, const std::string& csv_path) {
  fmt::print("{}", report::format_key_sweep_table(r));
  if (!json_path.empty()) write_file_atomically(json_path, report::to_json(report::make_record(r)).dump(2) + "\n");
  if (!csv_path.empty()) write_file_atomically(csv_path, report::to_csv(r));
}

}  // namespace fxmimo::cli
