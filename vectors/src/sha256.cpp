#include "fxmimo/vectors/sha256.hpp"

#include <openssl/evp.h>

#include <fstream>
#include <stdexcept>

#include "fxmimo/vectors/errors.hpp"

namespace fxmimo::vectors {

sha256::sha256() : ctx_(EVP_MD_CTX_new()) {
  if (ctx_ == nullptr || EVP_DigestInit_ex(ctx_, EVP_sha256(), nullptr) != 1) {
    EVP_MD_CTX_free(ctx_);
    throw std::runtime_error("OpenSSL cannot start a SHA-256 digest");
  }
}

sha256::~sha256() { EVP_MD_CTX_free(ctx_); }

void sha256::update(std::string_view bytes) {
  if (EVP_DigestUpdate(ctx_, bytes.data(), bytes.size()) != 1) {
    throw std::runtime_error("OpenSSL SHA-256 update failed");
  }
}

std::array<std::uint8_t, 32> sha256::finish() {
  std::array<std::uint8_t, 32> digest{};
  unsigned int size = 0;
  if (EVP_DigestFinal_ex(ctx_, digest.data(), &size) != 1 || size != digest.size()) {
    throw std::runtime_error("OpenSSL SHA-256 finish failed");
  }
  return digest;
}

namespace {
std::string to_hex(const std::array<std::uint8_t, 32>& digest) {
  static constexpr char hex[] = "0123456789abcdef";
  std::string out;
  out.reserve(64);
  for (std::uint8_t byte : digest) {
    out.push_back(hex[byte >> 4U]);
    out.push_back(hex[byte & 0xFU]);
  }
  return out;
}
}  // namespace

std::string sha256_hex(std::string_view bytes) {
  sha256 h;
  h.update(bytes);
  return to_hex(h.finish());
}

std::string sha256_file_hex(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) throw vector_error("cannot read " + file.string());
  sha256 h;
  std::array<char, 1 << 16> buffer{};
  while (in) {
    in.read(buffer.data(), static_cast<std::streamsize>(buffer.size()));
    h.update(std::string_view(buffer.data(), static_cast<std::size_t>(in.gcount())));
  }
  if (in.bad()) throw vector_error("error reading " + file.string());
  return to_hex(h.finish());
}

}  // namespace fxmimo::vectors
