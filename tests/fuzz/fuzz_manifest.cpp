// Fuzz target: vector-set manifests (manifest.json) through vectors::manifest_from_json. A
// manifest that reads must read back from its own JSON unchanged.
#include <cstddef>
#include <cstdint>
#include <nlohmann/json.hpp>
#include <string_view>

#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/manifest.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace vec = fxmimo::vectors;
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  const nlohmann::json j = nlohmann::json::parse(text, nullptr, false);
  if (j.is_discarded()) return 0;
  nlohmann::json written;
  try {
    written = vec::to_json(vec::manifest_from_json(j, "fuzz.json"));
  } catch (const vec::vector_error&) {
    return 0;  // the documented error of a bad manifest
  }
  if (vec::to_json(vec::manifest_from_json(written, "again.json")) != written) __builtin_trap();
  return 0;
}
