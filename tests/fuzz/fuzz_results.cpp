// Fuzz target: results files (run, range, sweep, tune JSON) as `fxmimo report` reads them:
// parsed, then report::record_from_json as read_results_file does. A record that reads must read
// back from its own JSON unchanged.
#include "fxmimo/report/records.hpp"
#include "json_round_trip.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return fxmimo::fuzz::json_round_trip(
      data, size, [](const fxmimo::io::checked_json& j) { return fxmimo::report::record_from_json(j); },
      [](const auto& record) { return fxmimo::report::to_json(record); });
}
