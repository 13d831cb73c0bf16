// Fuzz target: format texts through fixedpoint::parse_format. A format that parses must come back
// unchanged from its Q notation (to_q_string -> parse_format).
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "fxmimo/fixedpoint/format.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace fp = fxmimo::fixedpoint;
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  fp::format parsed;
  try {
    parsed = fp::parse_format(text);
  } catch (const fp::format_error&) {
    return 0;  // the documented error of a bad format text
  }
  // A parsed format is a valid one, and its Q notation names it exactly.
  fp::validate(parsed);
  if (fp::parse_format(fp::to_q_string(parsed)) != parsed) __builtin_trap();
  (void)fp::describe(parsed);
  return 0;
}
