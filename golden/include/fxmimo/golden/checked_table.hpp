#pragma once
/// Checked reading of scenario documents (TOML): the one reader that golden's sections and the
/// datapath's [nodes.NAME] tables share, and the document itself, parsed once.

#include <fmt/format.h>
#include <toml++/toml.h>

#include <algorithm>
#include <cstdint>
#include <initializer_list>
#include <optional>
#include <string>
#include <string_view>
#include <utility>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

inline int line_of(const toml::source_region& region) { return static_cast<int>(region.begin.line); }

/// One table of a scenario document, read with checks: every error is one scenario_error
/// "FILE:LINE: KEY: message" at the line of the offending key or value (the table's own line when
/// the key is missing), with KEY the dotted path; `only` rejects unknown keys; numbers are
/// range-checked. golden's sections and the datapath's [nodes.NAME] tables are read with it.
class checked_table {
 public:
  checked_table(const std::string& file, const toml::table& table, std::string prefix)
      : file_(file), table_(table), prefix_(std::move(prefix)) {}

  [[noreturn]] void fail(std::string_view name, const std::string& message) const {
    const toml::node* node = table_.get(name);
    const int line = node != nullptr ? line_of(node->source()) : line_of(table_.source());
    throw scenario_error(file_, std::max(line, 1), key(name), message);
  }

  std::string key(std::string_view name) const {
    return prefix_.empty() ? std::string(name) : prefix_ + "." + std::string(name);
  }

  bool has(std::string_view name) const { return table_.contains(name); }

  // Rejects every key not in `allowed`, at the line of that key.
  void only(std::initializer_list<std::string_view> allowed) const {
    for (auto&& [k, v] : table_) {
      if (std::find(allowed.begin(), allowed.end(), k.str()) == allowed.end()) {
        const int line = k.source().begin.line != 0 ? line_of(k.source()) : line_of(v.source());
        throw scenario_error(file_, std::max(line, 1), key(k.str()), "unknown key");
      }
    }
  }

  std::optional<std::int64_t> integer(std::string_view name, std::int64_t lo, std::int64_t hi) const {
    const toml::node* node = table_.get(name);
    if (node == nullptr) {
      return std::nullopt;
    }
    if (!node->is_integer()) {
      fail(name, "expected an integer");
    }
    const std::int64_t value = node->as_integer()->get();
    if (value < lo || value > hi) {
      fail(name, fmt::format("{} is out of range [{}, {}]", value, lo, hi));
    }
    return value;
  }

  static std::optional<double> number_of(const toml::node& node) {
    if (node.is_integer()) {
      return static_cast<double>(node.as_integer()->get());
    }
    if (node.is_floating_point()) {
      return node.as_floating_point()->get();
    }
    return std::nullopt;
  }

  std::optional<double> number(std::string_view name, double lo, double hi) const {
    const toml::node* node = table_.get(name);
    if (node == nullptr) {
      return std::nullopt;
    }
    const std::optional<double> value = number_of(*node);
    if (!value) {
      fail(name, "expected a number");
    }
    if (!(*value >= lo && *value <= hi)) {
      fail(name, fmt::format("{} is out of range [{}, {}]", *value, lo, hi));
    }
    return value;
  }

  template <typename Enum>
  std::optional<Enum> choice(std::string_view name,
                             std::initializer_list<std::pair<std::string_view, Enum>> options) const {
    const toml::node* node = table_.get(name);
    if (node == nullptr) {
      return std::nullopt;
    }
    if (!node->is_string()) {
      fail(name, "expected a string");
    }
    const std::string& text = node->as_string()->get();
    std::string valid;
    for (const auto& [label, value] : options) {
      if (label == text) {
        return value;
      }
      valid += fmt::format("{}\"{}\"", valid.empty() ? "" : ", ", label);
    }
    fail(name, fmt::format("unknown value \"{}\" (expected one of {})", text, valid));
  }

  std::optional<std::string> string(std::string_view name) const {
    const toml::node* node = table_.get(name);
    if (node == nullptr) {
      return std::nullopt;
    }
    if (!node->is_string()) {
      fail(name, "expected a string");
    }
    return node->as_string()->get();
  }

  // Fails unless the key is present.
  template <typename T>
  T required(std::string_view name, std::optional<T> value) const {
    if (!value) {
      fail(name, "missing required key");
    }
    return *value;
  }

  const toml::table& table() const { return table_; }
  const std::string& file() const { return file_; }

 private:
  const std::string& file_;
  const toml::table& table_;
  std::string prefix_;
};

/// The sub-table `name` of `root` (an empty table when absent; an error when not a table).
inline const toml::table& sub_table(const checked_table& root, std::string_view name) {
  static const toml::table empty;
  const toml::node* node = root.table().get(name);
  if (node == nullptr) {
    return empty;
  }
  if (!node->is_table()) {
    root.fail(name, "expected a table");
  }
  return *node->as_table();
}

/// TOML text parsed by toml++, which is given an ASCII copy with the same lines and values (a
/// non-ASCII code point where toml++ 3.3 tests for whitespace is undefined behaviour there): the
/// one door to toml++. Throws scenario_error "FILE:LINE: (syntax): ..." for a syntax error,
/// non-ASCII bytes outside strings and comments, or text that is not UTF-8.
toml::table parse_toml(std::string_view text, const std::string& source_name);

/// A scenario file parsed once: its text (kept for writing it back), its source name and its
/// TOML tables. Throws scenario_error naming the file and line of a TOML syntax error.
struct scenario_document {
  std::string source_name;
  std::string text;
  toml::table root;
};
scenario_document parse_scenario_document(std::string text, std::string source_name);

/// One change to a scenario: a dotted key ("data.snr_db") and a TOML value ("10", "[0.0, 3.0]",
/// "\"walsh\"").
struct scenario_override {
  std::string key;
  std::string value;
};

/// The document with every override applied to its tables (a key's table is created when the
/// file has none); its source name gains " [KEY=VALUE, ...]" so that later errors name the
/// overrides. The text stays the file's. Throws scenario_error for a value that is not TOML or a
/// key that names no table entry.
scenario_document with_overrides(scenario_document doc, const std::vector<scenario_override>& overrides);

/// "KEY=VALUE" parsed into an override; throws std::invalid_argument without '=' or a key.
scenario_override parse_override(std::string_view text);

/// The golden model's sections of a parsed document (every table but `nodes`).
scenario parse_scenario(const scenario_document& doc);

}  // namespace fxmimo::golden
