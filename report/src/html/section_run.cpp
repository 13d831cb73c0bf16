// The report's section for a run: the summary against the 3GPP EVM limit, the transmit-power
// error, the node table (formats, modes, SQNR, errors, overflow counts), the user table and,
// with an uplink, its users, bit errors and LLR decisions.
#include <fmt/core.h>

#include "charts.hpp"
#include "sections.hpp"

namespace fxmimo::report::html {

namespace {

std::string count_or_dash(const std::optional<std::uint64_t>& v) { return v ? count_text(*v) : "—"; }

/// Cell 0's uplink at BS 0 (README "The uplink"): per user SINR and EVM golden and fixed, the
/// uncoded bit errors of both with the bits sent, and the LLRs whose hard decision flipped.
void render_uplink(page& pg, const uplink_record& u) {
  pg.out += "<h3>Uplink at BS 0</h3>\n";
  pg.out +=
      "<p>Cell 0's users detected by its base station: SINR and EVM of the equalised symbols (ul_eq) "
      "against the symbols sent, receiver noise included; SINR is the mean linear SINR over trials, EVM the "
      "RMS.</p>\n";
  pg.out += "<table class=\"uplink\">\n";
  pg.row({"uplink user", "SINR golden (dB)", "SINR fixed (dB)", "SINR loss (dB)", "EVM golden (%)", "EVM fixed (%)"},
         true);
  for (std::size_t i = 0; i < u.users.size(); ++i) {
    const run_user_record& k = u.users[i];
    pg.row({std::to_string(i), num_or_dash(k.sinr_golden_db), num_or_dash(k.sinr_fixed_db), num_or_dash(k.sinr_loss_db),
            num_or_dash(k.evm_golden_pct), num_or_dash(k.evm_fixed_pct)});
  }
  pg.row({"mean", num_or_dash(u.sinr_golden_db), num_or_dash(u.sinr_fixed_db), num_or_dash(u.sinr_loss_db),
          num_or_dash(u.evm_golden_pct), num_or_dash(u.evm_fixed_pct)});
  pg.out += "</table>\n<table class=\"uplink\">\n";
  pg.row({"uplink decisions", "golden", "fixed", "of bits"}, true);
  pg.row({"bit errors (uncoded)", count_text(u.bit_errors_golden), count_text(u.bit_errors_fixed), count_text(u.bits)});
  pg.row({"BER (uncoded)", num_or_dash(per_bit(u.bit_errors_golden, u.bits), 3),
          num_or_dash(per_bit(u.bit_errors_fixed, u.bits), 3), count_text(u.bits)});
  pg.row({"LLR hard decisions differing from golden", "—", count_text(u.llr_sign_flips), count_text(u.bits)});
  pg.row({"LLR flip rate", "—", num_or_dash(per_bit(u.llr_sign_flips, u.bits), 3), count_text(u.bits)});
  pg.out += "</table>\n";
}

}  // namespace

metric per_bit(std::uint64_t count, std::uint64_t bits) {
  return bits > 0 ? metric(static_cast<double>(count) / static_cast<double>(bits)) : std::nullopt;
}

std::string section_title(const run_record&) { return "Run"; }

std::string headline(const run_record& r) {
  return fmt::format("SINR loss {} dB, implementation EVM {} %{}{}", num_or_dash(r.summary.sinr_loss_db),
                     num_or_dash(r.summary.evm_impl_pct),
                     r.summary.evm_limit_pct ? fmt::format(" (3GPP limit {} %)", num(*r.summary.evm_limit_pct)) : "",
                     r.uplink ? fmt::format("; uplink SINR loss {} dB", num_or_dash(r.uplink->sinr_loss_db)) : "");
}

std::optional<std::uint64_t> trials_of(const run_record& r) { return r.trials; }

void render_distribution(page& pg, const distribution_record& d, const std::optional<double>& loss_limit,
                         const std::string& limit_label) {
  pg.out += fmt::format(
      "<p class=\"distribution\">Over every trial and user: SINR loss {} / {} / {} dB at 5 / 50 / 95 %; "
      "implementation EVM {} % at 95 %, {} % in the worst trial.{}</p>\n",
      num_or_dash(d.sinr_loss_p5_db), num_or_dash(d.sinr_loss_p50_db), num_or_dash(d.sinr_loss_p95_db),
      num_or_dash(d.evm_impl_p95_pct), num_or_dash(d.evm_impl_max_pct),
      d.gram_condition_p50 ? fmt::format(" Condition number of the Gram: {} median, {} at 95 %, {} worst.",
                                         num_or_dash(d.gram_condition_p50), num_or_dash(d.gram_condition_p95),
                                         num_or_dash(d.gram_condition_max))
                           : "");
  if (d.sinr_loss_percentiles_db.size() == 101) {
    cdf_chart c{pg.next_id("sinr-loss-cdf"),
                "sinr-loss-cdf",
                "SINR loss per trial and user",
                "SINR loss (dB)",
                d.sinr_loss_percentiles_db,
                loss_limit,
                limit_label};
    pg.out += "<div class=\"charts\">\n" + render_cdf_chart(c) + "</div>\n";
  }
}

void render_section(page& pg, const run_record& r) {
  pg.out += fmt::format("<p>Scenario <b>{}</b>{}, {} trials.</p>\n", esc(r.scenario.name),
                        r.scenario.source.empty() ? "" : " (" + esc(r.scenario.source) + ")", trials_text(r.trials));
  const run_summary_record& s = r.summary;
  pg.out += "<table>\n";
  pg.row({"mean over cell 0's users", "golden", "fixed", "loss / implementation", "3GPP limit"}, true);
  pg.row({"SINR (dB)", num_or_dash(s.sinr_golden_db), num_or_dash(s.sinr_fixed_db), num_or_dash(s.sinr_loss_db), ""});
  pg.row({"EVM (%)", num_or_dash(s.evm_golden_pct), num_or_dash(s.evm_fixed_pct), num_or_dash(s.evm_impl_pct),
          num_or_dash(s.evm_limit_pct)});
  pg.out += "</table>\n";
  if (s.tx_power_error_db || s.max_abs_tx_power_error_db || s.rms_tx_power_error_db) {
    const auto db = [](const std::optional<metric>& v) { return v ? num_or_dash(*v) : "—"; };
    pg.out += fmt::format(
        "<p>Transmit power of the fixed block against the golden one: {} dB mean, {} dB worst trial, {} dB RMS "
        "over trials.</p>\n",
        db(s.tx_power_error_db), db(s.max_abs_tx_power_error_db), db(s.rms_tx_power_error_db));
  }
  pg.out += "<table>\n";
  pg.row({"node", "format", "rounding", "overflow", "SQNR (dB)", "max error (LSB)", "overflows", "overflow rate",
          "rate bound (95 %)", "width", "max |golden|", "values", "requantised", "inexact", "max excess (LSB)"},
         true, "llll");
  for (const run_node_record& n : r.nodes) {
    pg.row({esc(n.node), esc(fixedpoint::to_q_string(n.fmt)), std::string(fixedpoint::to_string(n.rounding)),
            std::string(fixedpoint::to_string(n.overflow)), n.sqnr_db ? num(*n.sqnr_db) : "exact", num(n.max_err_lsb),
            num(static_cast<double>(n.overflows), 12), num_or_dash(n.overflow_rate, 3),
            n.overflow_rate_bound ? num_or_dash(*n.overflow_rate_bound, 3) : "—", n.is_default ? "default" : "set",
            num_or_dash(n.max_abs_golden), count_or_dash(n.values), count_or_dash(n.requantized),
            count_or_dash(n.inexact), num_or_dash(n.max_overflow_excess_lsb)},
           false, "llll");
  }
  pg.out += "</table>\n";
  pg.out += "<table>\n";
  pg.row({"user", "SINR golden (dB)", "SINR fixed (dB)", "SINR loss (dB)", "EVM golden (%)", "EVM fixed (%)"}, true);
  for (std::size_t i = 0; i < r.users.size(); ++i) {
    const run_user_record& u = r.users[i];
    pg.row({std::to_string(i), num_or_dash(u.sinr_golden_db), num_or_dash(u.sinr_fixed_db), num_or_dash(u.sinr_loss_db),
            num_or_dash(u.evm_golden_pct), num_or_dash(u.evm_fixed_pct)});
  }
  pg.out += "</table>\n";
  if (r.distribution) render_distribution(pg, *r.distribution, std::nullopt, "");
  if (r.uplink) render_uplink(pg, *r.uplink);
  if (!r.warnings.empty()) {
    pg.out += "<ul class=\"warnings\">\n";
    for (const std::string& w : r.warnings) pg.out += fmt::format("<li>warning: {}</li>\n", esc(w));
    pg.out += "</ul>\n";
  }
}

}  // namespace fxmimo::report::html
