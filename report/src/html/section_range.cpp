// The report's section for a range profile: a log2 |value| histogram per node with the proposed
// (and analytic) integer bits, and the table of percentiles and proposals.
#include <fmt/core.h>

#include "charts.hpp"
#include "sections.hpp"

namespace fxmimo::report::html {

std::string section_title(const range_record&) { return "Range profile"; }

std::string headline(const range_record& r) {
  return fmt::format("integer bits of {} for overflow probability {}", count_of(r.nodes.size(), "node"),
                     num(r.overflow_prob, 3));
}

std::optional<std::uint64_t> trials_of(const range_record& r) { return r.trials; }

void render_section(page& pg, const range_record& r) {
  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>, {} golden trials. Each histogram counts the real and imaginary parts of a node by "
      "binary exponent (bar e: 2^e &lt;= |v| &lt; 2^(e+1)); the solid line is the proposed integer bits m for "
      "an overflow probability of {} (a signed Qm.n holds |v| &lt; 2^m), the dashed line the worst-case "
      "analytic growth where there is a simple rule.</p>\n<div class=\"charts\">\n",
      esc(r.scenario.name), trials_text(r.trials), num(r.overflow_prob, 3));
  std::string table;
  for (const range_node_record& n : r.nodes) {
    histogram_chart h;
    h.id = pg.next_id("hist");
    h.node = n.node;
    h.title = n.node + ": |value| histogram";
    h.min_exp = n.hist_min_exp;
    h.counts.assign(n.log2_histogram.begin(), n.log2_histogram.end());
    h.proposed_int_bits = n.proposed_int_bits;
    h.analytic_int_bits = n.analytic_int_bits;
    pg.out += render_histogram(h);
    table += "<tr>";
    for (const std::string& c :
         {fmt::format("<td class=\"l\">{}</td>", esc(n.node)), fmt::format("<td>{}</td>", count_text(n.values)),
          fmt::format("<td>{}</td>", num(n.max_abs)), fmt::format("<td>{}</td>", num(n.p99)),
          fmt::format("<td>{}</td>", num(n.p99_99)), fmt::format("<td>{}</td>", num(n.p99_9999)),
          fmt::format("<td><b>{}</b></td>", n.proposed_int_bits),
          fmt::format("<td class=\"l\">{}</td>", esc(n.proposal_basis.empty() ? "—" : n.proposal_basis)),
          fmt::format("<td>{}</td>", n.analytic_int_bits ? std::to_string(*n.analytic_int_bits) : "—"),
          fmt::format("<td class=\"l\">{}</td>", esc(n.analytic_rule.empty() ? "—" : n.analytic_rule))}) {
      table += c;
    }
    table += "</tr>\n";
  }
  pg.out += "</div>\n<table>\n";
  pg.row({"node", "values", "max |v|", "p99 |v|", "p99.99 |v|", "p99.9999 |v|", "proposed m", "basis", "analytic m",
          "analytic rule"},
         true, "lrrrrrrlrl");
  pg.out += table + "</table>\n";
}

}  // namespace fxmimo::report::html
