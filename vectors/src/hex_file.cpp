#include "fxmimo/vectors/hex_file.hpp"

#include <fmt/core.h>

#include <fstream>
#include <sstream>

#include "fxmimo/fixedpoint/words.hpp"
#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/vectors/errors.hpp"

namespace fxmimo::vectors {

int digits_per_word(const fp::format& fmt, word_radix radix) {
  return radix == word_radix::hex ? (fmt.word_bits + 3) / 4 : fmt.word_bits;
}

std::string format_word_lines(std::span<const std::int64_t> words, const fp::format& fmt, word_radix radix) {
  const auto width = static_cast<std::size_t>(digits_per_word(fmt, radix));
  std::string text;
  text.reserve(words.size() * (width + 1));
  for (std::int64_t word : words) {
    if (radix == word_radix::hex) {
      text += fp::to_hex_word(word, fmt.word_bits);
    } else {
      text += fp::to_bin_word(fp::big_int(word), fmt);
    }
    text.push_back('\n');
  }
  return text;
}

namespace {

bool is_unknown_digit(char ch) { return ch == 'x' || ch == 'X' || ch == 'z' || ch == 'Z' || ch == '?'; }

bool is_radix_digit(char ch, word_radix radix) {
  if (radix == word_radix::bin) return ch == '0' || ch == '1';
  return (ch >= '0' && ch <= '9') || (ch >= 'a' && ch <= 'f') || (ch >= 'A' && ch <= 'F');
}

std::string quoted_excerpt(std::string_view line) {
  constexpr std::size_t max_len = 40;
  std::string out(line.substr(0, max_len));
  if (line.size() > max_len) out += "...";
  return "'" + out + "'";
}

}  // namespace

std::vector<std::int64_t> parse_word_lines(std::string_view text, const fp::format& fmt, word_radix radix,
                                           std::optional<std::size_t> expected_count, std::string_view source) {
  const int width = digits_per_word(fmt, radix);
  const char* radix_name = radix == word_radix::hex ? "hex" : "binary";
  std::vector<std::int64_t> words;
  if (expected_count) words.reserve(*expected_count);
  std::size_t line_no = 0;
  std::size_t pos = 0;
  while (pos < text.size()) {
    const std::size_t end = text.find('\n', pos);
    std::string_view line = text.substr(pos, end == std::string_view::npos ? std::string_view::npos : end - pos);
    pos = end == std::string_view::npos ? text.size() : end + 1;
    ++line_no;
    while (!line.empty() && (line.back() == ' ' || line.back() == '\r' || line.back() == '\t')) line.remove_suffix(1);
    auto fail = [&](const std::string& what) { throw vector_error(fmt::format("{}:{}: {}", source, line_no, what)); };
    if (line.empty()) fail(fmt::format("empty line; expected one word of {} {} digits per line", width, radix_name));
    if (expected_count && words.size() == *expected_count) {
      fail(fmt::format("more lines than the {} words expected", *expected_count));
    }
    if (line.size() > 2 && line[0] == '0' && (line[1] == 'x' || line[1] == 'X') && is_radix_digit(line[2], radix)) {
      fail(
          fmt::format("{} starts with a '0{}' prefix; word files hold bare digits ($readmemh/hread reject "
                      "prefixes)",
                      quoted_excerpt(line), line[1]));
    }
    for (std::size_t i = 0; i < line.size(); ++i) {
      const char ch = line[i];
      if (is_unknown_digit(ch)) {
        fail(
            fmt::format("{} holds an x/z digit at column {}: the RTL drove an unknown value (uninitialised "
                        "register, undriven net, or a read before the first valid output?)",
                        quoted_excerpt(line), i + 1));
      }
      if (!is_radix_digit(ch, radix)) {
        fail(
            fmt::format("{}: character '{}' at column {} is not a {} digit (no prefix, address or comment "
                        "is allowed)",
                        quoted_excerpt(line), ch, i + 1, radix_name));
      }
    }
    if (static_cast<int>(line.size()) != width) {
      fail(fmt::format("{} has {} digits; a {}-bit word is exactly {} {} digits", quoted_excerpt(line), line.size(),
                       fmt.word_bits, width, radix_name));
    }
    const auto word = fp::parse_word(line, radix == word_radix::hex ? 16 : 2, fmt);
    if (!word) {
      fail(fmt::format("{} sets bits above bit {} of a {}-bit word", quoted_excerpt(line), fmt.word_bits - 1,
                       fmt.word_bits));
    }
    words.push_back(word->convert_to<std::int64_t>());
  }
  if (expected_count && words.size() != *expected_count) {
    throw vector_error(fmt::format("{}:{}: file ends after {} words; {} expected", source, line_no + 1, words.size(),
                                   *expected_count));
  }
  return words;
}

std::string read_file_bytes(const std::filesystem::path& file) {
  try {
    return io::read_file(file);
  } catch (const io::json_error& e) {
    throw vector_error(e.what());
  }
}

std::vector<std::int64_t> read_word_file(const std::filesystem::path& file, const fp::format& fmt, word_radix radix,
                                         std::optional<std::size_t> expected_count) {
  return parse_word_lines(read_file_bytes(file), fmt, radix, expected_count, file.string());
}

}  // namespace fxmimo::vectors
