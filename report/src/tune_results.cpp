// The tune results as a text table.
#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <sstream>

#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;

std::string format_tune_table(const analysis::tune_results& r) {
  std::string out = fmt::format("scenario {}: cost model {}, {} evaluations of {} trials\n\n", r.scenario_name,
                                to_string(r.model), r.evaluations, r.search_trials.size());
  out += fmt::format("{:<15} {:<10} {:>5} {:>9} {:>9}\n", "node", "format", "bits", "int bits", "frac bits");
  for (datapath::node_id id : r.nodes) {
    const fp::format& f = r.config[id].spec.fmt;
    out += fmt::format("{:<15} {:<10} {:>5} {:>9} {:>9}\n", datapath::node_name(id), fp::to_q_string(f), f.word_bits,
                       f.int_bits(), f.frac_bits);
  }
  out += fmt::format("\ncost: {:.0f} ({})\n", r.cost,
                     r.model == analysis::cost_model::bits ? "total word bits" : "area proxy");
  out += fmt::format("{:<22} {:>12} {:>12} {:>12} {:>12}\n", "", "limit", "search", "fresh trials", "margin");
  out += fmt::format("{:<22} {:>12.4f} {:>12.4f} {:>12.4f} {:>12.4f}\n", "SINR loss dB", r.limits.max_sinr_loss_db,
                     r.search.sinr_loss_db, r.verification.sinr_loss_db,
                     r.limits.max_sinr_loss_db - r.verification.sinr_loss_db);
  out += fmt::format("{:<22} {:>12.4f} {:>12.4f} {:>12.4f} {:>12.4f}\n", "implementation EVM %", r.limits.max_evm_pct,
                     r.search.evm_pct, r.verification.evm_pct, r.limits.max_evm_pct - r.verification.evm_pct);
  out += fmt::format("{:<22} {:>12.4f} {:>12.4f} {:>12.4f} {:>12.4f}\n", "RMS tx power error dB",
                     r.limits.max_rms_tx_power_error_db, r.search.rms_tx_power_error_db,
                     r.verification.rms_tx_power_error_db,
                     r.limits.max_rms_tx_power_error_db - r.verification.rms_tx_power_error_db);
  out += fmt::format("{:<22} {:>12.3g} {:>12.3g} {:>12.3g} {:>12.3g}\n", "max overflow rate",
                     r.limits.max_overflow_rate, r.search.max_overflow_rate, r.verification.max_overflow_rate,
                     r.limits.max_overflow_rate - r.verification.max_overflow_rate);
  out += r.met ? "verification on fresh trials: PASS (every limit met)\n"
               : "verification on fresh trials: FAIL - " + r.note + "\n";
  return out;
}

}  // namespace fxmimo::report
