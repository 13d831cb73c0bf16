#include "scenario_input.hpp"

#include <fstream>
#include <sstream>

#include "commands.hpp"

namespace fxmimo::cli {

scenario_input parse_scenario_input(std::string text, const std::string& source_name) {
  scenario_input in;
  in.scen = golden::parse_scenario_text(text, source_name);
  in.config = datapath::parse_datapath_config(text, source_name);
  in.text = std::move(text);
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
