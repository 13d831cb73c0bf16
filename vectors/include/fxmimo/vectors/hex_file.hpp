#pragma once
/// Word files, one word per line: the hex form read by Verilog $readmemh (IEEE 1364-2005
/// §17.2.9) and VHDL hread (IEEE 1076-2008 std_logic_1164), and the binary form read by
/// $readmemb. A line holds exactly ceil(W/4) lower-case hex digits (or exactly W binary digits)
/// of the W-bit two's-complement pattern, no prefix, no address, no comment, ended by '\n'.
/// The same form is what a testbench writes with $fwrite(fd, "%h\n", word) from a W-bit reg
/// (§17.1.1.3: %h prints the zero-padded pattern), so RTL dumps are read by the same code.

#include <cstdint>
#include <filesystem>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/fixedpoint/format.hpp"

namespace fxmimo::vectors {

namespace fp = fxmimo::fixedpoint;

enum class word_radix { hex, bin };

/// Digits per line: ceil(W/4) for hex, W for binary.
int digits_per_word(const fp::format& fmt, word_radix radix);

/// The file text for `words` (each a word of `fmt`), one line each.
std::string format_word_lines(std::span<const std::int64_t> words, const fp::format& fmt, word_radix radix);

/// Parses word lines strictly. Accepted: exactly digits_per_word() digits per line (upper or
/// lower case), trailing spaces or '\r', a final line without '\n'. Every other deviation is
/// a vector_error "SOURCE:LINE: ..." naming the first bad line: x/z digits (an unknown the RTL
/// drove), a wrong digit count, a character that is not a digit of the radix, a pattern with
/// bits set above bit W-1, an empty line, more or fewer lines than `expected_count`.
/// `source` names the file in messages.
std::vector<std::int64_t> parse_word_lines(std::string_view text, const fp::format& fmt, word_radix radix,
                                           std::optional<std::size_t> expected_count, std::string_view source);

/// parse_word_lines on a file's contents; an unreadable file is a vector_error too.
std::vector<std::int64_t> read_word_file(const std::filesystem::path& file, const fp::format& fmt, word_radix radix,
                                         std::optional<std::size_t> expected_count);

/// The whole file as bytes; vector_error naming the file when it cannot be read.
std::string read_file_bytes(const std::filesystem::path& file);

}  // namespace fxmimo::vectors
