// The sweep results as a text table.
#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <sstream>

#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;

namespace {

/// The sweep has uplink columns: its scenario has [uplink], so every point carries the uplink.
bool has_uplink(const analysis::sweep_results& r) {
  return !r.points.empty() && std::all_of(r.points.begin(), r.points.end(),
                                          [](const analysis::sweep_point& p) { return p.uplink.has_value(); });
}

}  // namespace

std::string format_sweep_table(const analysis::sweep_results& r) {
  std::string out = fmt::format("scenario {}, {} trials per point, sweeping {} bits\n\n", r.scenario_name, r.num_trials,
                                to_string(r.axis));
  out += fmt::format("{:<15} {:>5} {:<10} {:>12} {:>9} {:>12} {:>11} {:>9} {:>11} {:>12}\n", "node", "bits", "format",
                     "SINR loss dB", "loss p95", "EVM fixed %", "EVM impl %", "SQNR dB", "ovf rate", "max ovf rate");
  for (const analysis::sweep_point& p : r.points) {
    out += fmt::format("{:<15} {:>5} {:<10} {:>12.4f} {:>9.4f} {:>12.3f} {:>11.4f} {:>9} {:>11.3g} {:>12.3g}\n",
                       datapath::node_name(p.id), p.bits, fp::to_q_string(p.fmt), p.summary.sinr_loss_db,
                       p.distribution.sinr_loss_p95_db, p.summary.evm_fixed_pct, p.summary.evm_impl_pct,
                       std::isinf(p.node_sqnr_db) ? std::string("exact") : fmt::format("{:.1f}", p.node_sqnr_db),
                       p.node_overflow_rate, p.max_overflow_rate);
  }
  if (has_uplink(r)) {
    out += "\nuplink at each point (ul_eq against the users' symbols; BER uncoded, errors in the bits sent):\n";
    out += fmt::format("{:<15} {:>5} {:<10} {:>12} {:>12} {:>10} {:>9} {:>10} {:>9} {:>10}\n", "node", "bits", "format",
                       "SINR loss dB", "EVM fixed %", "BER fixed", "errors", "BER gold", "errors", "LLR flips");
    for (const analysis::sweep_point& p : r.points) {
      const analysis::uplink_results& u = *p.uplink;
      out += fmt::format("{:<15} {:>5} {:<10} {:>12.4f} {:>12.3f} {:>10.3g} {:>9} {:>10.3g} {:>9} {:>10.3g}\n",
                         datapath::node_name(p.id), p.bits, fp::to_q_string(p.fmt), u.sinr_loss_db, u.evm_fixed_pct,
                         u.ber_fixed(), u.bit_errors_fixed, u.ber_golden(), u.bit_errors_golden, u.llr_flip_rate());
    }
    out += fmt::format(
        "({} bits and {} LLRs per point; LLR flips: the share of ul_llr words whose hard decision\n"
        " differs from the golden LLR's)\n",
        r.points.front().uplink->bits, r.points.front().uplink->llrs);
  }
  return out;
}

std::string to_csv(const analysis::sweep_results& r) {
  const bool uplink = has_uplink(r);
  std::string out =
      "node,bits,format,sinr_loss_db,evm_fixed_pct,evm_impl_pct,sqnr_db,overflow_rate,max_overflow_rate,"
      "sinr_loss_p95_db,evm_impl_p95_pct";
  if (uplink) {
    out +=
        ",ul_sinr_golden_db,ul_sinr_fixed_db,ul_sinr_loss_db,ul_evm_golden_pct,ul_evm_fixed_pct,ul_bits,"
        "ul_bit_errors_golden,ul_bit_errors_fixed,ul_ber_golden,ul_ber_fixed,ul_llrs,ul_llr_sign_flips,"
        "ul_llr_flip_rate";
  }
  out += "\n";
  for (const analysis::sweep_point& p : r.points) {
    out += fmt::format(
        "{},{},{},{:.6g},{:.6g},{:.6g},{},{:.6g},{:.6g},{:.6g},{:.6g}", datapath::node_name(p.id), p.bits,
        fp::to_q_string(p.fmt), p.summary.sinr_loss_db, p.summary.evm_fixed_pct, p.summary.evm_impl_pct,
        std::isinf(p.node_sqnr_db) ? std::string("inf") : fmt::format("{:.6g}", p.node_sqnr_db), p.node_overflow_rate,
        p.max_overflow_rate, p.distribution.sinr_loss_p95_db, p.distribution.evm_impl_p95_pct);
    if (uplink) {
      const analysis::uplink_results& u = *p.uplink;
      out +=
          fmt::format(",{:.6g},{:.6g},{:.6g},{:.6g},{:.6g},{},{},{},{:.6g},{:.6g},{},{},{:.6g}", u.sinr_golden_db,
                      u.sinr_fixed_db, u.sinr_loss_db, u.evm_golden_pct, u.evm_fixed_pct, u.bits, u.bit_errors_golden,
                      u.bit_errors_fixed, u.ber_golden(), u.ber_fixed(), u.llrs, u.llr_sign_flips, u.llr_flip_rate());
    }
    out += "\n";
  }
  return out;
}

std::string format_key_sweep_table(const analysis::key_sweep_results& r) {
  std::string out =
      fmt::format("scenario {}, {} trials per point, sweeping {}\n\n", r.scenario_name, r.num_trials, r.key);
  std::string growth_head;
  if (!r.points.empty()) {
    for (const auto& [id, bits] : r.points.front().growth_int_bits)
      growth_head += fmt::format(" {:>9}", datapath::node_name(id));
  }
  out += fmt::format("{:<12} {:>11} {:>12} {:>12} {:>11} {:>12} {:>12} |{}\n", "value", "SINR gold dB", "interf. dB",
                     "SINR loss dB", "EVM impl %", "max ovf rate", "", growth_head);
  for (const analysis::key_sweep_point& p : r.points) {
    std::string growth;
    for (const auto& [id, bits] : p.growth_int_bits) growth += fmt::format(" {:>9}", bits);
    out += fmt::format("{:<12} {:>11.2f} {:>12.2f} {:>12.4f} {:>11.4f} {:>12.3g} {:>12} |{}\n", p.value,
                       p.summary.sinr_golden_db, p.interference_db, p.summary.sinr_loss_db, p.summary.evm_impl_pct,
                       p.max_overflow_rate, "", growth);
  }
  out +=
      "(interf.: golden interference and leakage over signal at the users, 20 log10 of the golden EVM; right of |:\n"
      " integer bits each accumulating node needs for the largest golden value seen)\n";
  return out;
}

std::string to_csv(const analysis::key_sweep_results& r) {
  std::string out = "value,sinr_golden_db,sinr_fixed_db,sinr_loss_db,evm_impl_pct,interference_db,max_overflow_rate";
  if (!r.points.empty()) {
    for (const auto& [id, bits] : r.points.front().growth_int_bits)
      out += fmt::format(",int_bits_{}", datapath::node_name(id));
  }
  out += "\n";
  for (const analysis::key_sweep_point& p : r.points) {
    // A value with a comma or a quote (an array) is quoted, RFC 4180.
    std::string value = p.value;
    if (value.find_first_of(",\"") != std::string::npos) {
      std::string quoted = "\"";
      for (char c : value) quoted += c == '"' ? std::string("\"\"") : std::string(1, c);
      value = quoted + "\"";
    }
    out += fmt::format("{},{:.6g},{:.6g},{:.6g},{:.6g},{:.6g},{:.6g}", value, p.summary.sinr_golden_db,
                       p.summary.sinr_fixed_db, p.summary.sinr_loss_db, p.summary.evm_impl_pct, p.interference_db,
                       p.max_overflow_rate);
    for (const auto& [id, bits] : p.growth_int_bits) out += fmt::format(",{}", bits);
    out += "\n";
  }
  return out;
}

}  // namespace fxmimo::report
