// Fuzz target: partial results files as `fxmimo merge` reads them: parsed, then
// report::part_from_json as read_part_file does. A part that reads must read back from its own
// JSON unchanged (every double exact).
#include "fxmimo/report/parts.hpp"
#include "json_round_trip.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  return fxmimo::fuzz::json_round_trip(
      data, size, [](const fxmimo::io::checked_json& j) { return fxmimo::report::part_from_json(j); },
      [](const auto& part) { return fxmimo::report::to_json(part); });
}
