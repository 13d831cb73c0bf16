#pragma once
/// NumPy .npy files (NEP 1, "A simple file format for NumPy arrays") holding integer words.
/// Written: version 1.0, magic "\x93NUMPY", a 2-byte little-endian header length, then the
/// header dict {'descr': '<i8', 'fortran_order': False, 'shape': (4, 16), } padded with spaces
/// and ended by '\n' so the data starts on a 64-byte boundary, then little-endian C-order data.
/// Read: versions 1.0, 2.0 (4-byte header length) and 3.0 (UTF-8 header), the stored header
/// length (never an assumed padding), signed integer dtypes of 1, 2, 4 and 8 bytes in either
/// byte order, C order only.

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/fixedpoint/format.hpp"

namespace fxmimo::vectors {

namespace fp = fxmimo::fixedpoint;

/// Bytes per element for a format: 2, 4 or 8 (int16 / int32 / int64), the narrowest signed
/// integer that holds every word (an unsigned W-bit format needs W + 1 bits).
int npy_item_bytes(const fp::format& fmt);
/// "<i2", "<i4" or "<i8" for 2, 4, 8 bytes.
std::string npy_descr(int item_bytes);

/// The complete file (header and data). Throws vector_error when a word does not fit
/// item_bytes or the shape does not match the word count.
std::string format_npy(std::span<const std::int64_t> words, const std::vector<std::size_t>& shape, int item_bytes);

/// What a .npy file holds.
struct npy_array {
  std::string descr;  ///< as stored, e.g. "<i4"
  bool fortran_order = false;
  std::vector<std::size_t> shape;
  std::vector<std::int64_t> values;  ///< C order
  int version_major = 1;
  std::size_t data_offset = 0;  ///< where the data starts (a multiple of 64 for our files)
};

/// Parses a .npy file's bytes; vector_error "SOURCE: ..." for anything malformed or unsupported.
npy_array parse_npy(std::string_view bytes, std::string_view source);
npy_array read_npy_file(const std::filesystem::path& file);

}  // namespace fxmimo::vectors
