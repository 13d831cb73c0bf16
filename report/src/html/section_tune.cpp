// The report's section for a word-length search: the chosen widths with their cost and modes,
// each limit against the re-verified value and its margin, and the PASS/FAIL verdict.
#include <fmt/core.h>

#include <cctype>

#include "sections.hpp"

namespace fxmimo::report::html {

std::string section_title(const tune_record&) { return "Tuned widths"; }

std::string headline(const tune_record& r) {
  return fmt::format("cost {} ({}); re-verification {}", num(r.cost, 10), r.cost_model,
                     r.meets_limits ? "PASS" : "FAIL");
}

std::optional<std::uint64_t> trials_of(const tune_record& r) { return r.verification_trials; }

namespace {

/// "0, 1, 2" for a few indices, "12 … 35" for a longer contiguous run, else the first eight.
std::string trial_list(const std::vector<std::uint64_t>& t) {
  if (t.empty()) return "none";
  bool contiguous = true;
  for (std::size_t i = 1; i < t.size(); ++i) contiguous = contiguous && t[i] == t[i - 1] + 1;
  if (t.size() > 4 && contiguous) return fmt::format("{} … {}", t.front(), t.back());
  std::string out;
  for (std::size_t i = 0; i < t.size() && i < 8; ++i) out += (i == 0 ? "" : ", ") + std::to_string(t[i]);
  if (t.size() > 8) out += fmt::format(", … ({} in all)", t.size());
  return out;
}

}  // namespace

void render_section(page& pg, const tune_record& r) {
  const std::string unit = r.cost_model == "bits" ? "register bits"
                                                  : "area units (proxy: multiplier widths products, "
                                                    "register and memory bits)";
  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>. Cheapest widths found under cost model <b>{}</b>: total cost "
      "<b>{}</b> {}.</p>\n",
      esc(r.scenario.name), esc(r.cost_model), num(r.cost, 10), esc(unit));
  pg.out += fmt::format(
      "<p class=\"verdict {}\">Re-verification on {} fresh trials: <b>{}</b> — {}</p>\n",
      r.meets_limits ? "pass" : "fail", trials_text(r.verification_trials), r.meets_limits ? "PASS" : "FAIL",
      r.meets_limits ? "the widths meet every limit." : "the widths do NOT meet every limit; see the margins below.");
  if (!r.note.empty()) pg.out += fmt::format("<p class=\"note\">{}</p>\n", esc(r.note));
  if (const auto searched = r.search_meets_limits(); searched && !*searched) {
    pg.out += "<p class=\"verdict fail\"><b>FAIL</b> — the search itself found no widths that meet every limit.</p>\n";
  }
  std::vector<std::string> facts;
  if (r.search_trials) facts.push_back(fmt::format("search on {} trials", *r.search_trials));
  if (r.evaluations) facts.push_back(fmt::format("{} evaluations", *r.evaluations));
  if (r.verification_trial_indices) facts.push_back("fresh trials " + trial_list(*r.verification_trial_indices));
  if (!facts.empty()) {
    std::string line;
    for (const std::string& f : facts) line += (line.empty() ? "" : ", ") + f;
    line[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(line[0])));
    pg.out += fmt::format("<p>{}.</p>\n", esc(line));
  }

  pg.out += "<table>\n";
  pg.row({"node", "format", "word W", "fraction F", "integer m", "cost"}, true, "ll");
  for (const tune_node_record& n : r.nodes) {
    pg.row({esc(n.node), esc(fixedpoint::to_q_string(n.fmt)), std::to_string(n.fmt.word_bits),
            std::to_string(n.fmt.frac_bits), std::to_string(n.fmt.int_bits()), num(n.cost, 10)},
           false, "ll");
  }
  pg.out += fmt::format("<tr><th class=\"l\">total</th><td></td><td></td><td></td><td></td><th>{}</th></tr>\n",
                        num(r.cost, 10));
  pg.out += "</table>\n";
  bool any_modes = false;
  for (const tune_node_record& n : r.nodes) any_modes = any_modes || n.rounding || n.overflow;
  if (any_modes) {
    pg.out += "<table>\n";
    pg.row({"node", "rounding", "overflow"}, true, "lll");
    for (const tune_node_record& n : r.nodes) {
      pg.row({esc(n.node), n.rounding ? std::string(fixedpoint::to_string(*n.rounding)) : "—",
              n.overflow ? std::string(fixedpoint::to_string(*n.overflow)) : "—"},
             false, "lll");
    }
    pg.out += "</table>\n";
  }

  pg.out += "<table>\n";
  pg.row({"limit", "limit", "re-verified", "margin (limit − value)", "verdict", "on the search trials"}, true, "l");
  const auto limit_row = [&](const std::string& label, const std::optional<double>& limit, const metric& value,
                             const metric& searched, int sig) {
    const metric margin = limit && value ? metric(*limit - *value) : std::nullopt;
    std::string verdict = "no limit";
    if (limit && value) verdict = *value <= *limit ? "within" : "<b>EXCEEDED</b>";
    pg.row({esc(label), num_or_dash(limit, sig), num_or_dash(value, sig), num_or_dash(margin, sig), verdict,
            num_or_dash(searched, sig)});
  };
  const tune_figures_record none;
  const tune_figures_record& search = r.search ? *r.search : none;
  limit_row("SINR loss (dB)", r.max_sinr_loss_db, r.verification.sinr_loss_db, search.sinr_loss_db, 4);
  limit_row("implementation EVM (%)", r.max_evm_pct, r.verification.evm_impl_pct, search.evm_impl_pct, 4);
  limit_row("overflow rate (worst node)", r.max_overflow_rate, r.verification.max_overflow_rate,
            search.max_overflow_rate, 3);
  if (r.max_rms_tx_power_error_db || r.verification.rms_tx_power_error_db) {
    limit_row("RMS tx power error (dB)", r.max_rms_tx_power_error_db,
              r.verification.rms_tx_power_error_db.value_or(std::nullopt),
              search.rms_tx_power_error_db.value_or(std::nullopt), 4);
  }
  pg.out += "</table>\n";
  if (!r.corners.empty()) {
    pg.out += "<table class=\"corners\">\n";
    pg.row({"corner", "SINR loss (dB)", "implementation EVM (%)", "overflow rate", "95 % bound", "fresh trials",
            "verdict"},
           true, "l");
    for (const corner_record& c : r.corners) {
      pg.row({esc(c.name), num_or_dash(c.verification.sinr_loss_db), num_or_dash(c.verification.evm_impl_pct),
              num_or_dash(c.verification.max_overflow_rate, 3), num_or_dash(c.proven_overflow_bound, 3),
              std::to_string(c.verification_trials), c.meets_limits ? "within" : "<b>EXCEEDED</b>"},
             false, "l");
    }
    pg.out += "</table>\n<table class=\"binding\">\n";
    pg.row({"node", "integer bits set by", "last fraction bit for"}, true, "lll");
    for (std::size_t i = 0; i < r.nodes.size() && i < r.int_bits_corner.size(); ++i) {
      pg.row({esc(r.nodes[i].node), esc(r.int_bits_corner[i]),
              r.frac_bits_corner[i].empty() ? "—" : esc(r.frac_bits_corner[i])},
             false, "lll");
    }
    pg.out += "</table>\n";
  }
  if (!r.variants.empty()) {
    pg.out += "<table class=\"variants\">\n";
    pg.row({"divide and root units", "cost (" + esc(r.cost_model) + ")", "fresh trials", ""}, true, "lrll");
    for (const variant_record& v : r.variants) {
      pg.row({esc(v.label), fmt::format("{:.0f}", v.cost), v.meets_limits ? "within" : "<b>EXCEEDED</b>",
              v.chosen ? "<b>chosen</b>" : ""},
             false, "lrll");
    }
    pg.out += "</table>\n";
  }
  if (r.proven_overflow_bound) {
    pg.out += fmt::format(
        "<p class=\"proven\">On the fresh trials every node's overflow rate lies below {} at 95 % confidence "
        "(weakest: node {}; no overflow in n values bounds the rate by 3/n, the rule of three){}.</p>\n",
        num_or_dash(*r.proven_overflow_bound, 3), esc(r.weakest_node),
        *r.proven_overflow_bound && **r.proven_overflow_bound > r.max_overflow_rate
            ? fmt::format(": the limit {} is <b>not proven</b> by these trials", num(r.max_overflow_rate, 3))
            : "");
  }
  if (r.verification_distribution) {
    const bool at_percentile = r.sinr_loss_percentile.has_value();
    render_distribution(pg, *r.verification_distribution, r.max_sinr_loss_db,
                        at_percentile ? fmt::format("limit on the {} % point", num(*r.sinr_loss_percentile))
                                      : "limit on the mean loss");
  }
}

}  // namespace fxmimo::report::html
