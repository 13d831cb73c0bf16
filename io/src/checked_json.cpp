#include "fxmimo/io/checked_json.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <climits>
#include <cmath>
#include <fstream>
#include <sstream>

#include "fxmimo/io/exact_double.hpp"

namespace fxmimo::io {

namespace fp = fxmimo::fixedpoint;

std::string read_file(const std::filesystem::path& path) {
  const std::string name = path.string();
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) throw json_error(name + ": is a directory, not a file");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw json_error(name + ": cannot open the file");
  std::ostringstream content;
  content << in.rdbuf();
  if (in.bad()) throw json_error(name + ": read error");
  return std::move(content).str();
}

nlohmann::json read_json_file(const std::filesystem::path& path) {
  const std::string name = path.string();
  const std::string content = read_file(path);
  try {
    return nlohmann::json::parse(content);
  } catch (const nlohmann::json::parse_error& e) {
    // "[json.exception.parse_error.101] parse error at line 1, column 2: ..." without the tag.
    std::string what = e.what();
    if (const auto close = what.find("] "); what.rfind("[json.exception", 0) == 0 && close != std::string::npos) {
      what.erase(0, close + 2);
    }
    std::replace(what.begin(), what.end(), '\n', ' ');
    throw json_error(fmt::format("{}: not valid JSON: {}", name, what));
  }
}

checked_json::checked_json(const nlohmann::json& document, std::string file)
    : value_(&document), file_(std::move(file)) {}

std::string checked_json::where() const { return path_.empty() ? "top level" : path_; }

void checked_json::fail(std::string_view what) const {
  throw json_error(fmt::format("{}: {}: {}", file_, where(), what));
}

checked_json checked_json::operator[](std::string_view key) const {
  if (const auto member = find(key)) return *member;
  // The path of the missing key, so the message names it.
  checked_json(*value_, file_, path_.empty() ? std::string(key) : path_ + "." + std::string(key)).fail("missing");
}

std::optional<checked_json> checked_json::find(std::string_view key) const {
  if (!value_->is_object()) fail("expected an object");
  const auto it = value_->find(std::string(key));
  if (it == value_->end()) return std::nullopt;
  return checked_json(*it, file_, path_.empty() ? std::string(key) : path_ + "." + std::string(key));
}

std::optional<checked_json> checked_json::find_value(std::string_view key) const {
  auto member = find(key);
  if (member && member->is_null()) return std::nullopt;
  return member;
}

checked_json checked_json::operator[](std::size_t index) const {
  if (index >= size()) fail(fmt::format("no element {}", index));
  return checked_json((*value_)[index], file_, fmt::format("{}[{}]", path_, index));
}

std::size_t checked_json::size() const {
  if (!value_->is_array()) fail("expected an array");
  return value_->size();
}

std::vector<std::string> checked_json::keys() const {
  if (!value_->is_object()) fail("expected an object");
  std::vector<std::string> out;
  for (auto it = value_->begin(); it != value_->end(); ++it) out.push_back(it.key());
  return out;
}

std::string checked_json::text() const {
  if (!value_->is_string()) fail("expected a string");
  return value_->get<std::string>();
}

double checked_json::number() const {
  if (!value_->is_number()) fail("expected a number");
  return value_->get<double>();
}

std::optional<double> checked_json::number_or_null() const {
  if (value_->is_null()) return std::nullopt;
  if (!value_->is_number()) fail("expected a number or null");
  return value_->get<double>();
}

double checked_json::exact_double() const {
  const std::optional<double> v = value_->is_string() ? parse_exact_double(value_->get<std::string>()) : std::nullopt;
  if (!v)
    fail("expected a double written exactly, as a string such as \"0x1.8p+1\", \"-inf\" or \"nan:7ff8000000000000\"");
  return *v;
}

long long checked_json::integer(long long lo, long long hi) const {
  if (value_->is_number_unsigned()) {
    const auto v = value_->get<std::uint64_t>();
    if (v > static_cast<std::uint64_t>(LLONG_MAX) || static_cast<long long>(v) > hi) {
      fail(fmt::format("expected an integer in [{}, {}]", lo, hi));
    }
    if (static_cast<long long>(v) < lo) fail(fmt::format("expected an integer in [{}, {}]", lo, hi));
    return static_cast<long long>(v);
  }
  if (!value_->is_number_integer()) fail("expected an integer");
  const auto v = value_->get<long long>();
  if (v < lo || v > hi) fail(fmt::format("expected an integer in [{}, {}]", lo, hi));
  return v;
}

int checked_json::int_value() const { return static_cast<int>(integer(INT_MIN, INT_MAX)); }

std::uint64_t checked_json::count() const {
  if (value_->is_number_unsigned()) return value_->get<std::uint64_t>();
  if (value_->is_number_integer() && value_->get<long long>() >= 0) return value_->get<std::uint64_t>();
  fail("expected a non-negative integer");
}

bool checked_json::boolean() const {
  if (!value_->is_boolean()) fail("expected true or false");
  return value_->get<bool>();
}

fp::format checked_json::format_fields() const {
  const checked_json q = (*this)["format"];
  fp::format f;
  try {
    f = fp::parse_format(q.text());
  } catch (const fp::format_error& e) {
    q.fail(e.what());
  }
  const int word_bits = (*this)["word_bits"].int_value();
  const int frac_bits = (*this)["frac_bits"].int_value();
  const auto is_signed = find("signed");
  if (word_bits != f.word_bits || frac_bits != f.frac_bits || (is_signed && is_signed->boolean() != f.is_signed)) {
    q.fail(fmt::format("'{}' disagrees with word_bits {}, frac_bits {}{}", q.text(), word_bits, frac_bits,
                       is_signed ? fmt::format(", signed {}", is_signed->boolean()) : ""));
  }
  return f;
}

}  // namespace fxmimo::io
