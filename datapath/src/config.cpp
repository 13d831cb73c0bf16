#include "fxmimo/datapath/config.hpp"

#include <fmt/core.h>
#include <toml++/toml.h>

#include <sstream>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::datapath {

namespace fp = fxmimo::fixedpoint;

namespace {

int line_of(const toml::node& n) { return static_cast<int>(n.source().begin.line); }

}  // namespace

fp::target default_target() { return {{true, 64, 43}, fp::rounding_mode::half_even, fp::overflow_mode::saturate}; }

datapath_config parse_datapath_config(std::string_view toml_text, const std::string& source_name) {
  datapath_config config;
  toml::table root;
  try {
    root = toml::parse(toml_text, source_name);
  } catch (const toml::parse_error& e) {
    throw golden::scenario_error(source_name, static_cast<int>(e.source().begin.line), "",
                                 std::string(e.description()));
  }
  const toml::node* nodes_node = root.get("nodes");
  if (nodes_node == nullptr) return config;
  const toml::table* nodes = nodes_node->as_table();
  if (nodes == nullptr)
    throw golden::scenario_error(source_name, line_of(*nodes_node), "nodes", "must be a table of node tables");
  for (const auto& [name_key, value] : *nodes) {
    const std::string name(name_key.str());
    const std::string key = "nodes." + name;
    const auto id = parse_node_name(name);
    const int line = static_cast<int>(name_key.source().begin.line);
    if (!id)
      throw golden::scenario_error(source_name, line, key,
                                   fmt::format("unknown node '{}' (known: {})", name, list_node_names()));
    const toml::table* table = value.as_table();
    if (table == nullptr)
      throw golden::scenario_error(source_name, line, key, "must be a table with format, rounding, overflow");
    node_setting setting{default_target(), {}, false};
    const bool accumulates = role_of(*id) == node_role::accumulator;
    bool has_format = false;
    std::optional<int> lanes_line;
    for (const auto& [field_key, field] : *table) {
      const std::string field_name(field_key.str());
      const std::string full = key + "." + field_name;
      const int field_line = static_cast<int>(field_key.source().begin.line);
      const char* const expected =
          accumulates ? "format, rounding, overflow, order, lanes" : "format, rounding, overflow";
      if (field_name == "lanes") {
        if (!accumulates)
          throw golden::scenario_error(
              source_name, field_line, full,
              fmt::format("unknown key (expected {}: {} is not an accumulator)", expected, name));
        const auto lanes = field.value<std::int64_t>();
        if (!field.is_integer() || !lanes || *lanes < 1 || *lanes > fp::max_accumulation_lanes)
          throw golden::scenario_error(source_name, field_line, full,
                                       fmt::format("must be an integer in [1, {}]", fp::max_accumulation_lanes));
        setting.order.lanes = static_cast<int>(*lanes);
        lanes_line = field_line;
        continue;
      }
      const auto text = field.value<std::string>();
      if (field_name != "format" && field_name != "rounding" && field_name != "overflow" &&
          !(accumulates && field_name == "order"))
        throw golden::scenario_error(
            source_name, field_line, full,
            fmt::format("unknown key (expected {}{})", expected,
                        field_name == "order" ? fmt::format(": {} is not an accumulator", name) : ""));
      if (!text) throw golden::scenario_error(source_name, field_line, full, "must be a string");
      if (field_name == "format") {
        try {
          setting.spec.fmt = fp::parse_format(*text);
        } catch (const fp::format_error& e) {
          throw golden::scenario_error(source_name, field_line, full, e.what());
        }
        if (setting.spec.fmt.container_bits() > max_node_word_bits)
          throw golden::scenario_error(
              source_name, field_line, full,
              fmt::format("'{}' needs {} bits; datapath nodes hold at most 64 (signed) or 63 (unsigned)", *text,
                          setting.spec.fmt.word_bits));
        has_format = true;
      } else if (field_name == "rounding") {
        const auto mode = fp::parse_rounding_mode(*text);
        if (!mode)
          throw golden::scenario_error(
              source_name, field_line, full,
              fmt::format("bad rounding '{}' (expected {})", *text, fp::list_rounding_modes()));
        setting.spec.rounding = *mode;
      } else if (field_name == "order") {
        const auto order = fp::parse_accumulation_order(*text);
        if (!order)
          throw golden::scenario_error(
              source_name, field_line, full,
              fmt::format("bad order '{}' (expected {})", *text, fp::list_accumulation_orders()));
        setting.order.order = *order;
      } else {
        const auto mode = fp::parse_overflow_mode(*text);
        if (!mode)
          throw golden::scenario_error(
              source_name, field_line, full,
              fmt::format("bad overflow '{}' (expected {})", *text, fp::list_overflow_modes()));
        setting.spec.overflow = *mode;
      }
    }
    if (lanes_line && setting.order.order != fp::accumulation_order::lanes)
      throw golden::scenario_error(source_name, *lanes_line, key + ".lanes", "only used with order = \"lanes\"");
    if (!lanes_line && setting.order.order == fp::accumulation_order::lanes)
      throw golden::scenario_error(source_name, line, key + ".lanes",
                                   "missing: order = \"lanes\" needs lanes = P (e.g. lanes = 4)");
    if (!has_format)
      throw golden::scenario_error(source_name, line, key + ".format", "missing (e.g. format = \"Q1.14\")");
    config[*id] = setting;
  }
  return config;
}

std::string node_table_toml(node_id id, const node_setting& s) {
  std::string out =
      fmt::format("[nodes.{}]\nformat = \"{}\"\nrounding = \"{}\"\noverflow = \"{}\"\n", node_name(id),
                  fp::to_q_string(s.spec.fmt), fp::to_string(s.spec.rounding), fp::to_string(s.spec.overflow));
  if (s.order.order != fp::accumulation_order::sequential)
    out += fmt::format("order = \"{}\"\n", fp::to_string(s.order.order));
  if (s.order.order == fp::accumulation_order::lanes) out += fmt::format("lanes = {}\n", s.order.lanes);
  return out;
}

std::string to_toml(const datapath_config& config) {
  std::string out;
  for (node_id id : all_nodes()) out += node_table_toml(id, config[id]) + "\n";
  return out;
}

std::string scenario_with_nodes(const std::string& scenario_text, const datapath_config& config,
                                const std::vector<node_id>& nodes, const std::string& comment) {
  std::istringstream in(scenario_text);
  std::string line, out;
  bool in_nodes = false;
  while (std::getline(in, line)) {
    const auto first = line.find_first_not_of(" \t");
    if (first != std::string::npos && line[first] == '[') {
      const std::string header = line.substr(first);
      in_nodes = header.rfind("[nodes.", 0) == 0 || header.rfind("[nodes]", 0) == 0;
    }
    if (!in_nodes) out += line + "\n";
  }
  while (out.size() >= 2 && out[out.size() - 1] == '\n' && out[out.size() - 2] == '\n') out.pop_back();
  out += "\n# " + comment + "\n";
  for (node_id id : nodes) out += node_table_toml(id, config[id]) + "\n";
  return out;
}

}  // namespace fxmimo::datapath
