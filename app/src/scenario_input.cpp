#include "scenario_input.hpp"

#include <fstream>
#include <sstream>

#include "commands.hpp"
#include "fxmimo/golden/checked_table.hpp"

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
  std::ifstream file(path, std::ios::binary);
  if (!file) throw usage_error(path + ": cannot open the scenario file");
  std::ostringstream buffer;
  buffer << file.rdbuf();
  return parse_scenario_input(buffer.str(), path);
}

}  // namespace fxmimo::cli
