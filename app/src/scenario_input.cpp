#include "scenario_input.hpp"

#include <filesystem>

#include "commands.hpp"
#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/io/checked_json.hpp"

namespace fxmimo::cli {

scenario_input parse_scenario_input(std::string text, const std::string& source_name) {
  // Parsed once; the golden sections and the [nodes] tables are read from the same document.
  const golden::scenario_document doc = golden::parse_scenario_document(std::move(text), source_name);
  scenario_input in;
  in.scen = golden::parse_scenario(doc);
  in.config = datapath::parse_datapath_config(doc);
  in.text = doc.text;
  return in;
}

scenario_input load_scenario_input(const std::string& path) {
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) throw usage_error(path + ": is a directory, not a scenario file");
  std::string text;
  try {
    text = io::read_file(path);
  } catch (const io::json_error&) {
    throw usage_error(path + ": cannot open the scenario file");
  }
  return parse_scenario_input(std::move(text), path);
}

}  // namespace fxmimo::cli
