// SHA-256 against the examples of FIPS 180-4 (NIST CSRC "Examples with intermediate values",
// SHA256.pdf, and the long-message example of FIPS 180-2 Appendix B.3), and against two
// independent implementations where present: coreutils sha256sum and Python's hashlib.
#include "fxmimo/vectors/sha256.hpp"

#include <fmt/core.h>
#include <gtest/gtest.h>

#include <random>

#include "fxmimo/vectors/errors.hpp"
#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

using testing::run_command;
using testing::scratch_dir;
using testing::spit;

TEST(Sha256, FipsExamples) {
  // FIPS 180-4 examples: one-block message "abc".
  EXPECT_EQ(sha256_hex("abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  // Two-block message of 448 bits.
  EXPECT_EQ(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  // One million repetitions of 'a' (FIPS 180-2 Appendix B.3).
  EXPECT_EQ(sha256_hex(std::string(1000000, 'a')), "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  // The empty message (NIST CAVP SHA256ShortMsg, Len = 0).
  EXPECT_EQ(sha256_hex(""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST(Sha256, IncrementalEqualsOneShot) {
  // Property: the digest does not depend on how the message is cut into update() calls.
  std::mt19937_64 rng(20240611);  // seed printed by the assertion messages below
  std::string msg(1000, '\0');
  for (char& ch : msg) ch = static_cast<char>(rng() & 0xFFU);
  const std::string whole = sha256_hex(msg);
  for (std::size_t cut : {0, 1, 55, 56, 63, 64, 65, 127, 128, 999, 1000}) {
    sha256 h;
    h.update(std::string_view(msg).substr(0, cut));
    h.update(std::string_view(msg).substr(cut));
    const auto digest = h.finish();
    std::string hex;
    for (auto b : digest) hex += fmt::format("{:02x}", b);
    EXPECT_EQ(hex, whole) << "cut at " << cut << ", seed 20240611";
  }
}

TEST(Sha256, PaddingBoundariesAgainstSha256sum) {
  // Independent reference: GNU coreutils sha256sum. Lengths around the 55/56/64-byte padding
  // boundaries of FIPS 180-4 §5.1.1, where a padding bug shows.
  if (!testing::have_program("sha256sum")) GTEST_SKIP() << "sha256sum (coreutils) not installed";
  const auto dir = scratch_dir();
  for (std::size_t len : {1U, 54U, 55U, 56U, 57U, 63U, 64U, 65U, 119U, 120U, 128U, 1000U}) {
    std::string msg;
    for (std::size_t i = 0; i < len; ++i) msg.push_back(static_cast<char>((i * 7 + len) & 0xFFU));
    const auto file = dir / fmt::format("m{}.bin", len);
    spit(file, msg);
    const auto r = run_command("sha256sum '" + file.string() + "'", dir / "log.txt");
    ASSERT_EQ(r.exit_code, 0) << r.output;
    EXPECT_EQ(r.output.substr(0, 64), sha256_hex(msg)) << "length " << len;
    EXPECT_EQ(sha256_file_hex(file), sha256_hex(msg)) << "length " << len;
  }
}

TEST(Sha256, UnreadableFileIsAnError) { EXPECT_THROW(sha256_file_hex("/nonexistent/fxmimo/file"), vector_error); }

}  // namespace
}  // namespace fxmimo::vectors
