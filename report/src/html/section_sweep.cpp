// The report's section for a sweep: per node, SINR loss and EVM against the swept width, for
// integer-bit sweeps the overflow rate on a log scale, and with an uplink its SINR loss and its
// bit-error and LLR-flip rates (log scale); the values in a table below.
#include <fmt/core.h>

#include <algorithm>
#include <map>
#include <set>

#include "charts.hpp"
#include "sections.hpp"

namespace fxmimo::report::html {

namespace {

std::string vary_symbol(const std::string& vary) { return vary == "frac" ? "F" : vary == "word" ? "W" : "m"; }

std::string vary_axis_label(const std::string& vary) {
  if (vary == "frac") return "fraction bits F (bits)";
  if (vary == "word") return "word length W (bits)";
  return "integer bits m (bits)";
}

std::string vary_words(const std::string& vary) {
  if (vary == "frac") return "fraction bits";
  if (vary == "word") return "word length";
  return "integer bits";
}

/// The swept nodes in datapath order, each with its points in order of the swept value.
std::vector<std::pair<std::string, std::vector<const sweep_point_record*>>> points_by_node(const sweep_record& r) {
  std::map<std::string, std::vector<const sweep_point_record*>> by_node;
  for (const sweep_point_record& p : r.points) by_node[p.node].push_back(&p);
  std::vector<std::pair<std::string, std::vector<const sweep_point_record*>>> out(by_node.begin(), by_node.end());
  std::stable_sort(out.begin(), out.end(),
                   [](const auto& a, const auto& b) { return node_rank(a.first) < node_rank(b.first); });
  for (auto& [node, pts] : out) {
    std::stable_sort(pts.begin(), pts.end(), [](const auto* a, const auto* b) { return a->bits < b->bits; });
  }
  return out;
}

/// A rate for a tooltip: "0 (none)" for an exact zero, which a log axis puts on its floor row.
std::string rate_text(const metric& rate, const char* zero) {
  return !rate ? std::string("no value") : *rate > 0 ? num(*rate, 3) : fmt::format("0 ({})", zero);
}

}  // namespace

std::string section_title(const sweep_record& r) { return "Sweep of " + vary_words(r.vary); }

std::string headline(const sweep_record& r) {
  std::set<std::string> nodes;
  for (const sweep_point_record& p : r.points) nodes.insert(p.node);
  return fmt::format("{} of {}, {}", vary_words(r.vary), count_of(nodes.size(), "node"),
                     count_of(r.points.size(), "point"));
}

std::optional<std::uint64_t> trials_of(const sweep_record& r) { return r.trials; }

void render_section(page& pg, const sweep_record& r) {
  const auto nodes = points_by_node(r);
  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>, {} trials per point; {} of {} swept, every other node as in the "
      "scenario. SINR loss and EVM are means over cell 0's users; implementation EVM compares the "
      "fixed-point DAC samples with the golden model's.</p>\n",
      esc(r.scenario.name), trials_text(r.trials), esc(vary_words(r.vary)),
      nodes.size() == 1 ? "one node" : fmt::format("{} nodes", nodes.size()));
  const bool uplink =
      !r.points.empty() &&
      std::all_of(r.points.begin(), r.points.end(), [](const sweep_point_record& p) { return p.uplink.has_value(); });
  if (uplink) {
    pg.out +=
        "<p>The scenario has an uplink: at each point also its SINR loss and EVM at BS 0 (means over cell 0's "
        "users), the uncoded bit errors of the fixed datapath in the bits sent, and the share of LLRs (ul_llr) "
        "whose hard decision differs from the golden LLR's.</p>\n";
  }
  if (nodes.empty()) pg.out += "<p>The sweep has no points.</p>\n";
  const std::string sym = vary_symbol(r.vary);
  for (const auto& [node, pts] : nodes) {
    // node by an init-capture: clang before 16 cannot capture a structured binding itself.
    const auto where_text = [&, &node = node](const sweep_point_record& p) {
      return fmt::format("{} {}, {} = {}", node, fixedpoint::to_q_string(p.fmt), sym, p.bits);
    };
    xy_chart sinr{pg.next_id("sinr"),      "sweep-sinr",     node,  node + ": SINR loss",
                  vary_axis_label(r.vary), "SINR loss (dB)", false, {{"SINR loss", {}}}};
    xy_chart evm{pg.next_id("evm"),       "sweep-evm", node,  node + ": EVM",
                 vary_axis_label(r.vary), "EVM (%)",   false, {{"implementation", {}}, {"fixed, at users", {}}}};
    xy_chart ovf{pg.next_id("overflow"),
                 "sweep-overflow",
                 node,
                 node + ": overflow rate",
                 vary_axis_label(r.vary),
                 "overflows per value (log)",
                 true,
                 {{"this node", {}}}};
    xy_chart ul_sinr{pg.next_id("uplink-sinr"), "sweep-uplink-sinr",     node,  node + ": uplink SINR loss",
                     vary_axis_label(r.vary),   "uplink SINR loss (dB)", false, {{"uplink SINR loss", {}}}};
    xy_chart ul_errors{
        pg.next_id("uplink-errors"), "sweep-uplink-errors", node, node + ": uplink bit errors and LLR flips",
        vary_axis_label(r.vary),     "per bit (log)",       true, {{"BER, fixed", {}}, {"LLR flip rate", {}}}};
    bool all_have_max = true;
    for (const sweep_point_record* p : pts) all_have_max = all_have_max && p->max_overflow_rate.has_value();
    if (all_have_max) ovf.series.push_back({"worst node", {}});
    for (const sweep_point_record* pp : pts) {
      const sweep_point_record& p = *pp;
      const double x = p.bits;
      const std::string at = where_text(p);
      sinr.series[0].points.push_back(
          {x, p.sinr_loss_db, fmt::format("{}: SINR loss {} dB", at, num_or_dash(p.sinr_loss_db))});
      evm.series[0].points.push_back(
          {x, p.evm_impl_pct, fmt::format("{}: implementation EVM {} %", at, num_or_dash(p.evm_impl_pct))});
      evm.series[1].points.push_back(
          {x, p.evm_fixed_pct, fmt::format("{}: EVM at users (fixed) {} %", at, num_or_dash(p.evm_fixed_pct))});
      ovf.series[0].points.push_back(
          {x, p.overflow_rate, fmt::format("{}: overflow rate {}", at, rate_text(p.overflow_rate, "no overflow"))});
      if (all_have_max) {
        ovf.series[1].points.push_back(
            {x, *p.max_overflow_rate,
             fmt::format("{}: worst node's overflow rate {}", at, rate_text(*p.max_overflow_rate, "no overflow"))});
      }
      if (uplink) {
        const uplink_record& u = *p.uplink;
        const metric ber = per_bit(u.bit_errors_fixed, u.bits), flips = per_bit(u.llr_sign_flips, u.bits);
        ul_sinr.series[0].points.push_back(
            {x, u.sinr_loss_db, fmt::format("{}: uplink SINR loss {} dB", at, num_or_dash(u.sinr_loss_db))});
        ul_errors.series[0].points.push_back(
            {x, ber,
             fmt::format("{}: uplink BER (fixed) {}, {} errors in {} bits", at, rate_text(ber, "no error"),
                         count_text(u.bit_errors_fixed), count_text(u.bits))});
        ul_errors.series[1].points.push_back(
            {x, flips,
             fmt::format("{}: LLR flip rate {}, {} of {} LLRs", at, rate_text(flips, "no flip"),
                         count_text(u.llr_sign_flips), count_text(u.bits))});
      }
    }
    pg.out += fmt::format("<div class=\"node-group\">\n<h3>{}</h3>\n<div class=\"charts\">\n", esc(node));
    pg.out += render_xy_chart(sinr);
    pg.out += render_xy_chart(evm);
    if (r.vary == "int") pg.out += render_xy_chart(ovf);
    if (uplink) {
      pg.out += render_xy_chart(ul_sinr);
      pg.out += render_xy_chart(ul_errors);
    }
    pg.out += "</div>\n<details><summary>values</summary>\n<table>\n";
    std::vector<std::string> head{esc(sym + " (bits)"), "format",    "SINR loss (dB)", "EVM impl. (%)",
                                  "EVM fixed (%)",      "SQNR (dB)", "overflow rate",  "worst node's overflow rate",
                                  "SINR fixed (dB)"};
    if (uplink) {
      head.insert(head.end(),
                  {"uplink SINR loss (dB)", "uplink EVM fixed (%)", "uplink BER fixed", "uplink bit errors fixed",
                   "uplink bit errors golden", "uplink bits", "LLR flip rate", "LLR flips"});
    }
    pg.row(head, true);
    for (const sweep_point_record* p : pts) {
      std::vector<std::string> cells{std::to_string(p->bits),
                                     esc(fixedpoint::to_q_string(p->fmt)),
                                     num_or_dash(p->sinr_loss_db),
                                     num_or_dash(p->evm_impl_pct),
                                     num_or_dash(p->evm_fixed_pct),
                                     p->sqnr_db ? num(*p->sqnr_db) : "exact",
                                     num_or_dash(p->overflow_rate, 3),
                                     p->max_overflow_rate ? num_or_dash(*p->max_overflow_rate, 3) : "—",
                                     p->sinr_fixed_db ? num_or_dash(*p->sinr_fixed_db) : "—"};
      if (uplink) {
        const uplink_record& u = *p->uplink;
        cells.insert(cells.end(), {num_or_dash(u.sinr_loss_db), num_or_dash(u.evm_fixed_pct),
                                   num_or_dash(per_bit(u.bit_errors_fixed, u.bits), 3), count_text(u.bit_errors_fixed),
                                   count_text(u.bit_errors_golden), count_text(u.bits),
                                   num_or_dash(per_bit(u.llr_sign_flips, u.bits), 3), count_text(u.llr_sign_flips)});
      }
      pg.row(cells);
    }
    pg.out += "</table>\n</details>\n</div>\n";
  }
}

}  // namespace fxmimo::report::html
