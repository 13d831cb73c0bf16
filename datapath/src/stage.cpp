#include "fxmimo/datapath/stage.hpp"

#include <algorithm>
#include <stdexcept>

namespace fxmimo::datapath {

const golden::data_block& block_or_throw(const golden::data_block* block) {
  if (block == nullptr)
    throw std::logic_error("a stage outside the data phase asked for the symbol block (datapath_plan::data_stages)");
  return *block;
}

int dimension_sizes::size(dim d) const {
  switch (d) {
    case dim::antenna: return antenna;
    case dim::user: return user;
    case dim::pilot_symbol: return pilot_symbol;
    case dim::symbol: return symbol;
    case dim::term_user: return term_user;
    case dim::power_group: return power_group;
    case dim::recip_entry: return recip_entry;
    case dim::recip_step: return recip_step;
    case dim::rsqrt_entry: return rsqrt_entry;
    case dim::rsqrt_step: return rsqrt_step;
    case dim::chol_rsqrt_entry: return chol_rsqrt_entry;
    case dim::chol_rsqrt_step: return chol_rsqrt_step;
    case dim::sweep_user: return sweep_user;
    case dim::ul_symbol: return ul_symbol;
    case dim::ul_bit: return ul_bit;
    case dim::one: return 1;
  }
  throw std::logic_error("dimension_sizes::size: unknown dimension");
}

std::string_view dimension_sizes::name(dim d) const {
  switch (d) {
    case dim::antenna: return "antenna";
    case dim::user: return "user";
    case dim::pilot_symbol: return "pilot_symbol";
    case dim::symbol: return "symbol";
    case dim::term_user: return "term_user";
    case dim::power_group: return power_group == 1 ? "one" : "antenna";
    case dim::recip_entry: return "rom_entry";
    case dim::recip_step: return "newton_step";
    case dim::rsqrt_entry: return "rom_entry";
    case dim::rsqrt_step: return "newton_step";
    case dim::chol_rsqrt_entry: return "rom_entry";
    case dim::chol_rsqrt_step: return "newton_step";
    case dim::sweep_user: return "sweep_user";
    case dim::ul_symbol: return "uplink_symbol";
    case dim::ul_bit: return "uplink_bit";
    case dim::one: return "one";
  }
  throw std::logic_error("dimension_sizes::name: unknown dimension");
}

bool stage::outputs(node_id id) const {
  return std::any_of(ports_.begin(), ports_.end(), [&](const port& p) { return p.node == id; });
}

void stage::rewire(node_id from, node_id to) {
  for (port& p : ports_) std::replace(p.sources.begin(), p.sources.end(), from, to);
}

double stage::multiplier_cost(const datapath_config&, const dimension_sizes&) const { return 0.0; }

double stage::storage_words(node_id id, const dimension_sizes& dims) const {
  const std::array<dim, 2> d = dims_of(id);
  return (node_is_complex(id) ? 2.0 : 1.0) * dims.size(d[0]) * dims.size(d[1]);
}

std::optional<exponent_law> stage::carried_law(node_id) const { return std::nullopt; }

std::optional<growth_rule> stage::growth(node_id, const datapath_config&, const dimension_sizes&) const {
  return std::nullopt;
}

}  // namespace fxmimo::datapath
