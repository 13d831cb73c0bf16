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
  out += fmt::format("{:<15} {:>10} {:>11} {:>11} {:>11} {:>11} {:>9} {:<9} {:>9}  {}\n", "node", "values", "max|v|",
                     "p99", "p99.99", "p99.9999", "int bits", "basis", "analytic", "analytic rule");
  for (const analysis::node_range& n : r.nodes) {
    out += fmt::format("{:<15} {:>10} {:>11.4g} {:>11.4g} {:>11.4g} {:>11.4g} {:>9} {:<9} {:>9}  {}\n",
                       datapath::node_name(n.id), n.num_values, n.max_abs, n.p99, n.p9999, n.p999999,
                       n.proposed_int_bits, n.proposal_basis,
                       n.analytic_int_bits ? std::to_string(*n.analytic_int_bits) : "-", n.analytic_rule);
  }
  out +=
      "(int bits m of a signed Qm.n: values up to 2^m; 'max+1' = too few values for the quantile, the\n"
      " largest observed value plus one guard bit; analytic = worst-case growth from the configured inputs)\n";
  return out;
}

}  // namespace fxmimo::report
