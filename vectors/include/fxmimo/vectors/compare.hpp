#pragma once
/// Bit-for-bit comparison of an RTL output dump against the expected words of a vector set.
/// A dump is in the set's word-line form (hex_file.hpp), as a testbench writes it with
/// $fwrite(fd, "%h\n", word), in the set's element order; a complex record stored "split" needs
/// two dumps (real, then imaginary), one stored "interleaved" needs one dump of re, im pairs.

#include <cstdint>
#include <filesystem>
#include <nlohmann/json_fwd.hpp>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/fixedpoint/integer.hpp"
#include "fxmimo/io/junit.hpp"
#include "fxmimo/vectors/node_words.hpp"
#include "fxmimo/vectors/vector_set.hpp"

namespace fxmimo::vectors {

struct compare_options {
  std::uint64_t tolerance_lsb = 0;  ///< |got - expected| <= this passes (0: bit-exact)
  std::size_t max_report = 10;      ///< mismatches listed in full
};

struct word_mismatch {
  std::size_t flat_index = 0;
  std::string part;                 ///< "re", "im", or "" for a real record
  std::vector<std::size_t> coords;  ///< one per dimension of the record
  std::int64_t expected = 0;
  std::int64_t got = 0;
  fp::int128 diff_lsb = 0;  ///< got - expected, in LSBs of the record's format
};

/// Mismatches (beyond tolerance) counted per index of one dimension.
struct mismatch_histogram {
  std::string dim_name;               ///< a dimension of the record, or "part" (re, im)
  std::vector<std::uint64_t> counts;  ///< counts[i]: mismatches at index i
};

struct compare_report {
  std::string label;         ///< record_label() of the expected record
  node_words expected_meta;  ///< the expected record without its words
  std::vector<std::string> expected_files;
  std::vector<std::string> dump_files;
  std::uint64_t tolerance_lsb = 0;
  std::uint64_t words_compared = 0;
  std::uint64_t words_differing = 0;         ///< got != expected
  std::uint64_t words_beyond_tolerance = 0;  ///< |got - expected| > tolerance: these fail
  std::uint64_t max_abs_diff_lsb = 0;
  std::vector<word_mismatch> first;  ///< the first max_report failing words, flat order
  std::vector<mismatch_histogram> histograms;
  std::vector<std::string> hints;  ///< e.g. "all mismatches at antenna 2", a slip

  [[nodiscard]] bool passed() const { return words_beyond_tolerance == 0; }
};

/// Compares `got` against `expected` word by word (both must have the same kind, format and
/// element count; vector_error otherwise).
compare_report compare_words(const node_words& expected, const node_words& got, const compare_options& options);

/// Reads the dump file(s) strictly (x/z digits, wrong digit counts, non-hex characters, short
/// or long files: vector_error naming file and line) and compares them with the "out" record
/// of `node` (and `port`, when the node has several) in `set`.
compare_report compare_dump(const vector_set& set, std::string_view node,
                            const std::vector<std::filesystem::path>& dumps, const compare_options& options,
                            std::string_view port = {});

/// Human-readable report: verdict line, the first mismatches as a table (flat index,
/// coordinates by name, expected and got in hex and value, difference in LSB), histograms.
std::string format_report(const compare_report& report);
nlohmann::json to_json(const compare_report& report);
/// JUnit XML suite of a check: one test case, the node's record (e.g. "dac/out"), failing with
/// the verdict and first mismatch as message and the whole report as text.
io::junit_suite to_junit(const compare_report& report, const std::string& scenario_name);

/// Decimal text of a 128-bit integer.
std::string to_decimal(fp::int128 value);

}  // namespace fxmimo::vectors
