#pragma once
/// Regression between two vector sets made from the same stimulus by two model versions or two
/// datapath configurations: record by record, identical or changed, how many words changed, by
/// how many LSBs at most, and the SQNR of B against A.

#include <cstdint>
#include <nlohmann/json_fwd.hpp>
#include <string>
#include <vector>

#include "fxmimo/io/junit.hpp"
#include "fxmimo/vectors/vector_set.hpp"

namespace fxmimo::vectors {

enum class diff_status { identical, changed, only_in_a, only_in_b };
std::string_view to_string(diff_status status);

struct record_diff {
  std::string label;  ///< record_label()
  std::string node;
  diff_status status = diff_status::identical;
  std::vector<std::string> what;    ///< e.g. "format Q5.14 -> Q6.14", "dims antenna=4 -> antenna=8"
  std::uint64_t words = 0;          ///< words compared (re and im counted apart)
  std::uint64_t changed_words = 0;  ///< words whose value differs
  double max_diff_lsb = 0.0;        ///< max |value_B - value_A| in LSBs of A's format
  /// 10 log10(sum |A|^2 / sum |B - A|^2) over real values (word * 2^-F): +inf when equal,
  /// NaN when not comparable (shapes differ, or record missing on one side).
  double sqnr_db = 0.0;
  bool allowed = false;  ///< the node is on the allow list
};

struct set_diff_report {
  std::string scenario_a, scenario_b;  ///< SHA-256 digests
  std::vector<std::string> notes;      ///< differing scenario, seed or trials
  std::vector<record_diff> records;    ///< A's order, then records only in B

  /// Records that changed and are not allowed.
  [[nodiscard]] std::size_t unallowed_changes() const;
};

/// Compares every record of A with the record of the same (node, direction, port) in B. Values
/// are compared exactly (as word * 2^-F), so a format change that keeps every value counts its
/// format as the change and zero changed words. Nodes in `allowed` are reported but marked
/// allowed.
set_diff_report diff_vector_sets(const vector_set& a, const vector_set& b,
                                 const std::vector<std::string>& allowed = {});

std::string format_diff(const set_diff_report& report);
nlohmann::json to_json(const set_diff_report& report);
/// JUnit XML suite of a diff: one test case per record, failing when it changed and is not on
/// the allow list (message: what changed; text: its row of the diff table).
io::junit_suite to_junit(const set_diff_report& report);

}  // namespace fxmimo::vectors
