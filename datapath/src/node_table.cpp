#include "fxmimo/datapath/node_table.hpp"

#include <fmt/core.h>

#include <stdexcept>

namespace fxmimo::datapath {

namespace {

std::vector<custom_node>& custom_rows() {
  static std::vector<custom_node> rows;
  return rows;
}

const custom_node& custom_row(node_id id) {
  const std::size_t i = index_of(id) - num_reference_nodes;
  if (index_of(id) < num_reference_nodes || i >= custom_rows().size()) {
    throw std::out_of_range(fmt::format("node id {} is not in the node table", index_of(id)));
  }
  return custom_rows()[i];
}

bool is_identifier(std::string_view name) {
  if (name.empty() || !(name[0] >= 'a' && name[0] <= 'z')) return false;
  for (char ch : name)
    if (!((ch >= 'a' && ch <= 'z') || (ch >= '0' && ch <= '9') || ch == '_')) return false;
  return true;
}

}  // namespace

node_id register_node(const custom_node& row) {
  if (!is_identifier(row.name)) {
    throw std::invalid_argument(fmt::format("register_node: '{}' is not a lower-case identifier", row.name));
  }
  if (parse_node_name(row.name)) throw std::invalid_argument(fmt::format("register_node: node '{}' exists", row.name));
  custom_rows().push_back(row);
  return static_cast<node_id>(num_reference_nodes + custom_rows().size() - 1);
}

std::size_t node_count() { return num_reference_nodes + custom_rows().size(); }

std::vector<node_id> all_nodes() {
  std::vector<node_id> out;
  for (std::size_t i = 0; i < node_count(); ++i) out.push_back(static_cast<node_id>(i));
  return out;
}

std::string_view node_name(node_id id) {
  return index_of(id) < num_reference_nodes ? reference_node_table[index_of(id)].name
                                            : std::string_view(custom_row(id).name);
}

bool node_is_complex(node_id id) {
  return index_of(id) < num_reference_nodes ? reference_node_table[index_of(id)].is_complex : custom_row(id).is_complex;
}

node_role role_of(node_id id) {
  return index_of(id) < num_reference_nodes ? reference_node_table[index_of(id)].role : custom_row(id).role;
}

std::array<dim, 2> dims_of(node_id id) {
  return index_of(id) < num_reference_nodes ? reference_node_table[index_of(id)].dims : custom_row(id).dims;
}

std::optional<node_id> parse_node_name(std::string_view name) {
  for (node_id id : all_nodes())
    if (node_name(id) == name) return id;
  return std::nullopt;
}

std::string list_node_names() {
  std::string out;
  for (node_id id : all_nodes()) {
    if (!out.empty()) out += ", ";
    out += node_name(id);
  }
  return out;
}

}  // namespace fxmimo::datapath
