// The report's section for a run: the summary against the 3GPP EVM limit, the transmit-power
// error, the node table (formats, modes, SQNR, errors, overflow counts) and the user table.
#include <fmt/core.h>

#include "charts.hpp"
#include "sections.hpp"

namespace fxmimo::report::html {

namespace {

std::string count_or_dash(const std::optional<std::uint64_t>& v) { return v ? num(static_cast<double>(*v), 15) : "—"; }

}  // namespace

std::string section_title(const run_record&) { return "Run"; }

std::string headline(const run_record& r) {
  return fmt::format("SINR loss {} dB, implementation EVM {} %{}", num_or_dash(r.summary.sinr_loss_db),
                     num_or_dash(r.summary.evm_impl_pct),
                     r.summary.evm_limit_pct ? fmt::format(" (3GPP limit {} %)", num(*r.summary.evm_limit_pct)) : "");
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
  if (!r.warnings.empty()) {
    pg.out += "<ul class=\"warnings\">\n";
    for (const std::string& w : r.warnings) pg.out += fmt::format("<li>warning: {}</li>\n", esc(w));
    pg.out += "</ul>\n";
  }
}

}  // namespace fxmimo::report::html
