// stages_for: the only place that reads the scenario's algorithm choice.
#include "fxmimo/datapath/plan.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <stdexcept>

#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/qam.hpp"
#include "stages/stages.hpp"
#include "stages/units.hpp"

namespace fxmimo::datapath {

namespace {

std::vector<plan_extension>& extensions() {
  static std::vector<plan_extension> registered;
  return registered;
}

/// Every node's exponent law, stage by stage: an output whose sources carry none carries none,
/// except a block-scaled node's (`scaled`: its stage finds the exponents); the others ask their
/// stage.
void derive_exponent_laws(datapath_plan& plan, const std::vector<node_id>& scaled) {
  plan.laws.assign(node_count(), exponent_law{});
  for (const auto& s : plan.stages) {
    for (const port& p : s->ports()) {
      const bool scaled_input = std::any_of(p.sources.begin(), p.sources.end(),
                                            [&](node_id src) { return plan.laws[index_of(src)].carries(); });
      if (!scaled_input && std::find(scaled.begin(), scaled.end(), p.node) == scaled.end()) continue;
      const std::optional<exponent_law> law = s->carried_law(p.node);
      if (!law) {
        throw std::logic_error(
            fmt::format("stage {} computes {} from block-scaled words but carries no exponent "
                        "law (stage::carried_law)",
                        s->name(), node_name(p.node)));
      }
      plan.laws[index_of(p.node)] = *law;
    }
  }
}

}  // namespace

std::vector<node_id> datapath_plan::nodes() const {
  std::vector<node_id> out;
  for (const auto& s : stages)
    for (const port& p : s->ports()) out.push_back(p.node);
  return out;
}

exponent_law datapath_plan::law_of(node_id id) const { return laws.empty() ? exponent_law{} : laws[index_of(id)]; }

bool datapath_plan::has(node_id id) const { return producer(id) != nullptr; }

const stage* datapath_plan::producer(node_id id) const {
  for (const auto& s : stages)
    if (s->outputs(id)) return s.get();
  return nullptr;
}

std::vector<node_id> datapath_plan::sources_of(node_id id) const {
  for (const auto& s : stages)
    for (const port& p : s->ports())
      if (p.node == id) return p.sources;
  return {};
}

std::vector<bool> datapath_plan::stages_downstream_of(const std::vector<node_id>& changed) const {
  std::vector<bool> dirty_node(node_count(), false);
  for (node_id id : changed) dirty_node[index_of(id)] = true;
  std::vector<bool> out(stages.size(), false);
  // Stages are in computing order, so one pass carries the change downstream.
  for (std::size_t i_stage = 0; i_stage < stages.size(); ++i_stage) {
    bool dirty = false;
    for (const port& p : stages[i_stage]->ports()) {
      dirty = dirty || dirty_node[index_of(p.node)];
      for (node_id source : p.sources) dirty = dirty || dirty_node[index_of(source)];
    }
    if (!dirty) continue;
    out[i_stage] = true;
    for (const port& p : stages[i_stage]->ports()) dirty_node[index_of(p.node)] = true;
  }
  return out;
}

std::vector<bool> datapath_plan::data_nodes() const {
  const std::vector<bool> data = data_stages();
  std::vector<bool> out(node_count(), false);
  for (std::size_t i_stage = 0; i_stage < stages.size(); ++i_stage) {
    if (!data[i_stage]) continue;
    for (const port& p : stages[i_stage]->ports()) out[index_of(p.node)] = true;
  }
  return out;
}

std::vector<bool> datapath_plan::data_stages() const {
  std::vector<bool> data_node(node_count(), false), out(stages.size(), false);
  for (std::size_t i_stage = 0; i_stage < stages.size(); ++i_stage) {
    for (const port& p : stages[i_stage]->ports()) {
      const std::array<dim, 2> d = dims_of(p.node);
      out[i_stage] = out[i_stage] || d[0] == dim::symbol || d[1] == dim::symbol;
    }
    for (const port& p : stages[i_stage]->ports()) {
      data_node[index_of(p.node)] = out[i_stage];
      if (out[i_stage]) continue;
      for (node_id source : p.sources) {
        if (data_node[index_of(source)]) {
          throw std::logic_error(
              fmt::format("stage {} computes {} once per trial from {}, a node of the data phase, "
                          "which exists one symbol block at a time",
                          stages[i_stage]->name(), node_name(p.node), node_name(source)));
        }
      }
    }
  }
  return out;
}

void datapath_plan::insert_before(node_id id, std::shared_ptr<stage> s, std::optional<node_id> replaced,
                                  std::optional<node_id> replacement) {
  const auto at = std::find_if(stages.begin(), stages.end(), [&](const auto& st) { return st->outputs(id); });
  if (at == stages.end()) {
    throw std::invalid_argument(
        fmt::format("insert_before: no stage of this datapath computes node {}", node_name(id)));
  }
  const auto pos = stages.insert(at, std::move(s));
  if (replaced && replacement) {
    for (auto later = pos + 1; later != stages.end(); ++later) (*later)->rewire(*replaced, *replacement);
  }
}

void register_plan_extension(plan_extension extension) { extensions().push_back(std::move(extension)); }

datapath_plan stages_for(const golden::scenario& scen) {
  datapath_plan plan;
  const bool per_antenna = scen.precoder.normalization == golden::power_normalization::per_antenna;
  const bool uses_inverse = scen.precoder.kind != golden::precoder_kind::mf;
  const bool neumann = uses_inverse && scen.precoder.inversion == golden::inversion_kind::neumann;
  const bool cholesky = uses_inverse && scen.precoder.inversion == golden::inversion_kind::cholesky;
  const bool gauss_seidel = uses_inverse && scen.precoder.inversion == golden::inversion_kind::gauss_seidel;
  plan.dims.antenna = scen.array.num_antennas;
  plan.dims.user = scen.cells.num_users;
  plan.dims.pilot_symbol = scen.pilots.length;
  plan.dims.symbol = scen.data.num_symbols;
  plan.dims.term_user = neumann ? scen.cells.num_users * (scen.precoder.neumann_terms - 1) : 0;
  plan.dims.sweep_user = gauss_seidel ? scen.cells.num_users * (scen.precoder.gauss_seidel_sweeps - 1) : 0;
  plan.dims.power_group = per_antenna ? scen.array.num_antennas : 1;
  if (scen.uplink.on) {
    plan.dims.ul_symbol = scen.uplink.num_symbols;
    plan.dims.ul_bit = scen.uplink.num_symbols * golden::bits_per_symbol(scen.uplink.mod);
  }
  if (uses_inverse && !cholesky)
    detail::divide_root_unit(fixedpoint::newton_function::reciprocal, scen.units.inv_diag_recip,
                             detail::diag_recip_nodes)
        .set_dims(plan.dims);
  if (cholesky)
    detail::divide_root_unit(fixedpoint::newton_function::rsqrt, scen.units.chol_diag_rsqrt, detail::chol_rsqrt_nodes)
        .set_dims(plan.dims);
  detail::divide_root_unit(fixedpoint::newton_function::rsqrt, scen.units.norm, detail::norm_nodes).set_dims(plan.dims);

  const std::optional<int> block_top =
      scen.block_float.chan_est.on ? std::optional<int>(scen.block_float.chan_est.top) : std::nullopt;
  const std::optional<int> whole_top =
      scen.block_float.precoder.on ? std::optional<int>(scen.block_float.precoder.top) : std::nullopt;
  auto& s = plan.stages;
  s.push_back(make_golden_converter(node_id::adc, [](const golden::trial_data& t) { return t.adc; }));
  s.push_back(make_golden_converter(node_id::pilot_rom, [](const golden::trial_data& t) { return t.pilots; }));
  s.push_back(detail::make_correlator());
  s.push_back(make_golden_converter(node_id::est_scale, [](const golden::trial_data& t) {
    return Eigen::MatrixXcd(t.est_scale.cast<std::complex<double>>());
  }));
  if (scen.estimator.kind == golden::estimator_kind::perfect) {
    // Perfect channel knowledge: the estimate is the golden channel converted into words.
    s.push_back(make_golden_converter(node_id::chan_est, [](const golden::trial_data& t) { return t.chan_est; }));
  } else {
    s.push_back(detail::make_estimate(block_top));
  }
  if (uses_inverse) {
    const bool loaded = scen.precoder.kind == golden::precoder_kind::rzf;
    s.push_back(detail::make_gram(detail::downlink_inverter,
                                  loaded ? std::optional<double>(scen.rzf_regularizer()) : std::nullopt, block_top));
    if (neumann) {
      s.push_back(detail::make_neumann(scen.precoder.neumann_terms, scen.units.inv_diag_recip));
    } else if (gauss_seidel) {
      s.push_back(detail::make_gauss_seidel(scen.precoder.gauss_seidel_sweeps, scen.units.inv_diag_recip));
    } else if (cholesky) {
      s.push_back(detail::make_cholesky(scen.units.chol_diag_rsqrt));
      s.push_back(detail::make_cholesky_solves());
    } else {
      // LDL^H (the golden model's reference inversion is also realised by LDL^H here).
      s.push_back(detail::make_ldl(detail::downlink_inverter, scen.units.inv_diag_recip));
      s.push_back(detail::make_ldl_solves(detail::downlink_inverter));
    }
  }
  s.push_back(detail::make_precoder(uses_inverse, block_top, whole_top, scen.cells.num_users));
  s.push_back(detail::make_power(per_antenna, scen.units.norm));
  const double p_dig = golden::digital_power(scen);
  const double gain = std::sqrt(per_antenna ? p_dig / scen.array.num_antennas : p_dig);
  s.push_back(make_golden_converter(
      node_id::tx_gain, [gain](const golden::trial_data&) { return Eigen::MatrixXcd::Constant(1, 1, gain); }));
  s.push_back(detail::make_weights());
  s.push_back(make_block_converter(node_id::symbols, [](const golden::data_block& b) { return b.symbols; }));
  s.push_back(detail::make_transmit());
  s.push_back(make_requantizer(node_id::dac, node_id::tx_acc));
  if (scen.uplink.on) {
    // The uplink block, computed once per trial after the downlink's inverse it may share.
    const bool combined = scen.uplink.combiner != golden::combiner_kind::mrc;
    s.push_back(make_golden_converter(node_id::ul_adc, [](const golden::trial_data& t) { return t.uplink->adc; }));
    s.push_back(detail::make_uplink_match());
    if (combined && scen.uplink.own_inverse) {
      // The uplink's own Gram (MMSE-loaded) and LDL^H inverter, with the exact reciprocal.
      const double loading = scen.uplink.loading(scen.uplink_snr());
      s.push_back(detail::make_gram(detail::uplink_inverter,
                                    loading > 0 ? std::optional<double>(loading) : std::nullopt, std::nullopt));
      s.push_back(detail::make_ldl(detail::uplink_inverter, golden::unit_choice{}));
      s.push_back(detail::make_ldl_solves(detail::uplink_inverter));
    }
    if (combined)
      s.push_back(detail::make_uplink_combiner(scen.uplink.own_inverse ? node_id::ul_inv_out : node_id::inv_out));
    s.push_back(make_golden_converter(node_id::ul_scale, [](const golden::trial_data& t) {
      return Eigen::MatrixXcd(t.uplink->scale.cast<std::complex<double>>());
    }));
    s.push_back(detail::make_uplink_equaliser(combined));
    s.push_back(detail::make_uplink_demapper(scen.uplink.mod));
  }

  for (const plan_extension& e : extensions()) e(plan, scen);
  plan.user_top = block_top;
  plan.whole_top = whole_top;
  std::vector<node_id> scaled;
  if (block_top) scaled.push_back(node_id::chan_est);
  if (whole_top) scaled.push_back(node_id::precoder);
  if (!scaled.empty()) derive_exponent_laws(plan, scaled);
  return plan;
}

std::vector<node_id> active_nodes(const golden::scenario& scen) { return stages_for(scen).nodes(); }

}  // namespace fxmimo::datapath
