#pragma once
/// The plan: the stages one scenario's datapath consists of, in order. stages_for is the only
/// place that reads the scenario's algorithm choice (MF/ZF/RZF, LDL^H/Neumann, LS/MMSE/perfect,
/// total/per-antenna); node lists, vector ports and dimensions, tune's cost, range's growth rules
/// and the golden node values are all derived from the plan.

#include <functional>
#include <memory>
#include <optional>
#include <vector>

#include "fxmimo/datapath/stage.hpp"

namespace fxmimo::datapath {

struct datapath_plan {
  std::vector<std::shared_ptr<stage>> stages;
  dimension_sizes dims;
  /// Block floating point on the estimate (README "Block floating point"): per node (index_of)
  /// the exponent law its words carry, from the stages' carried_law; empty without it.
  std::vector<exponent_law> laws;
  /// The largest exponents of the block-scaled nodes: the estimate's columns (e_k = user_top -
  /// est_exp[k]) and the whole precoder (f = whole_top - pre_exp).
  std::optional<int> user_top, whole_top;

  /// The law of node `id` ({0, 0} without block floating point).
  [[nodiscard]] exponent_law law_of(node_id id) const;

  /// Every output node of the stages, in order.
  [[nodiscard]] std::vector<node_id> nodes() const;
  [[nodiscard]] bool has(node_id id) const;
  /// The stage that computes `id` (nullptr when no stage does).
  [[nodiscard]] const stage* producer(node_id id) const;
  /// The nodes `id` is computed from (empty for converters and ROMs fed by the golden model).
  [[nodiscard]] std::vector<node_id> sources_of(node_id id) const;
  /// Per stage (in order): whether it must run again when the settings of the `changed` nodes
  /// change. A stage runs again when it outputs a changed node or reads, through its ports, a
  /// node that a stage running again outputs ("what is downstream of these nodes").
  [[nodiscard]] std::vector<bool> stages_downstream_of(const std::vector<node_id>& changed) const;
  /// Per stage (in order): whether it belongs to the data phase, i.e. one of its outputs has the
  /// symbol dimension. Data stages run once per symbol block (golden::symbol_block_size symbols,
  /// their data nodes' words holding that block), the others once per trial before them, in
  /// plan order within each group. Throws std::logic_error when a stage outside the data phase
  /// reads a data node (it would need the whole block of N symbols).
  [[nodiscard]] std::vector<bool> data_stages() const;
  /// Per node (index_of): whether a data stage outputs it, i.e. its words exist one symbol block
  /// at a time (the data nodes).
  [[nodiscard]] std::vector<bool> data_nodes() const;
  /// Inserts `s` before the stage that computes `id` and points every later reader of
  /// `replaced` at `replacement` (for a stage placed between two others; both may be the same
  /// node id to insert without rewiring). Throws std::invalid_argument when no stage computes id.
  void insert_before(node_id id, std::shared_ptr<stage> s, std::optional<node_id> replaced = {},
                     std::optional<node_id> replacement = {});
};

/// A program's own change to every plan (adds or rewires stages); runs after the reference
/// stages are laid out, in registration order.
using plan_extension = std::function<void(datapath_plan& plan, const golden::scenario& scen)>;
/// Registers an extension. Call before running anything (not thread-safe against runs).
void register_plan_extension(plan_extension extension);

/// The stages of the scenario's datapath, extensions applied.
datapath_plan stages_for(const golden::scenario& scen);

/// The nodes of stages_for(scen), in order.
std::vector<node_id> active_nodes(const golden::scenario& scen);

}  // namespace fxmimo::datapath
