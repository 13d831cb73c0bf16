#include "scenario_input.hpp"

#include <fmt/core.h>

#include <filesystem>

#include "commands.hpp"
#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/io/checked_json.hpp"

namespace fxmimo::cli {

scenario_input parse_scenario_input(std::string text, const std::string& source_name) {
  // Parsed once; the golden sections and the [nodes] tables are read from the same document.
  scenario_input in;
  in.doc = golden::parse_scenario_document(std::move(text), source_name);
  in.scen = golden::parse_scenario(in.doc);
  in.config = datapath::parse_datapath_config(in.doc);
  return in;
}

std::string scenario_input::key_location(std::string_view dotted_key) const {
  toml::node_view<const toml::node> node = doc.root.at_path(dotted_key);
  if (!node) {
    const auto dot = dotted_key.rfind('.');
    if (dot != std::string_view::npos) node = doc.root.at_path(dotted_key.substr(0, dot));
  }
  const int line = node ? golden::line_of(node.node()->source()) : 0;
  return line > 0 ? fmt::format("{}:{}: {}", doc.source_name, line, dotted_key)
                  : fmt::format("{}: {}", doc.source_name, dotted_key);
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
