// The sweep results as a text table.
#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <sstream>

#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;

std::string format_sweep_table(const analysis::sweep_results& r) {
  std::string out = fmt::format("scenario {}, {} trials per point, sweeping {} bits\n\n", r.scenario_name, r.num_trials,
                                to_string(r.axis));
  out += fmt::format("{:<15} {:>5} {:<10} {:>12} {:>12} {:>11} {:>9} {:>11} {:>12}\n", "node", "bits", "format",
                     "SINR loss dB", "EVM fixed %", "EVM impl %", "SQNR dB", "ovf rate", "max ovf rate");
  for (const analysis::sweep_point& p : r.points) {
    out += fmt::format("{:<15} {:>5} {:<10} {:>12.4f} {:>12.3f} {:>11.4f} {:>9} {:>11.3g} {:>12.3g}\n",
                       datapath::node_name(p.id), p.bits, fp::to_q_string(p.fmt), p.summary.sinr_loss_db,
                       p.summary.evm_fixed_pct, p.summary.evm_impl_pct,
                       std::isinf(p.node_sqnr_db) ? std::string("exact") : fmt::format("{:.1f}", p.node_sqnr_db),
                       p.node_overflow_rate, p.max_overflow_rate);
  }
  return out;
}

std::string to_csv(const analysis::sweep_results& r) {
  std::string out =
      "node,bits,format,sinr_loss_db,evm_fixed_pct,evm_impl_pct,sqnr_db,overflow_rate,max_overflow_rate\n";
  for (const analysis::sweep_point& p : r.points) {
    out += fmt::format("{},{},{},{:.6g},{:.6g},{:.6g},{},{:.6g},{:.6g}\n", datapath::node_name(p.id), p.bits,
                       fp::to_q_string(p.fmt), p.summary.sinr_loss_db, p.summary.evm_fixed_pct, p.summary.evm_impl_pct,
                       std::isinf(p.node_sqnr_db) ? std::string("inf") : fmt::format("{:.6g}", p.node_sqnr_db),
                       p.node_overflow_rate, p.max_overflow_rate);
  }
  return out;
}

}  // namespace fxmimo::report
