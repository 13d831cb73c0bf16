// .npy files against NEP 1 ("A simple file format for NumPy arrays") and numpy.lib.format:
// checked by an independent reader (Debian python3-numpy, where present) in both directions,
// and by byte-level checks of the layout the specification fixes.
#include "fxmimo/vectors/npy_file.hpp"

#include <fmt/core.h>
#include <gtest/gtest.h>

#include <limits>
#include <nlohmann/json.hpp>
#include <random>

#include "fxmimo/vectors/errors.hpp"
#include "test_support.hpp"

namespace fxmimo::vectors {
namespace {

using testing::run_command;
using testing::scratch_dir;
using testing::spit;

TEST(NpyFile, ItemSizeFollowsTheFormat) {
  EXPECT_EQ(npy_item_bytes(fp::format{true, 1, 0}), 2);
  EXPECT_EQ(npy_item_bytes(fp::format{true, 16, 15}), 2);
  EXPECT_EQ(npy_item_bytes(fp::format{false, 16, 8}), 4);  // unsigned 16 bits needs a 17-bit container
  EXPECT_EQ(npy_item_bytes(fp::format{true, 17, 15}), 4);
  EXPECT_EQ(npy_item_bytes(fp::format{true, 32, 15}), 4);
  EXPECT_EQ(npy_item_bytes(fp::format{true, 33, 15}), 8);
  EXPECT_EQ(npy_item_bytes(fp::format{true, 64, 60}), 8);
  EXPECT_EQ(npy_descr(2), "<i2");
  EXPECT_EQ(npy_descr(8), "<i8");
}

TEST(NpyFile, LayoutFixedByNep1) {
  const std::vector<std::int64_t> words{-32768, -1, 0, 1, 32767, 5};
  const std::string bytes = format_npy(words, {2, 3}, 2);
  // NEP 1: magic "\x93NUMPY", version 1.0, 2-byte little-endian header length.
  ASSERT_GE(bytes.size(), 10U);
  EXPECT_EQ(bytes.substr(0, 6), std::string("\x93NUMPY", 6));
  EXPECT_EQ(bytes[6], '\x01');
  EXPECT_EQ(bytes[7], '\x00');
  const std::size_t header_len =
      static_cast<unsigned char>(bytes[8]) | static_cast<std::size_t>(static_cast<unsigned char>(bytes[9])) << 8U;
  const std::size_t data_start = 10 + header_len;
  // Data on a 64-byte boundary (numpy.lib.format, ARRAY_ALIGN = 64), header ends with '\n'.
  EXPECT_EQ(data_start % 64, 0U);
  EXPECT_EQ(bytes[data_start - 1], '\n');
  EXPECT_NE(bytes.find("'descr': '<i2'"), std::string::npos);
  EXPECT_NE(bytes.find("'fortran_order': False"), std::string::npos);
  EXPECT_NE(bytes.find("'shape': (2, 3)"), std::string::npos);
  // Little-endian int16 data: -32768 = 00 80, -1 = ff ff.
  EXPECT_EQ(bytes.size(), data_start + 12);
  EXPECT_EQ(bytes.substr(data_start, 4), std::string("\x00\x80\xff\xff", 4));
  // A 1-d shape is a one-element tuple "(6,)"; a 0-d shape is "()".
  EXPECT_NE(format_npy(words, {6}, 2).find("'shape': (6,)"), std::string::npos);
  EXPECT_NE(format_npy(std::vector<std::int64_t>{7}, {}, 8).find("'shape': ()"), std::string::npos);
}

TEST(NpyFile, OwnReaderRoundTripsCorners) {
  for (int item : {2, 4, 8}) {
    const int bits = 8 * item;
    const std::int64_t lo = bits == 64 ? std::numeric_limits<std::int64_t>::min() : -(std::int64_t{1} << (bits - 1));
    const std::int64_t hi = bits == 64 ? std::numeric_limits<std::int64_t>::max() : (std::int64_t{1} << (bits - 1)) - 1;
    const std::vector<std::int64_t> words{lo, -1, 0, 1, hi, lo + 1};
    const npy_array a = parse_npy(format_npy(words, {3, 2}, item), "mem");
    EXPECT_EQ(a.descr, npy_descr(item));
    EXPECT_EQ(a.shape, (std::vector<std::size_t>{3, 2}));
    EXPECT_EQ(a.values, words) << "item " << item;
    EXPECT_EQ(a.data_offset % 64, 0U);
  }
  EXPECT_THROW(format_npy(std::vector<std::int64_t>{32768}, {1}, 2), vector_error);
  EXPECT_THROW(format_npy(std::vector<std::int64_t>{1, 2}, {3}, 2), vector_error);
}

TEST(NpyFile, ReaderRejectsMalformedFiles) {
  const std::string good = format_npy(std::vector<std::int64_t>{1, 2, 3}, {3}, 4);
  EXPECT_THROW(parse_npy("not numpy at all", "x.npy"), vector_error);
  EXPECT_THROW(parse_npy(good.substr(0, good.size() - 1), "x.npy"), vector_error);  // short data
  EXPECT_THROW(parse_npy(good + "junk", "x.npy"), vector_error);                    // long data
  std::string fortran = good;
  fortran.replace(fortran.find("False"), 5, "True ");
  EXPECT_THROW(parse_npy(fortran, "x.npy"), vector_error);
  std::string floats = good;
  floats.replace(floats.find("<i4"), 3, "<f4");
  EXPECT_THROW(parse_npy(floats, "x.npy"), vector_error);
}

/// Values written by us, read by numpy (an independent NEP 1 reader).
TEST(NpyFile, NumpyReadsOurFiles) {
  const auto python = testing::python_with_numpy();
  if (!python)
    GTEST_SKIP() << "python3 with numpy (Debian python3-numpy) not found: the independent .npy reader is skipped";
  const auto dir = scratch_dir();
  const std::uint64_t seed = 7101;
  std::mt19937_64 rng(seed);
  struct case_t {
    fp::format fmt;
    std::vector<std::size_t> shape;
  };
  const std::vector<case_t> cases{{{true, 1, 0}, {5}},      {{true, 12, 10}, {3, 4}},   {{true, 16, 15}, {2, 3, 4}},
                                  {{false, 16, 8}, {7}},    {{true, 24, 18}, {4, 16}},  {{true, 33, 30}, {2, 2}},
                                  {{true, 64, 62}, {3, 3}}, {{true, 20, 14}, {1, 1, 1}}};
  for (std::size_t c = 0; c < cases.size(); ++c) {
    const fp::format& fmt = cases[c].fmt;
    std::size_t count = 1;
    for (std::size_t d : cases[c].shape) count *= d;
    std::vector<std::int64_t> words(count);
    const int w = fmt.word_bits;
    for (std::int64_t& x : words) {
      const std::uint64_t r = rng();
      if (fmt.is_signed)
        x = w == 64 ? static_cast<std::int64_t>(r) : static_cast<std::int64_t>(r << (64 - w)) >> (64 - w);
      else
        x = static_cast<std::int64_t>(r >> (64 - w));
    }
    if (fmt.is_signed) words[0] = w == 64 ? std::numeric_limits<std::int64_t>::min() : -(std::int64_t{1} << (w - 1));
    const auto file = dir / fmt::format("case{}.npy", c);
    spit(file, format_npy(words, cases[c].shape, npy_item_bytes(fmt)));
    const std::string script =
        "import json, sys, numpy as np; a = np.load(sys.argv[1], allow_pickle=False); "
        "print(json.dumps({'dtype': a.dtype.str, 'shape': list(a.shape), 'values': [int(v) for v in "
        "a.ravel(order='C')]}))";
    const auto r = run_command(*python + " -c \"" + script + "\" '" + file.string() + "'", dir / "log.txt");
    ASSERT_EQ(r.exit_code, 0) << r.output;
    const auto j = nlohmann::json::parse(r.output);
    EXPECT_EQ(j["dtype"], npy_descr(npy_item_bytes(fmt))) << "case " << c;
    EXPECT_EQ(j["shape"].get<std::vector<std::size_t>>(), cases[c].shape) << "case " << c;
    EXPECT_EQ(j["values"].get<std::vector<std::int64_t>>(), words) << "case " << c << " seed " << seed;
  }
}

/// Files numpy writes (versions 1.0 and 2.0, both byte orders), read by our reader.
TEST(NpyFile, OurReaderReadsNumpyFiles) {
  const auto python = testing::python_with_numpy();
  if (!python)
    GTEST_SKIP() << "python3 with numpy (Debian python3-numpy) not found: numpy-written files are not tested";
  const auto dir = scratch_dir();
  const std::string script =
      "import sys, numpy as np\n"
      "d = sys.argv[1]\n"
      "a = np.array([[-32768, -1, 0], [1, 2, 32767]], dtype='<i2')\n"
      "np.save(d + '/v1_i2.npy', a)\n"
      "b = np.array([-(2**63), -1, 2**63 - 1], dtype='>i8')\n"
      "np.save(d + '/v1_be_i8.npy', b)\n"
      "with open(d + '/v2_i4.npy', 'wb') as f:\n"
      "    np.lib.format.write_array(f, np.arange(-5, 7, dtype='<i4').reshape(3, 4), version=(2, 0))\n";
  spit(dir / "make.py", script);
  const auto r = run_command(*python + " '" + (dir / "make.py").string() + "' '" + dir.string() + "'", dir / "log.txt");
  ASSERT_EQ(r.exit_code, 0) << r.output;

  const npy_array a = read_npy_file(dir / "v1_i2.npy");
  EXPECT_EQ(a.descr, "<i2");
  EXPECT_EQ(a.shape, (std::vector<std::size_t>{2, 3}));
  EXPECT_EQ(a.values, (std::vector<std::int64_t>{-32768, -1, 0, 1, 2, 32767}));
  const npy_array b = read_npy_file(dir / "v1_be_i8.npy");
  EXPECT_EQ(b.values, (std::vector<std::int64_t>{std::numeric_limits<std::int64_t>::min(), -1,
                                                 std::numeric_limits<std::int64_t>::max()}));
  const npy_array c = read_npy_file(dir / "v2_i4.npy");
  EXPECT_EQ(c.version_major, 2);
  EXPECT_EQ(c.shape, (std::vector<std::size_t>{3, 4}));
  std::vector<std::int64_t> expected;
  for (int v = -5; v < 7; ++v) expected.push_back(v);
  EXPECT_EQ(c.values, expected);
}

}  // namespace
}  // namespace fxmimo::vectors
