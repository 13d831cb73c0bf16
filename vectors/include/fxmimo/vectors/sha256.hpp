#pragma once
/// SHA-256 (FIPS 180-4) of byte strings and files, for the digests a vector-set manifest records.
/// Computed by OpenSSL's EVP interface (Debian libssl); checked against the standard's examples
/// and two independent implementations.

#include <array>
#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>

struct evp_md_ctx_st;  // OpenSSL's EVP_MD_CTX, kept out of this header

namespace fxmimo::vectors {

/// Incremental SHA-256: update() any number of times, then finish() once.
class sha256 {
 public:
  sha256();
  ~sha256();
  sha256(const sha256&) = delete;
  sha256& operator=(const sha256&) = delete;

  void update(std::string_view bytes);
  /// The 32-byte digest; the object must not be updated afterwards.
  std::array<std::uint8_t, 32> finish();

 private:
  evp_md_ctx_st* ctx_;
};

/// 64 lower-case hex digits of SHA-256(bytes).
std::string sha256_hex(std::string_view bytes);
/// 64 lower-case hex digits of SHA-256 of a file's bytes; throws vector_error when unreadable.
std::string sha256_file_hex(const std::filesystem::path& file);

}  // namespace fxmimo::vectors
