// The tune results as a text table.
#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <sstream>

#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;

std::string format_tune_table(const analysis::tune_results& r) {
  std::string out =
      fmt::format("scenario {}: cost model {}, {} evaluations of {} trials; integer bits from {} golden trials\n\n",
                  r.scenario_name, to_string(r.model), r.evaluations, r.search_trials.size(), r.range_trials);
  const bool corners = r.corners.size() > 1;
  out += fmt::format("{:<15} {:<10} {:>5} {:>9} {:>9}{}\n", "node", "format", "bits", "int bits", "frac bits",
                     corners ? "  int bits set by / last frac bit for (corner)" : "");
  for (std::size_t i = 0; i < r.nodes.size(); ++i) {
    const datapath::node_id id = r.nodes[i];
    const fp::format& f = r.config[id].spec.fmt;
    std::string binding;
    if (corners) {
      const std::string frac =
          i < r.frac_bits_corner.size() && !r.frac_bits_corner[i].empty() ? r.frac_bits_corner[i] : "-";
      binding = fmt::format("  {} / {}", i < r.int_bits_corner.size() ? r.int_bits_corner[i] : "-", frac);
    }
    out += fmt::format("{:<15} {:<10} {:>5} {:>9} {:>9}{}\n", datapath::node_name(id), fp::to_q_string(f), f.word_bits,
                       f.int_bits(), f.frac_bits, binding);
  }
  for (datapath::node_id id : r.kept_nodes) {
    const fp::format& f = r.config[id].spec.fmt;
    out += fmt::format("{:<15} {:<10} {:>5} {:>9} {:>9}  kept as the scenario sets it: clips by design\n",
                       datapath::node_name(id), fp::to_q_string(f), f.word_bits, f.int_bits(), f.frac_bits);
  }
  out += fmt::format("\ncost: {:.0f} ({})\n", r.cost,
                     r.model == analysis::cost_model::bits ? "total word bits" : "area proxy");
  out += fmt::format("{:<22} {:>12} {:>12} {:>12} {:>12}\n", "", "limit", "search", "fresh trials", "margin");
  const std::string loss_label = r.limits.sinr_loss_percentile
                                     ? fmt::format("SINR loss dB at {:g} %", *r.limits.sinr_loss_percentile)
                                     : std::string("SINR loss dB (mean)");
  out += fmt::format("{:<22} {:>12.4f} {:>12.4f} {:>12.4f} {:>12.4f}\n", loss_label, r.limits.max_sinr_loss_db,
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
  if (const auto& l = r.limits.max_uplink_sinr_loss_db) {
    out += fmt::format("{:<22} {:>12.4f} {:>12.4f} {:>12.4f} {:>12.4f}\n", "uplink SINR loss dB", *l,
                       r.search.uplink_sinr_loss_db, r.verification.uplink_sinr_loss_db,
                       *l - r.verification.uplink_sinr_loss_db);
  }
  if (const auto& l = r.limits.max_uplink_ber_ratio) {
    out +=
        fmt::format("{:<22} {:>12.4f} {:>12.4f} {:>12.4f} {:>12.4f}\n", "uplink BER ratio", *l,
                    r.search.uplink_ber_ratio, r.verification.uplink_ber_ratio, *l - r.verification.uplink_ber_ratio);
  }
  if (corners) {
    out += fmt::format("\n{:<44} {:>10} {:>10} {:>10} {:>10} {:>8}  {}\n", "corner (fresh trials)", "SINR loss",
                       "EVM %", "overflow", "bound 95%", "trials", "verdict");
    for (const analysis::corner_outcome& c : r.corners) {
      out += fmt::format("{:<44} {:>10.4f} {:>10.4f} {:>10.3g} {:>10.3g} {:>8}  {}\n", c.name,
                         c.verification.sinr_loss_db, c.verification.evm_pct, c.verification.max_overflow_rate,
                         c.proven_overflow_bound, c.verify_trials.size(), c.met ? "PASS" : "FAIL");
    }
    out += "(the figures above are the worst over the corners)\n";
  }
  if (!r.variants.empty()) {
    out += fmt::format("\n{:<52} {:>10}  {}\n", "divide and root units (each tuned)", "cost", "fresh trials");
    for (const analysis::variant_outcome& v : r.variants) {
      out += fmt::format("{:<52} {:>10.0f}  {}{}\n", v.label, v.cost, v.met ? "PASS" : "FAIL",
                         v.chosen ? "  <- chosen" : "");
    }
  }
  const std::string where = corners ? fmt::format("at {} corners, each on its fresh trials", r.corners.size())
                                    : fmt::format("on {} fresh trials", r.verify_trials.size());
  out += r.met ? fmt::format("verification {}: PASS (every limit met)\n", where)
               : fmt::format("verification {}: FAIL - {}\n", where, r.note);
  if (!r.verify_nodes.empty()) {
    const analysis::node_result* weakest = nullptr;
    for (const analysis::node_result& n : r.verify_nodes) {
      if (n.id == r.weakest_node) weakest = &n;
    }
    const std::uint64_t n_values = weakest != nullptr ? weakest->counters.requantized : 0;
    const std::uint64_t n_over = weakest != nullptr ? weakest->counters.overflowed : 0;
    out += fmt::format(
        "overflow rate of every node below {:.3g} at 95 % confidence (node {}: {} overflows in {} values{})\n",
        r.proven_overflow_bound, datapath::node_name(r.weakest_node), n_over, n_values,
        n_over == 0 ? ", the rule of three" : "");
    if (r.proven_overflow_bound > r.limits.max_overflow_rate &&
        r.verification.max_overflow_rate <= r.limits.max_overflow_rate) {
      out += fmt::format(
          "  the overflow-rate limit {:g} is met on these trials but not proven by them: zero overflows in {:.3g} "
          "values of every node would prove it (--verify-trials)\n",
          r.limits.max_overflow_rate, -std::log(0.05) / r.limits.max_overflow_rate);
    }
    out += "on the fresh trials, " + format_distribution(r.verify_distribution, r.verify_trials.size(), r.users);
  }
  return out;
}

}  // namespace fxmimo::report
