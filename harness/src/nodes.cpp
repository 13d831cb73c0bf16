#include "fxmimo/harness/nodes.hpp"

#include <fmt/core.h>
#include <toml++/toml.h>

namespace fxmimo::harness {

namespace fp = fxmimo::fixedpoint;

namespace {

constexpr std::array<std::string_view, num_nodes> names{
    "adc",     "pilot_rom", "pilot_acc", "est_scale", "chan_est", "gram",      "ldl_acc",
    "inv_diag_recip", "inv_factor", "inv_fwd", "inv_iter", "inv_term", "inv_out", "precoder",
    "power_acc", "norm", "tx_gain", "weights", "symbols", "tx_acc", "dac"};

int line_of(const toml::node& n) { return static_cast<int>(n.source().begin.line); }

}  // namespace

std::string_view node_name(node_id id) { return names[index_of(id)]; }

std::optional<node_id> parse_node_name(std::string_view name) {
  for (node_id id : all_nodes)
    if (node_name(id) == name) return id;
  return std::nullopt;
}

std::string list_node_names() {
  std::string out;
  for (node_id id : all_nodes) {
    if (!out.empty()) out += ", ";
    out += node_name(id);
  }
  return out;
}

bool node_is_complex(node_id id) {
  switch (id) {
    case node_id::est_scale:
    case node_id::inv_diag_recip:
    case node_id::power_acc:
    case node_id::norm:
    case node_id::tx_gain: return false;
    default: return true;
  }
}

std::vector<node_id> active_nodes(const golden::scenario& scen) {
  std::vector<node_id> out{node_id::adc, node_id::pilot_rom, node_id::pilot_acc, node_id::est_scale,
                           node_id::chan_est};
  if (scen.precoder.kind != golden::precoder_kind::mf) {
    out.push_back(node_id::gram);
    if (scen.precoder.inversion == golden::inversion_kind::neumann) {
      out.push_back(node_id::inv_diag_recip);
      out.push_back(node_id::inv_iter);
      if (scen.precoder.neumann_terms > 1) out.push_back(node_id::inv_term);
    } else {
      for (node_id id : {node_id::ldl_acc, node_id::inv_diag_recip, node_id::inv_factor, node_id::inv_fwd})
        out.push_back(id);
    }
    out.push_back(node_id::inv_out);
  }
  for (node_id id : {node_id::precoder, node_id::power_acc, node_id::norm, node_id::tx_gain, node_id::weights,
                     node_id::symbols, node_id::tx_acc, node_id::dac})
    out.push_back(id);
  return out;
}

fp::target default_target() {
  return {{true, 64, 43}, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
}

datapath_config parse_datapath_config(std::string_view toml_text, const std::string& source_name) {
  datapath_config config;
  for (node_setting& s : config.nodes) s = {default_target(), true};
  toml::table root;
  try {
    root = toml::parse(toml_text, source_name);
  } catch (const toml::parse_error& e) {
    throw golden::scenario_error(source_name, static_cast<int>(e.source().begin.line), "", std::string(e.description()));
  }
  const toml::node* nodes_node = root.get("nodes");
  if (nodes_node == nullptr) return config;
  const toml::table* nodes = nodes_node->as_table();
  if (nodes == nullptr) throw golden::scenario_error(source_name, line_of(*nodes_node), "nodes", "must be a table of node tables");
  for (const auto& [name_key, value] : *nodes) {
    const std::string name(name_key.str());
    const std::string key = "nodes." + name;
    const auto id = parse_node_name(name);
    const int line = static_cast<int>(name_key.source().begin.line);
    if (!id) throw golden::scenario_error(source_name, line, key, fmt::format("unknown node '{}' (known: {})", name, list_node_names()));
    const toml::table* table = value.as_table();
    if (table == nullptr) throw golden::scenario_error(source_name, line, key, "must be a table with format, rounding, overflow");
    node_setting setting{default_target(), false};
    bool has_format = false;
    for (const auto& [field_key, field] : *table) {
      const std::string field_name(field_key.str());
      const std::string full = key + "." + field_name;
      const int field_line = static_cast<int>(field_key.source().begin.line);
      const auto text = field.value<std::string>();
      if (field_name != "format" && field_name != "rounding" && field_name != "overflow")
        throw golden::scenario_error(source_name, field_line, full, "unknown key (expected format, rounding, overflow)");
      if (!text) throw golden::scenario_error(source_name, field_line, full, "must be a string");
      if (field_name == "format") {
        try {
          setting.spec.fmt = fp::parse_format(*text);
        } catch (const fp::format_error& e) {
          throw golden::scenario_error(source_name, field_line, full, e.what());
        }
        if (setting.spec.fmt.container_bits() > max_node_word_bits)
          throw golden::scenario_error(source_name, field_line, full,
                                       fmt::format("'{}' needs {} bits; datapath nodes hold at most 64 (signed) or 63 (unsigned)",
                                                   *text, setting.spec.fmt.word_bits));
        has_format = true;
      } else if (field_name == "rounding") {
        const auto mode = fp::parse_rounding_mode(*text);
        if (!mode) throw golden::scenario_error(source_name, field_line, full,
                                                fmt::format("bad rounding '{}' (expected {})", *text, fp::list_rounding_modes()));
        setting.spec.rounding = *mode;
      } else {
        const auto mode = fp::parse_overflow_mode(*text);
        if (!mode) throw golden::scenario_error(source_name, field_line, full,
                                                fmt::format("bad overflow '{}' (expected {})", *text, fp::list_overflow_modes()));
        setting.spec.overflow = *mode;
      }
    }
    if (!has_format) throw golden::scenario_error(source_name, line, key + ".format", "missing (e.g. format = \"Q1.14\")");
    config[*id] = setting;
  }
  return config;
}

std::string to_toml(const datapath_config& config) {
  std::string out;
  for (node_id id : all_nodes) {
    const node_setting& s = config[id];
    out += fmt::format("[nodes.{}]\nformat = \"{}\"\nrounding = \"{}\"\noverflow = \"{}\"\n\n", node_name(id),
                       fp::to_q_string(s.spec.fmt), fp::to_string(s.spec.rounding), fp::to_string(s.spec.overflow));
  }
  return out;
}

}  // namespace fxmimo::harness
