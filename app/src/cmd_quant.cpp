// fxmimo quant: decimal values to words and words back to values, in one format.
#include <fmt/core.h>

#include <cmath>
#include <iostream>
#include <nlohmann/json.hpp>
#include <optional>

#include "commands.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/words.hpp"

namespace fxmimo::cli {

namespace fp = fxmimo::fixedpoint;

namespace {

struct quant_options {
  std::string format_text;
  std::string rounding_text = "half_even";
  std::string overflow_text = "saturate";
  bool json = false;
  std::vector<std::string> values;
};

/// num / den (den > 0) as the nearest double, however many digits both have: each is cut to its
/// top 62 bits first (a decimal input of hundreds of digits has a denominator past any double).
double ratio_as_double(const fp::big_int& num, const fp::big_int& den) {
  if (num == 0) return 0.0;
  const auto top = [](const fp::big_int& v, long& exponent) {
    const fp::big_int mag = v < 0 ? fp::big_int(-v) : v;
    const long msb = static_cast<long>(boost::multiprecision::msb(mag));
    exponent = msb - 62;
    const fp::big_int cut = exponent > 0 ? fp::big_int(mag >> static_cast<unsigned>(exponent))
                                         : fp::big_int(mag << static_cast<unsigned>(-exponent));
    return cut.convert_to<double>();
  };
  long e_num = 0, e_den = 0;
  const double n = top(num, e_num), d = top(den, e_den);
  return std::ldexp((num < 0 ? -n : n) / d, static_cast<int>(e_num - e_den));
}

struct quant_row {
  std::string input;
  fp::big_int word;
  double error_lsb = 0.0;  ///< word - exact input, in LSBs (0 for a word given as input)
  bool overflowed = false;
  bool from_word = false;
};

/// One input: "0x..." (hex word), "0b..." (binary word) or a decimal number.
quant_row convert_one(const std::string& text, const fp::target& tgt) {
  quant_row row;
  row.input = text;
  std::string lower = text;
  for (char& ch : lower) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  if (lower.rfind("0x", 0) == 0 || lower.rfind("0b", 0) == 0) {
    const int base = lower[1] == 'x' ? 16 : 2;
    const auto word = fp::parse_word(std::string_view(lower).substr(2), base, tgt.fmt);
    if (!word) {
      throw usage_error(fmt::format("bad word '{}': expected {} digits of a {}-bit word", text,
                                    base == 16 ? "hex" : "binary", tgt.fmt.word_bits));
    }
    row.word = *word;
    row.from_word = true;
    return row;
  }
  fp::decimal_value value;
  try {
    value = fp::parse_decimal(text);
  } catch (const std::invalid_argument& e) {
    throw usage_error(e.what());
  }
  fp::counters c;
  row.word = fp::from_decimal<fp::big_int>(value, tgt, c);
  row.overflowed = c.overflowed > 0;
  // error = word - value 2^F, as (word 10^-e - digits 2^F) / 10^-e (exact, then one double).
  fp::big_int den = 1;
  fp::big_int num = value.digits;
  for (int i = 0; i < -value.exp10; ++i) den *= 10;
  for (int i = 0; i < value.exp10; ++i) num *= 10;
  const int f = tgt.fmt.frac_bits;
  fp::big_int scaled_num = f >= 0 ? fp::big_int(num << static_cast<unsigned>(f)) : num;
  fp::big_int scaled_den = f >= 0 ? den : fp::big_int(den << static_cast<unsigned>(-f));
  const fp::big_int diff = row.word * scaled_den - scaled_num;
  row.error_lsb = ratio_as_double(diff, scaled_den);
  return row;
}

int run_quant(const quant_options& opt) {
  fp::target tgt;
  try {
    tgt.fmt = fp::parse_format(opt.format_text);
  } catch (const fp::format_error& e) {
    throw usage_error(e.what());
  }
  const auto rnd = fp::parse_rounding_mode(opt.rounding_text);
  if (!rnd)
    throw usage_error(
        fmt::format("bad rounding mode '{}': expected one of {}", opt.rounding_text, fp::list_rounding_modes()));
  const auto ovf = fp::parse_overflow_mode(opt.overflow_text);
  if (!ovf)
    throw usage_error(
        fmt::format("bad overflow mode '{}': expected one of {}", opt.overflow_text, fp::list_overflow_modes()));
  tgt.rounding = *rnd;
  tgt.overflow = *ovf;

  std::vector<quant_row> rows;
  if (!opt.values.empty()) {
    for (const std::string& v : opt.values) rows.push_back(convert_one(v, tgt));
  } else {
    std::string line;
    int line_no = 0;
    while (std::getline(std::cin, line)) {
      ++line_no;
      const auto first = line.find_first_not_of(" \t\r");
      if (first == std::string::npos || line[first] == '#') continue;
      const auto last = line.find_last_not_of(" \t\r");
      try {
        rows.push_back(convert_one(line.substr(first, last - first + 1), tgt));
      } catch (const usage_error& e) {
        throw usage_error(fmt::format("stdin line {}: {}", line_no, e.what()));
      }
    }
  }

  if (opt.json) {
    nlohmann::json out;
    out["format"] = fp::to_q_string(tgt.fmt);
    out["word_bits"] = tgt.fmt.word_bits;
    out["frac_bits"] = tgt.fmt.frac_bits;
    out["signed"] = tgt.fmt.is_signed;
    out["rounding"] = std::string(fp::to_string(tgt.rounding));
    out["overflow"] = std::string(fp::to_string(tgt.overflow));
    out["values"] = nlohmann::json::array();
    for (const quant_row& r : rows) {
      out["values"].push_back({{"input", r.input},
                               {"word", r.word.str()},
                               {"value", fp::exact_decimal(r.word, tgt.fmt.frac_bits)},
                               {"hex", fp::to_hex_word(r.word, tgt.fmt)},
                               {"bin", fp::to_bin_word(r.word, tgt.fmt)},
                               {"error_lsb", r.error_lsb},
                               {"overflow", r.overflowed}});
    }
    fmt::print("{}\n", out.dump(2));
    return exit_ok;
  }
  fmt::print("# {}, rounding {}, overflow {} (signed Qm.n = 1 + m + n bits)\n", fp::describe(tgt.fmt),
             fp::to_string(tgt.rounding), fp::to_string(tgt.overflow));
  const int hex_width = std::max(3, (tgt.fmt.word_bits + 3) / 4);
  const int bin_width = std::max(6, tgt.fmt.word_bits);
  fmt::print("{:<14} {:<22} {:<{}} {:<{}} {:>9} {}\n", "input", "value", "hex", hex_width, "binary", bin_width,
             "err_lsb", "overflow");
  for (const quant_row& r : rows) {
    const std::string err = r.from_word ? "-" : fmt::format("{:+.4g}", r.error_lsb);
    fmt::print("{:<14} {:<22} {:<{}} {:<{}} {:>9} {}\n", r.input, fp::exact_decimal(r.word, tgt.fmt.frac_bits),
               fp::to_hex_word(r.word, tgt.fmt), hex_width, fp::to_bin_word(r.word, tgt.fmt), bin_width, err,
               r.overflowed ? "yes" : "no");
  }
  return exit_ok;
}

}  // namespace

void add_quant_command(CLI::App& app) {
  auto opt = std::make_shared<quant_options>();
  CLI::App* cmd = app.add_subcommand("quant", "Convert decimal values to words of a format, and words back to values");
  cmd->add_option("-f,--format", opt->format_text, "Format: Qm.n, UQm.n, W,F or uW,F (signed Qm.n = 1+m+n bits)")
      ->required();
  cmd->add_option("-r,--rounding", opt->rounding_text, "Rounding: " + fp::list_rounding_modes())->capture_default_str();
  cmd->add_option("-o,--overflow", opt->overflow_text, "Overflow: " + fp::list_overflow_modes())->capture_default_str();
  cmd->add_flag("--json", opt->json, "Print JSON instead of a table");
  cmd->add_option("values", opt->values,
                  "Decimal values (exact: 0.1 is ten tenths, not a double) or words 0x... / 0b...; "
                  "without values, one per line on stdin");
  cmd->footer(
      "Examples:\n"
      "  fxmimo quant -f Q0.15 0.5 -0.3 0.99999\n"
      "  fxmimo quant -f Q1.6 -r floor -o wrap 1.999 -2.5\n"
      "  fxmimo quant -f 12,8 0x800 0x7ff\n"
      "  printf '0.1\\n0.2\\n' | fxmimo quant -f UQ0.8 --json");
  cmd->callback([opt] { run_guarded("quant", [opt] { return run_quant(*opt); }); });
}

}  // namespace fxmimo::cli
