#pragma once
/// The one checked reader of the JSON files fxmimo reads back (vector-set manifests, the results
/// files of run, range, sweep and tune): every access names the file and the key path it failed
/// on, e.g. "sweep.json: points[3].evm_impl_pct: missing", so a reader never guesses.

#include <cstdint>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/fixedpoint/format.hpp"

namespace fxmimo::io {

/// A JSON file that is unreadable, not JSON, or lacks or mistypes what its reader needs. The
/// message is one line: "FILE: KEY.PATH: what" ("top level" for the document itself).
struct json_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

/// The bytes of a file; throws json_error("PATH: is a directory, not a file" / "PATH: cannot open
/// the file" / "PATH: read error"). Every file fxmimo reads whole goes through here.
std::string read_file(const std::filesystem::path& path);

/// Reads and parses a JSON file; throws json_error("PATH: cannot open the file" / "PATH: not
/// valid JSON: at line L, column C: ...").
nlohmann::json read_json_file(const std::filesystem::path& path);

/// A value inside a parsed document together with where it is. Holds a pointer to the value:
/// the document must outlive it.
class checked_json {
 public:
  /// The top level of the document read from `file`.
  checked_json(const nlohmann::json& document, std::string file);

  const nlohmann::json& value() const { return *value_; }
  /// The key path of this value ("points[3].bits"; "top level" for the document).
  std::string where() const;
  const std::string& file() const { return file_; }
  [[noreturn]] void fail(std::string_view what) const;

  /// A required member of an object: fails "expected an object" or "KEY: missing".
  checked_json operator[](std::string_view key) const;
  /// An optional member: nullopt when absent (present and null is a value: test is_null()).
  std::optional<checked_json> find(std::string_view key) const;
  /// An optional member that may also be null: nullopt when absent or null.
  std::optional<checked_json> find_value(std::string_view key) const;
  /// Element `index` of an array (within size()).
  checked_json operator[](std::size_t index) const;

  bool is_null() const { return value_->is_null(); }
  /// The number of elements of an array; fails "expected an array" for anything else.
  std::size_t size() const;
  /// The keys of an object, in the document's (sorted) order; fails unless an object.
  std::vector<std::string> keys() const;

  std::string text() const;                      ///< a string
  double number() const;                         ///< any JSON number
  std::optional<double> number_or_null() const;  ///< a number, or null (non-finite values are written as null)
  double exact_double() const;  ///< a string exact_double_text wrote (exact_double.hpp): the same 64 bits
  long long integer(long long lo, long long hi) const;  ///< an integer in [lo, hi]
  int int_value() const;                                ///< an integer in the range of int
  std::uint64_t count() const;                          ///< a non-negative integer
  bool boolean() const;                                 ///< true or false

  /// A fixed-point format written as its Q text under "format" beside "word_bits" and
  /// "frac_bits" (and "signed" when present): all of them must agree.
  fixedpoint::format format_fields() const;

 private:
  checked_json(const nlohmann::json& value, std::string file, std::string path)
      : value_(&value), file_(std::move(file)), path_(std::move(path)) {}

  const nlohmann::json* value_;
  std::string file_;
  std::string path_;
};

}  // namespace fxmimo::io
