// A tune's re-verification as JUnit XML: a CI server shows each limit as a test case.
#include <fmt/core.h>

#include "fxmimo/report/records.hpp"

namespace fxmimo::report {

io::junit_suite to_junit(const tune_record& r) {
  io::junit_suite suite;
  suite.name = "fxmimo tune " + r.scenario.name;
  suite.properties = {
      {"scenario", r.scenario.name}, {"cost_model", r.cost_model}, {"cost", fmt::format("{:g}", r.cost)}};
  if (r.verification_trials) suite.properties.push_back({"fresh_trials", std::to_string(*r.verification_trials)});
  if (r.proven_overflow_bound && *r.proven_overflow_bound) {
    // What a PASS proves: every node's overflow rate below this bound at 95 % (rule of three).
    suite.properties.push_back({"proven_overflow_bound_95", fmt::format("{:.6g}", **r.proven_overflow_bound)});
    suite.properties.push_back({"proven_overflow_bound_node", r.weakest_node});
  }
  for (const tune_node_record& n : r.nodes) {
    suite.properties.push_back({"node." + n.node, fixedpoint::to_q_string(n.fmt)});
  }
  const auto limit_case = [&](const std::string& name, const std::optional<double>& limit, const metric& value,
                              const char* unit) {
    io::junit_case c;
    c.name = name;
    c.classname = "fxmimo.tune." + r.scenario.name;
    if (!limit) return;
    if (!value) {
      c.failed = true;
      c.failure_type = "no value";
      c.failure_message = fmt::format("{}: no value on the fresh trials (limit {:g}{})", name, *limit, unit);
    } else if (*value > *limit) {
      c.failed = true;
      c.failure_type = "limit";
      c.failure_message = fmt::format("{} {:.6g}{} exceeds the limit {:g}{} (margin {:.6g}{})", name, *value, unit,
                                      *limit, unit, *limit - *value, unit);
    } else {
      c.details = fmt::format("{} {:.6g}{} within the limit {:g}{} (margin {:.6g}{})\n", name, *value, unit, *limit,
                              unit, *limit - *value, unit);
    }
    if (c.failed) c.details = c.failure_message + "\n" + (r.note.empty() ? "" : r.note + "\n");
    suite.cases.push_back(std::move(c));
  };
  limit_case("SINR loss", r.max_sinr_loss_db, r.verification.sinr_loss_db, " dB");
  limit_case("implementation EVM", r.max_evm_pct, r.verification.evm_impl_pct, " %");
  limit_case("overflow rate (worst node)", r.max_overflow_rate, r.verification.max_overflow_rate, "");
  limit_case("RMS tx power error", r.max_rms_tx_power_error_db,
             r.verification.rms_tx_power_error_db.value_or(std::nullopt), " dB");
  if (r.max_uplink_sinr_loss_db)
    limit_case("uplink SINR loss", r.max_uplink_sinr_loss_db, r.verification.uplink_sinr_loss_db.value_or(std::nullopt),
               " dB");
  if (r.max_uplink_ber_ratio)
    limit_case("uplink BER ratio", r.max_uplink_ber_ratio, r.verification.uplink_ber_ratio.value_or(std::nullopt), "");
  return suite;
}

}  // namespace fxmimo::report
