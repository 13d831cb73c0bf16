#include "fxmimo/vectors/compare.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <nlohmann/json.hpp>

#include "fxmimo/fixedpoint/words.hpp"
#include "fxmimo/vectors/errors.hpp"
#include "fxmimo/vectors/hex_file.hpp"

namespace fxmimo::vectors {

std::string to_decimal(fp::int128 value) {
  if (value == 0) return "0";
  const bool negative = value < 0;
  // Work on the magnitude as unsigned so that the most negative value needs no negation.
  fp::uint128 mag = negative ? fp::uint128(0) - static_cast<fp::uint128>(value) : static_cast<fp::uint128>(value);
  std::string digits;
  while (mag != 0) {
    digits.push_back(static_cast<char>('0' + static_cast<int>(mag % 10)));
    mag /= 10;
  }
  if (negative) digits.push_back('-');
  std::reverse(digits.begin(), digits.end());
  return digits;
}

namespace {

std::uint64_t abs_u64(fp::int128 v) { return static_cast<std::uint64_t>(v < 0 ? -v : v); }

std::string word_text(std::int64_t word, const fp::format& fmt) {
  // Verilog-style sized literal (W'hDIGITS), then the value it stands for.
  return fmt::format("{}'h{} = {:.10g}", fmt.word_bits, fp::to_hex_word(word, fmt.word_bits),
                     std::ldexp(static_cast<double>(word), -fmt.frac_bits));
}

std::string coords_text(const node_words& meta, const std::vector<std::size_t>& coords) {
  std::string out;
  for (std::size_t i = 0; i < coords.size(); ++i) {
    if (i > 0) out += ", ";
    out += fmt::format("{}={}", meta.dim_names[i], coords[i]);
  }
  return out;
}

void add_hints(compare_report& report, const node_words& expected, const node_words& got,
               const std::vector<std::vector<std::size_t>>& failing_by_part,
               const std::vector<fp::int128>& failing_diffs) {
  const std::uint64_t fails = report.words_beyond_tolerance;
  if (fails == 0) return;
  const node_words& meta = report.expected_meta;
  // One lane: every failing word shares one index of a dimension that has several.
  for (const mismatch_histogram& h : report.histograms) {
    if (h.counts.size() < 2) continue;
    const auto nonzero = std::count_if(h.counts.begin(), h.counts.end(), [](std::uint64_t c) { return c != 0; });
    if (nonzero == 1) {
      const auto at = std::find_if(h.counts.begin(), h.counts.end(), [](std::uint64_t c) { return c != 0; });
      const auto idx = static_cast<std::size_t>(at - h.counts.begin());
      if (h.dim_name == "part") {
        report.hints.push_back(fmt::format("only the {} parts fail", idx == 0 ? "real" : "imaginary"));
      } else {
        report.hints.push_back(
            fmt::format("every failing word has {}={}: one {} (lane) is wrong", h.dim_name, idx, h.dim_name));
      }
    }
  }
  // All off by one LSB: a rounding difference is the usual cause.
  if (std::all_of(failing_diffs.begin(), failing_diffs.end(), [](fp::int128 d) { return d == 1 || d == -1; })) {
    report.hints.push_back(
        "every failing word is off by exactly 1 LSB: look at the rounding mode of the last requantise stage");
  }
  // A slip: got[i] == expected[i - d] for nearly every failing word.
  if (fails >= 3) {
    const std::size_t n = expected.re.size();
    for (int d : {1, -1, 2, -2, 3, -3, 4, -4}) {
      std::uint64_t hits = 0;
      for (std::size_t p = 0; p < failing_by_part.size(); ++p) {
        const auto& exp_part = p == 0 ? expected.re : expected.im;
        const auto& got_part = p == 0 ? got.re : got.im;
        for (std::size_t i : failing_by_part[p]) {
          const auto j = static_cast<long long>(i) - d;
          if (j >= 0 && static_cast<std::size_t>(j) < n && got_part[i] == exp_part[static_cast<std::size_t>(j)]) ++hits;
        }
      }
      if (10 * hits >= 9 * fails) {
        report.hints.push_back(fmt::format(
            "got[i] equals expected[i{:+d}] for {} of {} failing words: the output stream is {} by {} word(s) "
            "in flat order (last dimension '{}' fastest): a timing slip",
            -d, hits, fails, d > 0 ? "late" : "early", std::abs(d),
            meta.dim_names.empty() ? "-" : meta.dim_names.back()));
        break;
      }
    }
  }
}

}  // namespace

compare_report compare_words(const node_words& expected, const node_words& got, const compare_options& options) {
  if (expected.is_complex != got.is_complex) throw vector_error("compare: one record is complex, the other real");
  if (expected.re.size() != got.re.size() || expected.im.size() != got.im.size()) {
    throw vector_error(fmt::format("compare: {} words expected, {} given", expected.re.size() + expected.im.size(),
                                   got.re.size() + got.im.size()));
  }
  compare_report report;
  report.label = record_label(expected);
  report.expected_meta = expected;
  report.expected_meta.re.clear();
  report.expected_meta.im.clear();
  report.tolerance_lsb = options.tolerance_lsb;
  for (std::size_t d = 0; d < expected.dim_sizes.size(); ++d) {
    report.histograms.push_back({expected.dim_names[d], std::vector<std::uint64_t>(expected.dim_sizes[d], 0)});
  }
  if (expected.is_complex) report.histograms.push_back({"part", {0, 0}});

  const std::size_t num_parts = expected.is_complex ? 2 : 1;
  std::vector<std::vector<std::size_t>> failing_by_part(num_parts);
  std::vector<fp::int128> failing_diffs;
  const std::size_t n = expected.re.size();
  for (std::size_t i = 0; i < n; ++i) {
    for (std::size_t p = 0; p < num_parts; ++p) {
      const std::int64_t e = p == 0 ? expected.re[i] : expected.im[i];
      const std::int64_t g = p == 0 ? got.re[i] : got.im[i];
      ++report.words_compared;
      if (e == g) continue;
      ++report.words_differing;
      const fp::int128 diff = fp::int128(g) - fp::int128(e);
      const std::uint64_t mag = abs_u64(diff);
      report.max_abs_diff_lsb = std::max(report.max_abs_diff_lsb, mag);
      if (mag <= options.tolerance_lsb) continue;
      ++report.words_beyond_tolerance;
      failing_by_part[p].push_back(i);
      failing_diffs.push_back(diff);
      const std::vector<std::size_t> coords = expected.coordinates(i);
      for (std::size_t d = 0; d < coords.size(); ++d) ++report.histograms[d].counts[coords[d]];
      if (expected.is_complex) ++report.histograms.back().counts[p];
      if (report.first.size() < options.max_report) {
        report.first.push_back({i, expected.is_complex ? (p == 0 ? "re" : "im") : "", coords, e, g, diff});
      }
    }
  }
  add_hints(report, expected, got, failing_by_part, failing_diffs);
  return report;
}

compare_report compare_dump(const vector_set& set, std::string_view node,
                            const std::vector<std::filesystem::path>& dumps, const compare_options& options,
                            std::string_view port) {
  const node_words* expected = set.find(node, "out", port);
  if (expected == nullptr) {
    std::string list;
    for (const node_words& r : set.records) {
      if (r.direction == "out") list += (list.empty() ? "" : ", ") + record_label(r);
    }
    throw vector_error(fmt::format("{} has no expected (\"out\") words for node '{}'{}; it holds: {}", set.dir.string(),
                                   node, port.empty() ? std::string() : fmt::format(" port '{}'", port),
                                   list.empty() ? "none" : list));
  }
  const bool interleaved = set.man.layout == complex_layout::interleaved;
  const std::size_t want_dumps = expected->is_complex && !interleaved ? 2 : 1;
  if (dumps.size() != want_dumps) {
    throw vector_error(fmt::format(
        "node {} is {}: give {} dump file(s){}, {} given", record_label(*expected),
        expected->is_complex ? (interleaved ? "complex, interleaved (re, im per element)" : "complex, split") : "real",
        want_dumps, want_dumps == 2 ? " (real part, then imaginary part)" : "", dumps.size()));
  }
  const word_radix radix = set.man.form == file_form::bin ? word_radix::bin : word_radix::hex;
  node_words got = *expected;
  const std::size_t n = expected->num_elements();
  if (!expected->is_complex) {
    got.re = read_word_file(dumps[0], expected->spec.fmt, radix, n);
  } else if (!interleaved) {
    got.re = read_word_file(dumps[0], expected->spec.fmt, radix, n);
    got.im = read_word_file(dumps[1], expected->spec.fmt, radix, n);
  } else {
    const std::vector<std::int64_t> both = read_word_file(dumps[0], expected->spec.fmt, radix, 2 * n);
    got.re.clear();
    got.im.clear();
    for (std::size_t i = 0; i + 1 < both.size(); i += 2) {
      got.re.push_back(both[i]);
      got.im.push_back(both[i + 1]);
    }
  }
  compare_report report = compare_words(*expected, got, options);
  for (const file_entry* f : set.files_of(*expected)) report.expected_files.push_back((set.dir / f->file).string());
  for (const auto& d : dumps) report.dump_files.push_back(d.string());
  return report;
}

std::string format_report(const compare_report& report) {
  const node_words& meta = report.expected_meta;
  std::string out;
  if (report.passed()) {
    out += fmt::format("{}: PASS, {} words {}", report.label, report.words_compared,
                       report.words_differing == 0
                           ? "bit-exact"
                           : fmt::format("within {} LSB ({} differ, max {} LSB)", report.tolerance_lsb,
                                         report.words_differing, report.max_abs_diff_lsb));
  } else {
    out += fmt::format("{}: MISMATCH, {} of {} words differ by more than {} LSB (max |got - expected| = {} LSB)",
                       report.label, report.words_beyond_tolerance, report.words_compared, report.tolerance_lsb,
                       report.max_abs_diff_lsb);
  }
  out += "\n";
  std::string dims;
  for (std::size_t d = 0; d < meta.dim_names.size(); ++d) {
    dims += fmt::format("{}{}={}", d == 0 ? "" : " x ", meta.dim_names[d], meta.dim_sizes[d]);
  }
  out += fmt::format("  format {}, rounding {}, overflow {}; dims {}; {}\n", fp::describe(meta.spec.fmt),
                     fp::to_string(meta.spec.rounding), fp::to_string(meta.spec.overflow),
                     dims.empty() ? "(scalar)" : dims, meta.is_complex ? "complex" : "real");
  auto join = [](const std::vector<std::string>& v) {
    std::string s;
    for (const std::string& x : v) s += (s.empty() ? "" : ", ") + x;
    return s;
  };
  if (!report.expected_files.empty()) out += fmt::format("  expected: {}\n", join(report.expected_files));
  if (!report.dump_files.empty()) out += fmt::format("  dump:     {}\n", join(report.dump_files));
  if (report.passed()) return out;

  const word_mismatch& w0 = report.first.front();
  out += fmt::format("  first mismatch: flat index {} ({}){}: expected {}, got {}, got - expected = {} LSB\n",
                     w0.flat_index, coords_text(meta, w0.coords), w0.part.empty() ? "" : ", part " + w0.part,
                     word_text(w0.expected, meta.spec.fmt), word_text(w0.got, meta.spec.fmt), to_decimal(w0.diff_lsb));
  out += fmt::format("  first {} of {} failing words:\n", report.first.size(), report.words_beyond_tolerance);
  std::string header = fmt::format("    {:>8}", "flat");
  if (meta.is_complex) header += fmt::format(" {:>4}", "part");
  for (const std::string& name : meta.dim_names)
    header += fmt::format(" {:>{}}", name, std::max<std::size_t>(name.size(), 4));
  header += fmt::format("  {:<32} {:<32} {}", "expected", "got", "got-exp [LSB]");
  out += header + "\n";
  for (const word_mismatch& w : report.first) {
    std::string row = fmt::format("    {:>8}", w.flat_index);
    if (meta.is_complex) row += fmt::format(" {:>4}", w.part);
    for (std::size_t d = 0; d < w.coords.size(); ++d) {
      row += fmt::format(" {:>{}}", w.coords[d], std::max<std::size_t>(meta.dim_names[d].size(), 4));
    }
    row += fmt::format("  {:<32} {:<32} {}", word_text(w.expected, meta.spec.fmt), word_text(w.got, meta.spec.fmt),
                       to_decimal(w.diff_lsb));
    out += row + "\n";
  }
  out += "  failing words per index:\n";
  for (const mismatch_histogram& h : report.histograms) {
    std::string line;
    std::size_t shown = 0;
    std::size_t nonzero = 0;
    for (std::size_t i = 0; i < h.counts.size(); ++i) {
      if (h.counts[i] == 0) continue;
      ++nonzero;
      if (shown < 32) {
        const std::string idx = h.dim_name == "part" ? (i == 0 ? "re" : "im") : std::to_string(i);
        line += fmt::format(" {}:{}", idx, h.counts[i]);
        ++shown;
      }
    }
    if (nonzero > shown)
      line += fmt::format(" ... ({} of {} indices fail)", nonzero, h.counts.size());
    else
      line += fmt::format("   ({} of {} indices fail)", nonzero, h.counts.size());
    out += fmt::format("    {:<10}{}\n", h.dim_name, line);
  }
  for (const std::string& hint : report.hints) out += "  hint: " + hint + "\n";
  return out;
}

nlohmann::json to_json(const compare_report& report) {
  const node_words& meta = report.expected_meta;
  nlohmann::json j;
  j["record"] = report.label;
  j["node"] = meta.node;
  j["port"] = meta.port_name();
  j["passed"] = report.passed();
  j["format"] = fp::to_q_string(meta.spec.fmt);
  j["word_bits"] = meta.spec.fmt.word_bits;
  j["tolerance_lsb"] = report.tolerance_lsb;
  j["words_compared"] = report.words_compared;
  j["words_differing"] = report.words_differing;
  j["words_beyond_tolerance"] = report.words_beyond_tolerance;
  j["max_abs_diff_lsb"] = report.max_abs_diff_lsb;
  j["dims"] = nlohmann::json::array();
  for (std::size_t d = 0; d < meta.dim_names.size(); ++d)
    j["dims"].push_back({{"name", meta.dim_names[d]}, {"size", meta.dim_sizes[d]}});
  j["mismatches"] = nlohmann::json::array();
  for (const word_mismatch& w : report.first) {
    nlohmann::json c = nlohmann::json::object();
    for (std::size_t d = 0; d < w.coords.size(); ++d) c[meta.dim_names[d]] = w.coords[d];
    j["mismatches"].push_back({{"flat_index", w.flat_index},
                               {"part", w.part},
                               {"coords", c},
                               {"expected_hex", fp::to_hex_word(w.expected, meta.spec.fmt.word_bits)},
                               {"got_hex", fp::to_hex_word(w.got, meta.spec.fmt.word_bits)},
                               {"expected", w.expected},
                               {"got", w.got},
                               {"diff_lsb", to_decimal(w.diff_lsb)}});
  }
  j["histograms"] = nlohmann::json::object();
  for (const mismatch_histogram& h : report.histograms) j["histograms"][h.dim_name] = h.counts;
  j["hints"] = report.hints;
  j["expected_files"] = report.expected_files;
  j["dump_files"] = report.dump_files;
  return j;
}

io::junit_suite to_junit(const compare_report& report, const std::string& scenario_name) {
  io::junit_suite suite;
  suite.name = "fxmimo check " + report.label;
  suite.properties = {{"scenario", scenario_name},
                      {"tolerance_lsb", std::to_string(report.tolerance_lsb)},
                      {"words_compared", std::to_string(report.words_compared)}};
  for (const std::string& f : report.dump_files) suite.properties.push_back({"dump", f});
  io::junit_case c;
  c.name = report.label;
  c.classname = "fxmimo.check." + std::filesystem::path(scenario_name).stem().string();  // no ".toml" in it
  const std::string text = format_report(report);
  if (report.passed()) {
    c.details = text;
  } else {
    c.failed = true;
    c.failure_type = "mismatch";
    // The verdict line and the first mismatch: what a CI page shows in one line.
    const std::size_t verdict_end = text.find('\n');
    std::string message = text.substr(0, verdict_end);
    if (const std::size_t first = text.find("first mismatch:"); first != std::string::npos) {
      message += "; " + text.substr(first, text.find('\n', first) - first);
    }
    c.failure_message = message;
    c.details = text;
  }
  suite.cases.push_back(std::move(c));
  return suite;
}

}  // namespace fxmimo::vectors
