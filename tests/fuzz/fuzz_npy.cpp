// Fuzz target: .npy bytes through vectors::parse_npy. An array that reads must read back the same
// from the file format_npy writes for it.
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/npy_file.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  namespace vec = fxmimo::vectors;
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  vec::npy_array array;
  try {
    array = vec::parse_npy(bytes, "fuzz.npy");
  } catch (const vec::vector_error&) {
    return 0;  // the documented error of a malformed or unsupported file
  }
  if (array.data_offset > size) __builtin_trap();
  const vec::npy_array again = vec::parse_npy(vec::format_npy(array.values, array.shape, 8), "again.npy");
  if (again.values != array.values || again.shape != array.shape) __builtin_trap();
  return 0;
}
