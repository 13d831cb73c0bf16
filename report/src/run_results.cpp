#include <fmt/core.h>

#include <cmath>

#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;

namespace {

std::string sqnr_text(double db) { return std::isinf(db) ? "exact" : fmt::format("{:.1f}", db); }

}  // namespace

std::string format_run_table(const analysis::run_results& r) {
  std::string out;
  out += fmt::format("scenario {} ({}), {} trial{}\n\n", r.scenario_name, r.scenario_source, r.trial_indices.size(),
                     r.trial_indices.size() == 1 ? "" : "s");
  out += fmt::format("{:<15} {:<10} {:>5} {:<17} {:<18} {:>11} {:>9} {:>12} {:>10} {:>10}\n", "node", "format", "bits",
                     "rounding", "overflow", "max|golden|", "SQNR dB", "max|err| LSB", "overflows", "rate<(95%)");
  bool any_default = false;
  for (const analysis::node_result& n : r.nodes) {
    const std::string fmt_text = fp::to_q_string(n.spec.fmt) + (n.is_default ? "*" : "");
    any_default = any_default || n.is_default;
    out += fmt::format("{:<15} {:<10} {:>5} {:<17} {:<18} {:>11.4g} {:>9} {:>12.3g} {:>10} {:>10.2g}\n",
                       datapath::node_name(n.id), fmt_text, n.spec.fmt.word_bits, fp::to_string(n.spec.rounding),
                       fp::to_string(n.spec.overflow), n.max_abs_golden, sqnr_text(n.sqnr_db()), n.max_err_lsb,
                       n.counters.overflowed, n.overflow_rate_bound());
  }
  if (any_default) out += "* no [nodes.NAME] table in the scenario: the wide default Q20.43, half_even, saturate\n";
  out +=
      "(signed Qm.n = 1 + m + n bits; UQm.n = m + n bits. rate<(95%): the overflow rate's 95 % upper bound, 3/n\n"
      " for no overflow in n requantised values)\n\n";
  out += fmt::format("{:<6} {:>12} {:>12} {:>9} {:>10} {:>10}\n", "user", "SINR gold dB", "SINR fixed dB", "loss dB",
                     "EVM gold %", "EVM fixed %");
  for (std::size_t k = 0; k < r.users.size(); ++k) {
    const analysis::user_result& u = r.users[k];
    out += fmt::format("{:<6} {:>12.2f} {:>13.2f} {:>9.3f} {:>10.3f} {:>11.3f}\n", k, u.sinr_golden_db, u.sinr_fixed_db,
                       u.sinr_loss_db(), u.evm_golden_pct, u.evm_fixed_pct);
  }
  const analysis::run_summary& s = r.summary;
  out += fmt::format("{:<6} {:>12.2f} {:>13.2f} {:>9.3f} {:>10.3f} {:>11.3f}\n\n", "mean", s.sinr_golden_db,
                     s.sinr_fixed_db, s.sinr_loss_db, s.evm_golden_pct, s.evm_fixed_pct);
  out += fmt::format("transmit power of the fixed block against the golden: {:+.4f} dB mean, {:.4f} dB worst trial\n",
                     s.tx_power_error_db, s.max_abs_tx_power_error_db);
  out += fmt::format("implementation EVM at the DAC: {:.4f} %", s.evm_impl_pct);
  if (s.evm_limit_pct) {
    out += fmt::format("   (3GPP TS 38.104 base-station limit for this modulation: {} %)", *s.evm_limit_pct);
  }
  out += "\n";
  out += format_distribution(r.distribution, r.trial_indices.size(), r.users.size());
  if (r.uplink) out += format_uplink(*r.uplink);
  for (const std::string& w : r.warnings) out += "warning: " + w + "\n";
  return out;
}

std::string format_uplink(const analysis::uplink_results& u) {
  std::string out = "\nuplink (ul_eq against the users' symbols, receiver noise included):\n";
  out += fmt::format("{:<6} {:>12} {:>12} {:>9} {:>10} {:>10}\n", "user", "SINR gold dB", "SINR fixed dB", "loss dB",
                     "EVM gold %", "EVM fixed %");
  for (std::size_t k = 0; k < u.users.size(); ++k) {
    const analysis::user_result& r = u.users[k];
    out += fmt::format("{:<6} {:>12.2f} {:>13.2f} {:>9.3f} {:>10.3f} {:>11.3f}\n", k, r.sinr_golden_db, r.sinr_fixed_db,
                       r.sinr_loss_db(), r.evm_golden_pct, r.evm_fixed_pct);
  }
  out += fmt::format("{:<6} {:>12.2f} {:>13.2f} {:>9.3f} {:>10.3f} {:>11.3f}\n", "mean", u.sinr_golden_db,
                     u.sinr_fixed_db, u.sinr_loss_db, u.evm_golden_pct, u.evm_fixed_pct);
  out += fmt::format("uncoded BER: golden {:.3g} ({} errors), fixed {:.3g} ({} errors) in {} bits\n", u.ber_golden(),
                     u.bit_errors_golden, u.ber_fixed(), u.bit_errors_fixed, u.bits);
  out += fmt::format("LLRs (ul_llr) whose hard decision differs from the golden LLR's: {} of {} ({:.3g})\n",
                     u.llr_sign_flips, u.llrs, u.llr_flip_rate());
  return out;
}

std::string format_distribution(const analysis::run_distribution& d, std::size_t trials, std::size_t users) {
  std::string out = fmt::format(
      "over {} trials x {} users: SINR loss {:.4f} / {:.4f} / {:.4f} dB at 5 / 50 / 95 %; implementation EVM "
      "{:.4f} % at 95 %, {:.4f} % worst trial\n",
      trials, users, d.sinr_loss_p5_db, d.sinr_loss_p50_db, d.sinr_loss_p95_db, d.evm_impl_p95_pct, d.evm_impl_max_pct);
  if (d.gram_condition_p50) {
    out += fmt::format("Gram condition number over trials: {:.4g} median, {:.4g} at 95 %, {:.4g} worst\n",
                       *d.gram_condition_p50, *d.gram_condition_p95, *d.gram_condition_max);
  }
  return out;
}

}  // namespace fxmimo::report
