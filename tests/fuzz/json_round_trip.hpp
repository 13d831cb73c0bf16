#pragma once
// The body of a fuzz target for a JSON file that fxmimo reads into a value and writes back:
// parsed, then read as `read` does (a io::json_error is the documented refusal of a bad file);
// a value that reads must read back from its own JSON unchanged, or the target traps.
#include <cstddef>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string_view>

#include "fxmimo/io/checked_json.hpp"

namespace fxmimo::fuzz {

template <class Read, class Write>
int json_round_trip(const std::uint8_t* data, std::size_t size, Read read, Write write) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  const nlohmann::json j = nlohmann::json::parse(text, nullptr, false);
  if (j.is_discarded()) return 0;
  nlohmann::json written;
  try {
    written = write(read(io::checked_json(j, "fuzz.json")));
  } catch (const io::json_error&) {
    return 0;
  }
  if (write(read(io::checked_json(written, "again.json"))) != written) __builtin_trap();
  return 0;
}

}  // namespace fxmimo::fuzz
