#pragma once
/// SHA-256 (FIPS 180-4 §6.2) of byte strings and files, for the digests a vector-set manifest
/// records. Written from the standard; checked against its published examples.

#include <array>
#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>

namespace fxmimo::vectors {

/// Incremental SHA-256: update() any number of times, then finish() once.
class sha256 {
 public:
  sha256();
  void update(std::string_view bytes);
  /// The 32-byte digest; the object must not be updated afterwards.
  std::array<std::uint8_t, 32> finish();

 private:
  void compress(const std::uint8_t* block);

  std::array<std::uint32_t, 8> state_{};
  std::array<std::uint8_t, 64> block_{};
  std::size_t block_used_ = 0;
  std::uint64_t total_bytes_ = 0;
};

/// 64 lower-case hex digits of SHA-256(bytes).
std::string sha256_hex(std::string_view bytes);
/// 64 lower-case hex digits of SHA-256 of a file's bytes; throws vector_error when unreadable.
std::string sha256_file_hex(const std::filesystem::path& file);

}  // namespace fxmimo::vectors
