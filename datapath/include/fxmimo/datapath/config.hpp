#pragma once
/// The datapath configuration: one setting per node (format, rounding, overflow and, for an
/// accumulator, its accumulation order), read from a scenario's `[nodes.NAME]` tables.

#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/datapath/node_table.hpp"
#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"
#include "fxmimo/golden/checked_table.hpp"

namespace fxmimo::datapath {

/// The wide default for a node without a table: Q20.43 (64 bits), half_even, saturate.
fixedpoint::target default_target();
/// Largest word a datapath node may hold (words are 64-bit integers in the datapath model).
inline constexpr int max_node_word_bits = 64;

/// One node's requantisation target, its accumulation order (accumulators only) and whether it
/// came from the documented default.
struct node_setting {
  fixedpoint::target spec = default_target();
  fixedpoint::accumulation order{};
  bool is_default = true;
};

/// One setting per known node; a default-constructed configuration is the documented default
/// (every node at default_target(), sequential accumulation).
struct datapath_config {
  std::vector<node_setting> nodes = std::vector<node_setting>(node_count());
  /// A node's setting: its home's (setting_home), so that a shared converter has one.
  [[nodiscard]] const node_setting& operator[](node_id id) const { return nodes.at(index_of(setting_home(id))); }
  node_setting& operator[](node_id id) { return nodes.at(index_of(setting_home(id))); }
};

/// Whether a node's saturation is a designed clip rather than an overflow: `ul_llr` with a
/// saturating overflow mode (`saturate`, `saturate_symmetric`). Its format sets the LLRs' clip
/// level, the range a soft decoder takes (clipping LLRs is common practice), so `tune` keeps its
/// setting as the scenario gives it and holds its clipped values to no overflow-rate limit, and
/// `run` shows them in its table without a warning.
[[nodiscard]] constexpr bool clips_by_design(node_id id, const fixedpoint::target& t) {
  return id == node_id::ul_llr && (t.overflow == fixedpoint::overflow_mode::saturate ||
                                   t.overflow == fixedpoint::overflow_mode::saturate_symmetric);
}

/// Reads the `[nodes.NAME]` tables of a scenario (keys: format, rounding, overflow; for an
/// accumulator also order = "sequential" | "pairwise" | "lanes" and lanes = P). Unknown nodes or
/// keys, bad formats, W > 64 are errors that name the file, line and key
/// (golden::scenario_error). Nodes without a table keep the default.
datapath_config parse_datapath_config(const golden::scenario_document& doc);
/// The same from text (parsed here; a program that also needs the golden sections parses the
/// document once with golden::parse_scenario_document and calls both readers on it).
datapath_config parse_datapath_config(std::string_view toml_text, const std::string& source_name);

/// One node's `[nodes.NAME]` table as TOML text (order and lanes only where not sequential).
std::string node_table_toml(node_id id, const node_setting& setting);
/// The `[nodes]` section of a scenario as TOML text, every known node.
std::string to_toml(const datapath_config& config);
/// The scenario text with the given nodes' settings written into it (tune -o, range
/// --write-scenario): a `# comment` line first; each given node's existing [nodes.NAME] table
/// edited in place (its format, rounding, overflow, order and lanes values replaced, comments
/// after them kept, keys it no longer needs removed); tables for given nodes that had none
/// appended at the end; every other line left as it was.
std::string scenario_with_nodes(const std::string& scenario_text, const datapath_config& config,
                                const std::vector<node_id>& nodes, const std::string& comment);

}  // namespace fxmimo::datapath
