#pragma once
// The reference stages, one file each under stages/; stages_for (plan.cpp) lays them out.
// Private to the datapath room: a program of its own derives from datapath::stage instead.

#include <functional>
#include <memory>

#include "fxmimo/datapath/stage_kit.hpp"

namespace fxmimo::datapath::detail {

// make_golden_converter and make_requantizer (converters.cpp) are public: stage_kit.hpp.

std::shared_ptr<stage> make_correlator();                            // correlator.cpp: pilot_acc
std::shared_ptr<stage> make_estimate(std::optional<int> block_top);  // estimate.cpp: chan_est (LS, MMSE), est_exp
std::shared_ptr<stage> make_gram(std::optional<double> rzf_loading, std::optional<int> block_top);  // gram.cpp
std::shared_ptr<stage> make_ldl(const golden::unit_choice& recip_unit);  // ldl.cpp: ldl_acc, the unit, inv_factor
std::shared_ptr<stage> make_ldl_solves();                                // solves.cpp: inv_fwd, inv_out
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
// uplink.cpp: ul_match; ul_comb (ZF, MMSE); ul_eq from ul_comb (`combined`) or ul_match; ul_llr
std::shared_ptr<stage> make_uplink_match();
std::shared_ptr<stage> make_uplink_combiner();
std::shared_ptr<stage> make_uplink_equaliser(bool combined);
std::shared_ptr<stage> make_uplink_demapper(golden::modulation mod);

}  // namespace fxmimo::datapath::detail
