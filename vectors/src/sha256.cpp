#include "fxmimo/vectors/sha256.hpp"

#include <fstream>

#include "fxmimo/vectors/errors.hpp"

namespace fxmimo::vectors {

namespace {

// FIPS 180-4 §4.2.2: the first 32 bits of the fractional parts of the cube roots of the first
// 64 primes.
constexpr std::array<std::uint32_t, 64> round_constants{
    0x428a2f98U, 0x71374491U, 0xb5c0fbcfU, 0xe9b5dba5U, 0x3956c25bU, 0x59f111f1U, 0x923f82a4U, 0xab1c5ed5U,
    0xd807aa98U, 0x12835b01U, 0x243185beU, 0x550c7dc3U, 0x72be5d74U, 0x80deb1feU, 0x9bdc06a7U, 0xc19bf174U,
    0xe49b69c1U, 0xefbe4786U, 0x0fc19dc6U, 0x240ca1ccU, 0x2de92c6fU, 0x4a7484aaU, 0x5cb0a9dcU, 0x76f988daU,
    0x983e5152U, 0xa831c66dU, 0xb00327c8U, 0xbf597fc7U, 0xc6e00bf3U, 0xd5a79147U, 0x06ca6351U, 0x14292967U,
    0x27b70a85U, 0x2e1b2138U, 0x4d2c6dfcU, 0x53380d13U, 0x650a7354U, 0x766a0abbU, 0x81c2c92eU, 0x92722c85U,
    0xa2bfe8a1U, 0xa81a664bU, 0xc24b8b70U, 0xc76c51a3U, 0xd192e819U, 0xd6990624U, 0xf40e3585U, 0x106aa070U,
    0x19a4c116U, 0x1e376c08U, 0x2748774cU, 0x34b0bcb5U, 0x391c0cb3U, 0x4ed8aa4aU, 0x5b9cca4fU, 0x682e6ff3U,
    0x748f82eeU, 0x78a5636fU, 0x84c87814U, 0x8cc70208U, 0x90befffaU, 0xa4506cebU, 0xbef9a3f7U, 0xc67178f2U};

constexpr std::uint32_t rotr(std::uint32_t x, unsigned n) { return (x >> n) | (x << (32U - n)); }

}  // namespace

sha256::sha256()
    // FIPS 180-4 §5.3.3: the initial hash value H(0).
    : state_{0x6a09e667U, 0xbb67ae85U, 0x3c6ef372U, 0xa54ff53aU, 0x510e527fU, 0x9b05688cU, 0x1f83d9abU, 0x5be0cd19U} {}

void sha256::compress(const std::uint8_t* block) {
  // FIPS 180-4 §6.2.2, steps 1-4.
  std::array<std::uint32_t, 64> w{};
  for (std::size_t t = 0; t < 16; ++t) {
    w[t] = static_cast<std::uint32_t>(block[4 * t]) << 24U | static_cast<std::uint32_t>(block[4 * t + 1]) << 16U |
           static_cast<std::uint32_t>(block[4 * t + 2]) << 8U | static_cast<std::uint32_t>(block[4 * t + 3]);
  }
  for (std::size_t t = 16; t < 64; ++t) {
    const std::uint32_t s0 = rotr(w[t - 15], 7) ^ rotr(w[t - 15], 18) ^ (w[t - 15] >> 3U);
    const std::uint32_t s1 = rotr(w[t - 2], 17) ^ rotr(w[t - 2], 19) ^ (w[t - 2] >> 10U);
    w[t] = w[t - 16] + s0 + w[t - 7] + s1;
  }
  std::uint32_t a = state_[0], b = state_[1], c = state_[2], d = state_[3];
  std::uint32_t e = state_[4], f = state_[5], g = state_[6], h = state_[7];
  for (std::size_t t = 0; t < 64; ++t) {
    const std::uint32_t big_s1 = rotr(e, 6) ^ rotr(e, 11) ^ rotr(e, 25);
    const std::uint32_t ch = (e & f) ^ (~e & g);
    const std::uint32_t t1 = h + big_s1 + ch + round_constants[t] + w[t];
    const std::uint32_t big_s0 = rotr(a, 2) ^ rotr(a, 13) ^ rotr(a, 22);
    const std::uint32_t maj = (a & b) ^ (a & c) ^ (b & c);
    const std::uint32_t t2 = big_s0 + maj;
    h = g;
    g = f;
    f = e;
    e = d + t1;
    d = c;
    c = b;
    b = a;
    a = t1 + t2;
  }
  state_[0] += a;
  state_[1] += b;
  state_[2] += c;
  state_[3] += d;
  state_[4] += e;
  state_[5] += f;
  state_[6] += g;
  state_[7] += h;
}

void sha256::update(std::string_view bytes) {
  total_bytes_ += bytes.size();
  for (char ch : bytes) {
    block_[block_used_++] = static_cast<std::uint8_t>(ch);
    if (block_used_ == block_.size()) {
      compress(block_.data());
      block_used_ = 0;
    }
  }
}

std::array<std::uint8_t, 32> sha256::finish() {
  // FIPS 180-4 §5.1.1 padding: a 1 bit, zeros to 448 mod 512, then the 64-bit message length.
  const std::uint64_t total_bits = total_bytes_ * 8U;
  block_[block_used_++] = 0x80U;
  if (block_used_ > 56) {
    while (block_used_ < 64) block_[block_used_++] = 0;
    compress(block_.data());
    block_used_ = 0;
  }
  while (block_used_ < 56) block_[block_used_++] = 0;
  for (int i = 7; i >= 0; --i)
    block_[block_used_++] = static_cast<std::uint8_t>(total_bits >> (8U * static_cast<unsigned>(i)));
  compress(block_.data());
  block_used_ = 0;
  std::array<std::uint8_t, 32> digest{};
  for (std::size_t i = 0; i < 8; ++i) {
    for (std::size_t j = 0; j < 4; ++j) digest[4 * i + j] = static_cast<std::uint8_t>(state_[i] >> (24U - 8U * j));
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
