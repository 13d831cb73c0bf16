#pragma once
// The reference stages, one file each under stages/; stages_for (plan.cpp) lays them out.
// Private to the datapath room: a program of its own derives from datapath::stage instead.

#include <functional>
#include <memory>

#include "fxmimo/datapath/stage_kit.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::datapath::detail {

// make_golden_converter and make_requantizer (converters.cpp) are public: stage_kit.hpp.

std::shared_ptr<stage> make_correlator();                            // correlator.cpp: pilot_acc
std::shared_ptr<stage> make_estimate(std::optional<int> block_top);  // estimate.cpp: chan_est (LS, MMSE), est_exp
/// The nodes of one Gram + LDL^H inverter and where the golden model keeps its values: the
/// downlink's (gram .. inv_out, shared by a zf or mmse uplink combiner) or the uplink's own
/// (ul_gram .. ul_inv_out, [uplink] inverse = "own"; its reciprocal is always the exact unit).
struct inverter_nodes {
  std::string_view gram_stage, ldl_stage, solves_stage;
  node_id gram, acc, recip, factor, fwd, out;
  const Eigen::MatrixXcd& (*golden_gram)(const golden::trial_data&);
  const std::optional<golden::ldl_factors>& (*golden_ldl)(const golden::trial_data&);
  const Eigen::MatrixXcd& (*golden_inverse)(const golden::trial_data&);
};
inline constexpr inverter_nodes downlink_inverter{
    "gram",
    "ldl",
    "ldl_solves",
    node_id::gram,
    node_id::ldl_acc,
    node_id::inv_diag_recip,
    node_id::inv_factor,
    node_id::inv_fwd,
    node_id::inv_out,
    [](const golden::trial_data& t) -> const Eigen::MatrixXcd& { return t.gram; },
    [](const golden::trial_data& t) -> const std::optional<golden::ldl_factors>& { return t.ldl; },
    [](const golden::trial_data& t) -> const Eigen::MatrixXcd& { return t.inverse; }};
inline constexpr inverter_nodes uplink_inverter{
    "ul_gram",
    "ul_ldl",
    "ul_ldl_solves",
    node_id::ul_gram,
    node_id::ul_ldl_acc,
    node_id::ul_inv_recip,
    node_id::ul_inv_factor,
    node_id::ul_inv_fwd,
    node_id::ul_inv_out,
    [](const golden::trial_data& t) -> const Eigen::MatrixXcd& { return t.uplink->gram; },
    [](const golden::trial_data& t) -> const std::optional<golden::ldl_factors>& { return t.uplink->ldl; },
    [](const golden::trial_data& t) -> const Eigen::MatrixXcd& { return t.uplink->inverse; }};

std::shared_ptr<stage> make_gram(const inverter_nodes& nodes, std::optional<double> loading,
                                 std::optional<int> block_top);  // gram.cpp
std::shared_ptr<stage> make_ldl(const inverter_nodes& nodes,
                                const golden::unit_choice& recip_unit);  // ldl.cpp: ldl_acc, the unit, inv_factor
std::shared_ptr<stage> make_ldl_solves(const inverter_nodes& nodes);     // solves.cpp: inv_fwd, inv_out
std::shared_ptr<stage> make_neumann(int num_terms, const golden::unit_choice& recip_unit);  // neumann.cpp
std::shared_ptr<stage> make_cholesky(
    const golden::unit_choice& rsqrt_unit);     // cholesky.cpp: chol_acc, the unit, chol_factor
std::shared_ptr<stage> make_cholesky_solves();  // cholesky_solves.cpp: chol_fwd, inv_out
std::shared_ptr<stage> make_gauss_seidel(int num_sweeps,
                                         const golden::unit_choice& recip_unit);  // gauss_seidel.cpp
std::shared_ptr<stage> make_precoder(bool uses_inverse, std::optional<int> block_top, std::optional<int> whole_top,
                                     int num_users);  // precoder.cpp: precoder, pre_exp
std::shared_ptr<stage> make_power(bool per_antenna,
                                  const golden::unit_choice& rsqrt_unit);  // power.cpp: power_acc, the unit, norm
std::shared_ptr<stage> make_weights();                                     // weights.cpp
std::shared_ptr<stage> make_transmit();                                    // transmit.cpp: tx_acc
// uplink.cpp: ul_match; ul_comb (ZF, MMSE, from `inverse`: inv_out or ul_inv_out); ul_eq from
// ul_comb (`combined`) or ul_match; ul_llr
std::shared_ptr<stage> make_uplink_match();
std::shared_ptr<stage> make_uplink_combiner(node_id inverse);
std::shared_ptr<stage> make_uplink_equaliser(bool combined);
std::shared_ptr<stage> make_uplink_demapper(golden::modulation mod);

}  // namespace fxmimo::datapath::detail
