#include "fxmimo/datapath/config.hpp"

#include <fmt/core.h>
#include <toml++/toml.h>

#include <algorithm>
#include <sstream>
#include <stdexcept>

#include "fxmimo/golden/checked_table.hpp"

namespace fxmimo::datapath {

namespace fp = fxmimo::fixedpoint;

fp::target default_target() { return {{true, 64, 43}, fp::rounding_mode::half_even, fp::overflow_mode::saturate}; }

datapath_config parse_datapath_config(const golden::scenario_document& doc) {
  datapath_config config;
  const golden::checked_table root(doc.source_name, doc.root, "");
  if (!root.has("nodes")) return config;
  const toml::table* nodes = doc.root.get("nodes")->as_table();
  if (nodes == nullptr) root.fail("nodes", "must be a table of node tables");
  const golden::checked_table nodes_reader(doc.source_name, *nodes, "nodes");
  for (const auto& [name_key, value] : *nodes) {
    const std::string name(name_key.str());
    const auto id = parse_node_name(name);
    if (!id) nodes_reader.fail(name, fmt::format("unknown node '{}' (known: {})", name, list_node_names()));
    if (setting_home(*id) != *id)
      nodes_reader.fail(name, fmt::format("{} is the {} converter at another time: set [nodes.{}]", name,
                                          node_name(setting_home(*id)), node_name(setting_home(*id))));
    if (!value.is_table()) nodes_reader.fail(name, "must be a table with format, rounding, overflow");
    const golden::checked_table t(doc.source_name, *value.as_table(), "nodes." + name);
    const bool accumulates = role_of(*id) == node_role::accumulator;
    // Unknown keys first, each at its own line; order and lanes only on an accumulator.
    for (const auto& [field_key, field] : t.table()) {
      const std::string_view field_name = field_key.str();
      const bool known = field_name == "format" || field_name == "rounding" || field_name == "overflow";
      const bool order_key = field_name == "order" || field_name == "lanes" || field_name == "term_format" ||
                             field_name == "term_rounding";
      if (known || (order_key && accumulates)) continue;
      t.fail(field_name,
             fmt::format("unknown key (expected {}{})",
                         accumulates ? "format, rounding, overflow, order, lanes, term_format, term_rounding"
                                     : "format, rounding, overflow",
                         order_key ? fmt::format(": {} is not an accumulator", name) : ""));
    }
    node_setting setting{default_target(), {}, false};
    const std::string text = t.required("format", t.string("format"));
    try {
      setting.spec.fmt = fp::parse_format(text);
    } catch (const fp::format_error& e) {
      t.fail("format", e.what());
    }
    if (setting.spec.fmt.container_bits() > max_node_word_bits)
      t.fail("format", fmt::format("'{}' needs {} bits; datapath nodes hold at most 64 (signed) or 63 (unsigned)", text,
                                   setting.spec.fmt.word_bits));
    if (const auto r = t.string("rounding")) {
      const auto mode = fp::parse_rounding_mode(*r);
      if (!mode) t.fail("rounding", fmt::format("bad rounding '{}' (expected {})", *r, fp::list_rounding_modes()));
      setting.spec.rounding = *mode;
    }
    if (const auto o = t.string("overflow")) {
      const auto mode = fp::parse_overflow_mode(*o);
      if (!mode) t.fail("overflow", fmt::format("bad overflow '{}' (expected {})", *o, fp::list_overflow_modes()));
      setting.spec.overflow = *mode;
    }
    if (const auto o = t.string("order")) {
      const auto order = fp::parse_accumulation_order(*o);
      if (!order) t.fail("order", fmt::format("bad order '{}' (expected {})", *o, fp::list_accumulation_orders()));
      setting.order.order = *order;
    }
    if (t.has("lanes")) {
      if (!t.table().get("lanes")->is_integer())
        t.fail("lanes", fmt::format("must be an integer in [1, {}]", fp::max_accumulation_lanes));
      const std::int64_t lanes = t.table().get("lanes")->as_integer()->get();
      if (lanes < 1 || lanes > fp::max_accumulation_lanes)
        t.fail("lanes", fmt::format("must be an integer in [1, {}]", fp::max_accumulation_lanes));
      if (setting.order.order != fp::accumulation_order::lanes) t.fail("lanes", "only used with order = \"lanes\"");
      setting.order.lanes = static_cast<int>(lanes);
    } else if (setting.order.order == fp::accumulation_order::lanes) {
      t.fail("lanes", "missing: order = \"lanes\" needs lanes = P (e.g. lanes = 4)");
    }
    if (const auto f = t.string("term_format")) {
      try {
        setting.order.term_format = fp::parse_format(*f);
      } catch (const fp::format_error& e) {
        t.fail("term_format", e.what());
      }
      if (setting.order.term_format->container_bits() > max_node_word_bits)
        t.fail("term_format", fmt::format("'{}' needs {} bits; terms hold at most 64 (signed) or 63 (unsigned)", *f,
                                          setting.order.term_format->word_bits));
    }
    if (const auto r = t.string("term_rounding")) {
      if (!setting.order.term_format) t.fail("term_rounding", "only used with a term_format");
      const auto mode = fp::parse_rounding_mode(*r);
      if (!mode) t.fail("term_rounding", fmt::format("bad rounding '{}' (expected {})", *r, fp::list_rounding_modes()));
      setting.order.term_rounding = *mode;
    }
    config[*id] = setting;
  }
  return config;
}

datapath_config parse_datapath_config(std::string_view toml_text, const std::string& source_name) {
  return parse_datapath_config(golden::parse_scenario_document(std::string(toml_text), source_name));
}

namespace {

/// The value text a key of a node table takes for a setting ("" when the key is absent).
std::string value_text(std::string_view key, const node_setting& s) {
  if (key == "format") return fmt::format("\"{}\"", fp::to_q_string(s.spec.fmt));
  if (key == "rounding") return fmt::format("\"{}\"", fp::to_string(s.spec.rounding));
  if (key == "overflow") return fmt::format("\"{}\"", fp::to_string(s.spec.overflow));
  if (key == "order")
    return s.order.order == fp::accumulation_order::sequential ? ""
                                                               : fmt::format("\"{}\"", fp::to_string(s.order.order));
  if (key == "lanes") return s.order.order == fp::accumulation_order::lanes ? std::to_string(s.order.lanes) : "";
  if (key == "term_format")
    return s.order.term_format ? fmt::format("\"{}\"", fp::to_q_string(*s.order.term_format)) : "";
  if (key == "term_rounding")
    return s.order.term_format ? fmt::format("\"{}\"", fp::to_string(s.order.term_rounding)) : "";
  return "";
}

constexpr std::array<std::string_view, 7> setting_keys{"format", "rounding",    "overflow",     "order",
                                                       "lanes",  "term_format", "term_rounding"};

}  // namespace

std::string node_table_toml(node_id id, const node_setting& s) {
  std::string out = fmt::format("[nodes.{}]\n", node_name(id));
  for (std::string_view key : setting_keys)
    if (const std::string value = value_text(key, s); !value.empty()) out += fmt::format("{} = {}\n", key, value);
  return out;
}

std::string to_toml(const datapath_config& config) {
  std::string out;
  for (node_id id : all_nodes())
    if (setting_home(id) == id) out += node_table_toml(id, config[id]) + "\n";
  return out;
}

std::string scenario_with_nodes(const std::string& scenario_text, const datapath_config& config,
                                const std::vector<node_id>& nodes, const std::string& comment) {
  // Where every table starts (toml++ knows; a line that merely begins with '[' inside a
  // multi-line array is not a header) and which lines are [nodes.NAME] headers.
  toml::table root;
  try {
    root = golden::parse_toml(scenario_text, "scenario");
  } catch (const golden::scenario_error& e) {
    throw std::invalid_argument(fmt::format("scenario_with_nodes: the scenario is not TOML: {}", e.what()));
  }
  std::vector<int> header_lines;
  std::vector<std::pair<int, node_id>> node_headers;
  root.for_each([&](const toml::key&, const toml::node& n) {
    if (const toml::table* t = n.as_table(); t != nullptr && !t->is_inline())
      header_lines.push_back(golden::line_of(t->source()));
  });
  if (const toml::table* nodes_table = root["nodes"].as_table()) {
    for (const auto& [k, v] : *nodes_table) {
      const toml::table* t = v.as_table();
      const std::optional<node_id> id = parse_node_name(k.str());
      if (t == nullptr || !id) continue;
      header_lines.push_back(golden::line_of(t->source()));
      node_headers.emplace_back(golden::line_of(t->source()), *id);
    }
  }
  std::sort(header_lines.begin(), header_lines.end());
  std::vector<std::string> lines;
  {
    std::istringstream in(scenario_text);
    for (std::string l; std::getline(in, l);) lines.push_back(l);
  }
  auto wanted = [&](node_id id) { return std::find(nodes.begin(), nodes.end(), id) != nodes.end(); };
  // Each written node's table is edited in place: its setting keys get the new values (a comment
  // after a value stays), keys no longer needed go, missing ones follow the last key; every
  // other line, table and node table stays as the user wrote it.
  std::vector<node_id> written;
  for (auto it = node_headers.rbegin(); it != node_headers.rend(); ++it) {
    const auto [header, id] = *it;
    if (!wanted(id)) continue;
    written.push_back(id);
    const auto next = std::upper_bound(header_lines.begin(), header_lines.end(), header);
    const int end = next == header_lines.end() ? static_cast<int>(lines.size()) : *next - 1;  // 1-based, inclusive
    const node_setting& s = config[id];
    std::vector<std::string> body;
    std::vector<bool> seen(setting_keys.size(), false);
    int last_key = -1;
    for (int l = header; l < end; ++l) {  // lines header+1 .. end (1-based)
      std::string text = lines[static_cast<std::size_t>(l)];
      const auto first = text.find_first_not_of(" \t");
      bool is_setting = false;
      for (std::size_t k = 0; k < setting_keys.size() && first != std::string::npos; ++k) {
        const std::string_view key = setting_keys[k];
        if (text.compare(first, key.size(), key) != 0) continue;
        const auto eq = text.find_first_not_of(" \t", first + key.size());
        if (eq == std::string::npos || text[eq] != '=') continue;
        is_setting = true;
        seen[k] = true;
        const std::string value = value_text(key, s);
        if (value.empty()) break;  // a key the setting no longer has: dropped
        // Keep a trailing comment: it starts at the first '#' after the value.
        const auto vstart = text.find_first_not_of(" \t", eq + 1);
        std::size_t vend = vstart == std::string::npos ? text.size() : vstart;
        if (vend < text.size() && text[vend] == '"') vend = text.find('"', vend + 1) + 1;
        const auto hash = text.find('#', std::min(vend, text.size()));
        body.push_back(text.substr(0, first) + std::string(key) + " = " + value +
                       (hash == std::string::npos ? "" : "  " + text.substr(hash)));
        last_key = static_cast<int>(body.size()) - 1;
        break;
      }
      if (!is_setting) body.push_back(text);
    }
    std::vector<std::string> missing;
    for (std::size_t k = 0; k < setting_keys.size(); ++k) {
      const std::string value = value_text(setting_keys[k], s);
      if (!seen[k] && !value.empty()) missing.push_back(std::string(setting_keys[k]) + " = " + value);
    }
    body.insert(body.begin() + (last_key + 1), missing.begin(), missing.end());
    lines.erase(lines.begin() + header, lines.begin() + end);
    lines.insert(lines.begin() + header, body.begin(), body.end());
  }
  std::string out = "# " + comment + "\n";
  for (const std::string& l : lines) out += l + "\n";
  bool first_new = true;
  for (node_id id : nodes) {
    if (setting_home(id) != id) continue;  // written at its home's table
    if (std::find(written.begin(), written.end(), id) != written.end()) continue;
    if (first_new) {
      while (out.size() >= 2 && out[out.size() - 1] == '\n' && out[out.size() - 2] == '\n') out.pop_back();
      out += "\n";
      first_new = false;
    }
    out += node_table_toml(id, config[id]) + "\n";
  }
  return out;
}

}  // namespace fxmimo::datapath
