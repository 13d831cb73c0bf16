// Fuzz target: results files (run, range, sweep, tune JSON) as `fxmimo report` reads them:
// parsed, then report::record_from_json as read_results_file does. A record that reads must read
// back from its own JSON unchanged.
#include <cstddef>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string_view>

#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/report/records.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace report = fxmimo::report;
  namespace io = fxmimo::io;
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  const nlohmann::json j = nlohmann::json::parse(text, nullptr, false);
  if (j.is_discarded()) return 0;
  nlohmann::json written;
  try {
    written = report::to_json(report::record_from_json(io::checked_json(j, "fuzz.json")));
  } catch (const io::json_error&) {
    return 0;  // the documented error of a bad results file
  }
  if (report::to_json(report::record_from_json(io::checked_json(written, "again.json"))) != written) {
    __builtin_trap();
  }
  return 0;
}
