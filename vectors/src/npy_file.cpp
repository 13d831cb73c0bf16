#include "fxmimo/vectors/npy_file.hpp"

#include <fmt/core.h>

#include <cctype>
#include <limits>

#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/hex_file.hpp"

namespace fxmimo::vectors {

namespace {

constexpr std::string_view magic{"\x93NUMPY", 6};
constexpr std::size_t alignment = 64;

}  // namespace

int npy_item_bytes(const fp::format& fmt) {
  const int bits = fmt.container_bits();
  if (bits <= 16) return 2;
  if (bits <= 32) return 4;
  if (bits <= 64) return 8;
  throw vector_error(fmt::format("{} does not fit a 64-bit .npy integer", fp::describe(fmt)));
}

std::string npy_descr(int item_bytes) { return fmt::format("<i{}", item_bytes); }

std::string format_npy(std::span<const std::int64_t> words, const std::vector<std::size_t>& shape, int item_bytes) {
  if (item_bytes != 1 && item_bytes != 2 && item_bytes != 4 && item_bytes != 8) {
    throw vector_error(fmt::format("npy: unsupported item size {}", item_bytes));
  }
  std::size_t count = 1;
  for (std::size_t d : shape) count *= d;
  if (count != words.size())
    throw vector_error(fmt::format("npy: shape holds {} elements, {} words given", count, words.size()));

  // NEP 1: a Python literal tuple; a 1-d shape needs the trailing comma, a 0-d shape is ().
  std::string shape_text = "(";
  for (std::size_t i = 0; i < shape.size(); ++i) {
    if (i > 0) shape_text += ", ";
    shape_text += std::to_string(shape[i]);
  }
  if (shape.size() == 1) shape_text += ",";
  shape_text += ")";
  std::string header =
      fmt::format("{{'descr': '{}', 'fortran_order': False, 'shape': {}, }}", npy_descr(item_bytes), shape_text);
  // magic (6) + version (2) + length (2) + header + '\n' is a multiple of 64.
  const std::size_t unpadded = magic.size() + 2 + 2 + header.size() + 1;
  header.append((alignment - unpadded % alignment) % alignment, ' ');
  header.push_back('\n');
  if (header.size() > 0xFFFFU) throw vector_error("npy: header too long for version 1.0");

  std::string out;
  out.reserve(magic.size() + 4 + header.size() + words.size() * static_cast<std::size_t>(item_bytes));
  out.append(magic);
  out.push_back('\x01');
  out.push_back('\x00');
  out.push_back(static_cast<char>(header.size() & 0xFFU));
  out.push_back(static_cast<char>(header.size() >> 8U));
  out += header;
  const int bits = 8 * item_bytes;
  const std::int64_t lo = bits == 64 ? std::numeric_limits<std::int64_t>::min() : -(std::int64_t{1} << (bits - 1));
  const std::int64_t hi = bits == 64 ? std::numeric_limits<std::int64_t>::max() : (std::int64_t{1} << (bits - 1)) - 1;
  for (std::int64_t w : words) {
    if (w < lo || w > hi) throw vector_error(fmt::format("npy: word {} does not fit int{}", w, bits));
    const auto pattern = static_cast<std::uint64_t>(w);
    for (int b = 0; b < item_bytes; ++b)
      out.push_back(static_cast<char>((pattern >> (8U * static_cast<unsigned>(b))) & 0xFFU));
  }
  return out;
}

namespace {

/// A tiny reader for the header dict NEP 1 defines: {'key': value, ...} with string, bool
/// and tuple-of-int values.
class header_parser {
 public:
  header_parser(std::string_view text, std::string_view source) : text_(text), source_(source) {}

  void parse(npy_array& out) {
    bool have_descr = false, have_order = false, have_shape = false;
    skip_space();
    expect('{');
    for (;;) {
      skip_space();
      if (peek() == '}') {
        ++pos_;
        break;
      }
      const std::string key = parse_string();
      skip_space();
      expect(':');
      skip_space();
      if (key == "descr") {
        out.descr = parse_string();
        have_descr = true;
      } else if (key == "fortran_order") {
        out.fortran_order = parse_bool();
        have_order = true;
      } else if (key == "shape") {
        out.shape = parse_tuple();
        have_shape = true;
      } else {
        fail(fmt::format("unexpected key '{}' in the header", key));
      }
      skip_space();
      if (peek() == ',') {
        ++pos_;
        continue;
      }
      skip_space();
      expect('}');
      break;
    }
    if (!have_descr || !have_order || !have_shape) fail("header lacks one of 'descr', 'fortran_order', 'shape'");
  }

 private:
  [[noreturn]] void fail(const std::string& what) const {
    throw vector_error(fmt::format("{}: malformed .npy header at character {}: {}", source_, pos_, what));
  }
  char peek() const { return pos_ < text_.size() ? text_[pos_] : '\0'; }
  void skip_space() {
    while (pos_ < text_.size() && std::isspace(static_cast<unsigned char>(text_[pos_])) != 0) ++pos_;
  }
  void expect(char ch) {
    if (peek() != ch) fail(fmt::format("expected '{}'", ch));
    ++pos_;
  }
  std::string parse_string() {
    const char quote = peek();
    if (quote != '\'' && quote != '"') fail("expected a quoted string");
    ++pos_;
    const std::size_t end = text_.find(quote, pos_);
    if (end == std::string_view::npos) fail("unterminated string");
    std::string s(text_.substr(pos_, end - pos_));
    pos_ = end + 1;
    return s;
  }
  bool parse_bool() {
    if (text_.substr(pos_, 4) == "True") {
      pos_ += 4;
      return true;
    }
    if (text_.substr(pos_, 5) == "False") {
      pos_ += 5;
      return false;
    }
    fail("expected True or False");
  }
  std::vector<std::size_t> parse_tuple() {
    expect('(');
    std::vector<std::size_t> dims;
    for (;;) {
      skip_space();
      if (peek() == ')') {
        ++pos_;
        return dims;
      }
      if (std::isdigit(static_cast<unsigned char>(peek())) == 0) fail("expected a dimension size");
      std::size_t v = 0;
      while (std::isdigit(static_cast<unsigned char>(peek())) != 0) {
        v = v * 10 + static_cast<std::size_t>(peek() - '0');
        ++pos_;
      }
      // NumPy may write 'L' suffixes (Python 2 longs).
      if (peek() == 'L') ++pos_;
      dims.push_back(v);
      skip_space();
      if (peek() == ',') ++pos_;
    }
  }

  std::string_view text_;
  std::string_view source_;
  std::size_t pos_ = 0;
};

}  // namespace

npy_array parse_npy(std::string_view bytes, std::string_view source) {
  auto fail = [&](const std::string& what) -> void { throw vector_error(fmt::format("{}: {}", source, what)); };
  npy_array out;
  if (bytes.size() < 10 || bytes.substr(0, magic.size()) != magic) fail("not a .npy file (no \\x93NUMPY magic)");
  const auto byte_at = [&](std::size_t i) { return static_cast<std::size_t>(static_cast<unsigned char>(bytes[i])); };
  out.version_major = static_cast<int>(byte_at(6));
  std::size_t header_len = 0;
  std::size_t header_start = 0;
  if (out.version_major == 1) {
    header_len = byte_at(8) | byte_at(9) << 8U;
    header_start = 10;
  } else if (out.version_major == 2 || out.version_major == 3) {
    if (bytes.size() < 12) fail("truncated header length");
    header_len = byte_at(8) | byte_at(9) << 8U | byte_at(10) << 16U | byte_at(11) << 24U;
    header_start = 12;
  } else {
    fail(fmt::format("unsupported .npy version {}.{}", out.version_major, byte_at(7)));
  }
  if (header_start + header_len > bytes.size()) fail("header runs past the end of the file");
  header_parser(bytes.substr(header_start, header_len), source).parse(out);
  out.data_offset = header_start + header_len;

  if (out.fortran_order) fail("Fortran-order arrays are not supported (vector sets are C order)");
  if (out.descr.size() != 3 || (out.descr[1] != 'i') ||
      (out.descr[0] != '<' && out.descr[0] != '>' && out.descr[0] != '|')) {
    fail(fmt::format("dtype '{}' is not a signed integer ('<i2', '<i4', '<i8', ...)", out.descr));
  }
  const int item = out.descr[2] - '0';
  if (item != 1 && item != 2 && item != 4 && item != 8)
    fail(fmt::format("dtype '{}' has an unsupported size", out.descr));
  const bool big_endian = out.descr[0] == '>';
  std::size_t count = 1;
  for (std::size_t d : out.shape) count *= d;
  const std::size_t expected_bytes = count * static_cast<std::size_t>(item);
  const std::size_t data_bytes = bytes.size() - out.data_offset;
  if (data_bytes != expected_bytes) {
    fail(fmt::format("data holds {} bytes; shape and dtype '{}' need {}", data_bytes, out.descr, expected_bytes));
  }
  out.values.resize(count);
  for (std::size_t i = 0; i < count; ++i) {
    std::uint64_t pattern = 0;
    for (int b = 0; b < item; ++b) {
      const int k = big_endian ? item - 1 - b : b;
      pattern |= static_cast<std::uint64_t>(
                     byte_at(out.data_offset + i * static_cast<std::size_t>(item) + static_cast<std::size_t>(b)))
                 << (8U * static_cast<unsigned>(k));
    }
    // Sign-extend from the item width.
    const unsigned bits = 8U * static_cast<unsigned>(item);
    if (bits < 64 && ((pattern >> (bits - 1U)) & 1U) != 0) pattern |= ~std::uint64_t{0} << bits;
    out.values[i] = static_cast<std::int64_t>(pattern);
  }
  return out;
}

npy_array read_npy_file(const std::filesystem::path& file) { return parse_npy(read_file_bytes(file), file.string()); }

}  // namespace fxmimo::vectors
