// The range results as a text table.
#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <sstream>

#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

namespace fp = fxmimo::fixedpoint;

std::string format_range_table(const analysis::range_results& r) {
  std::string out = fmt::format("scenario {}, {} golden trials, target overflow probability {:g}\n\n", r.scenario_name,
                                r.num_trials, r.overflow_prob);
  if (r.gram_condition_p50) {
    out.insert(out.size() - 1,
               fmt::format("Gram condition number over trials: {:.4g} median, {:.4g} at 95 %, {:.4g} worst\n",
                           *r.gram_condition_p50, *r.gram_condition_p95, *r.gram_condition_max));
  }
  out += fmt::format("{:<15} {:>10} {:>11} {:>11} {:>11} {:>11} {:>9} {:<9} {:>9}  {}\n", "node", "values", "max|v|",
                     "p99", "p99.99", "p99.9999", "int bits", "basis", "analytic", "analytic rule");
  for (const analysis::node_range& n : r.nodes) {
    out += fmt::format("{:<15} {:>10} {:>11.4g} {:>11.4g} {:>11.4g} {:>11.4g} {:>9} {:<9} {:>9}  {}\n",
                       datapath::node_name(n.id), n.num_values, n.max_abs, n.p99, n.p9999, n.p999999,
                       n.proposed_int_bits, n.proposal_basis,
                       n.analytic_int_bits ? std::to_string(*n.analytic_int_bits) : "-", n.analytic_rule);
  }
  bool any_tail = false;
  for (const analysis::node_range& n : r.nodes) {
    if (n.proposal_basis != "tail" || !n.tail) continue;
    if (!any_tail) {
      out += fmt::format(
          "\ntail fits (generalized Pareto over the largest values; bound: one-sided profile-likelihood bound at\n"
          " nominal level {:g} %, which covered the true quantile in at least {:g} % of the seeds in the tests):\n",
          100 * analysis::tail_nominal_level, 100 * analysis::tail_stated_coverage);
    }
    any_tail = true;
    const analysis::tail_fit& t = *n.tail;
    out += fmt::format("{:<15} {} exceedances over {:.4g}, shape {:.3f}, scale {:.4g}: quantile {:.4g}, bound {:.4g}\n",
                       datapath::node_name(n.id), t.num_exceedances, t.threshold, t.shape, t.scale, t.quantile,
                       t.upper_bound);
  }
  out +=
      "(int bits m of a signed Qm.n: values up to 2^m. basis: 'quantile' = the (1 - p) quantile of at least 10/p\n"
      " values; 'tail' = the bound of the tail fit, where fewer values were seen; 'max+1' = too few values for a\n"
      " fit, the largest observed value plus one guard bit. analytic = worst-case growth from the configured inputs)\n";
  return out;
}

}  // namespace fxmimo::report
