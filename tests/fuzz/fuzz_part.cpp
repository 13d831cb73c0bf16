// Fuzz target: partial results files as `fxmimo merge` reads them: parsed, then
// report::part_from_json as read_part_file does. A part that reads must read back from its own
// JSON unchanged (every double exact).
#include <cstddef>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string_view>

#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/report/parts.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace report = fxmimo::report;
  namespace io = fxmimo::io;
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  const nlohmann::json j = nlohmann::json::parse(text, nullptr, false);
  if (j.is_discarded()) return 0;
  nlohmann::json written;
  try {
    written = report::to_json(report::part_from_json(io::checked_json(j, "fuzz.json")));
  } catch (const io::json_error&) {
    return 0;  // the documented error of a bad part
  }
  if (report::to_json(report::part_from_json(io::checked_json(written, "again.json"))) != written) {
    __builtin_trap();
  }
  return 0;
}
