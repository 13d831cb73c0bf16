#pragma once
/// A stage of the datapath: one hardware unit that computes some nodes from others. A stage is
/// the only home of what its nodes need beyond their table row: which nodes each output is
/// computed from (vector ports), the integer width its exact intermediates need, its multipliers
/// (tune's area cost), its worst-case growth (range), its fixed-point computation and its golden
/// (double) view. The stages a scenario uses come from stages_for (plan.hpp).

#include <Eigen/Dense>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/node_table.hpp"
#include "fxmimo/datapath/word_matrix.hpp"
#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/golden/scenario.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::datapath {

/// Sizes of the named dimensions in one scenario (node_table.hpp: dim).
struct dimension_sizes {
  int antenna = 0, user = 0, pilot_symbol = 0, symbol = 0, term_user = 0, power_group = 1;
  int recip_entry = 0, recip_step = 0, rsqrt_entry = 0, rsqrt_step = 0;
  int chol_rsqrt_entry = 0, chol_rsqrt_step = 0, sweep_user = 0, ul_symbol = 0, ul_bit = 0;
  [[nodiscard]] int size(dim d) const;
  /// The name written into vector files ("antenna", "user", ...; power_group says which it is).
  [[nodiscard]] std::string_view name(dim d) const;
};

/// An output node of a stage and the nodes its words are computed from, in operand order.
struct port {
  node_id node;
  std::vector<node_id> sources;
};

/// Block floating point (README "Block floating point"): how a node's words relate to its value
/// when the channel estimate's user columns carry exponents e_k and the precoder one exponent f.
/// The value at (i, j) is the word's value times 2^(row e_r(i) + col e_c(j) + whole f), r(i) the
/// user of row i (i mod K for a dimension of users, or of users side by side), c(j) likewise; a
/// dimension that is not a user's contributes nothing. {0, 0, 0}: the node's words are its value.
struct exponent_law {
  int row = 0, col = 0, whole = 0;
  [[nodiscard]] bool carries() const { return row != 0 || col != 0 || whole != 0; }
  friend bool operator==(const exponent_law&, const exponent_law&) = default;
};

/// A worst-case integer-bit bound of an output from its inputs' configured formats.
struct growth_rule {
  int int_bits = 0;
  std::string rule;  ///< the formula, e.g. "adc + pilot_rom + 2 + log2(tau_p)"
};

/// The data block a data-phase stage works on; throws std::logic_error when there is none (a
/// stage outside the data phase asked for one).
const golden::data_block& block_or_throw(const golden::data_block* block);

/// What a stage's fixed computation sees: the scenario, the golden trial (inputs of converters
/// and ROMs), the configuration and every node's words and counters; in the data phase also
/// the symbol block being computed (the data nodes' words hold that block's columns only).
struct fixed_context {
  const golden::scenario& scen;
  const golden::trial_data& trial;
  const datapath_config& config;
  std::vector<word_matrix>& words;
  std::vector<fixedpoint::counters>& counters;
  const golden::data_block* block = nullptr;
  [[nodiscard]] const word_matrix& words_of(node_id id) const { return words[index_of(id)]; }
  [[nodiscard]] const golden::data_block& data() const { return block_or_throw(block); }
};

/// What a stage's golden view sees: the golden trial and the golden values set so far, shaped
/// like the nodes' words (real nodes as complex matrices with zero imaginary part); in the data
/// phase also the symbol block, and the values of the nodes outside the data phase (`upstream`)
/// where `values` holds only the data nodes'.
struct golden_context {
  const golden::scenario& scen;
  const golden::trial_data& trial;
  std::vector<Eigen::MatrixXcd>& values;
  const golden::data_block* block = nullptr;
  const std::vector<Eigen::MatrixXcd>* upstream = nullptr;
  /// Where a stage may record an accumulator's register extent (set_extent); nullptr: nobody asks.
  std::vector<Eigen::MatrixXcd>* extents = nullptr;
  [[nodiscard]] const Eigen::MatrixXcd& value_of(node_id id) const {
    const Eigen::MatrixXcd& own = values[index_of(id)];
    return upstream == nullptr || own.size() > 0 ? own : (*upstream)[index_of(id)];
  }
  void set(node_id id, Eigen::MatrixXcd m) const { values[index_of(id)] = std::move(m); }
  /// An accumulator whose partial sums can exceed its result (terms that cancel) records, per
  /// output, the largest |real part| and |imaginary part| of its golden partial sums in index
  /// order, as the real and imaginary parts of `m` (shaped like the node's words): the values its
  /// register holds on the way. `range` profiles these instead of the results.
  void set_extent(node_id id, Eigen::MatrixXcd m) const {
    if (extents != nullptr) (*extents)[index_of(id)] = std::move(m);
  }
  [[nodiscard]] const golden::data_block& data() const { return block_or_throw(block); }
};

class stage {
 public:
  stage(std::string name, std::vector<port> ports) : name_(std::move(name)), ports_(std::move(ports)) {}
  virtual ~stage() = default;
  stage(const stage&) = default;
  stage& operator=(const stage&) = default;

  [[nodiscard]] const std::string& name() const { return name_; }
  /// Outputs in datapath order, each with its sources.
  [[nodiscard]] const std::vector<port>& ports() const { return ports_; }
  [[nodiscard]] bool outputs(node_id id) const;
  /// Replaces the source `from` by `to` in every port (a stage inserted in between).
  void rewire(node_id from, node_id to);

  /// Bits of the integer type that holds the stage's exact intermediates (products, sums with
  /// their headroom bit), from the configured formats; chosen once per stage, never per value.
  [[nodiscard]] virtual int work_bits(const datapath_config& config) const = 0;
  /// Real multipliers times their operand widths (tune's area model).
  [[nodiscard]] virtual double multiplier_cost(const datapath_config& config, const dimension_sizes& dims) const;
  /// Words an output occupies in storage (tune's area model): by default the product of its
  /// dimensions, times 2 for a complex node.
  [[nodiscard]] virtual double storage_words(node_id id, const dimension_sizes& dims) const;
  /// Worst-case integer bits of an output from its sources' formats, where the stage has a rule.
  [[nodiscard]] virtual std::optional<growth_rule> growth(node_id id, const datapath_config& config,
                                                          const dimension_sizes& dims) const;
  /// The law output `id` carries when a source carries one (exponent_law), derived from the
  /// stage's algebra; nullopt when the stage cannot take block-scaled inputs (the default).
  [[nodiscard]] virtual std::optional<exponent_law> carried_law(node_id id) const;
  /// Computes the outputs' words and counts into their counters.
  virtual void compute(fixed_context& ctx) const = 0;
  /// Sets the golden value of every output.
  virtual void golden_view(golden_context& ctx) const = 0;

 protected:
  /// The i-th source of output port `p`.
  [[nodiscard]] node_id source(std::size_t p, std::size_t i) const { return ports_.at(p).sources.at(i); }
  [[nodiscard]] node_id output(std::size_t p) const { return ports_.at(p).node; }

 private:
  std::string name_;
  std::vector<port> ports_;
};

}  // namespace fxmimo::datapath
