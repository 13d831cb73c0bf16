#pragma once
/// The visual report: results files of `fxmimo run`, `range`, `sweep` and `tune` (JSON) drawn
/// into one self-contained HTML page with inline SVG charts. No scripts, no external resources;
/// the markup is also well-formed XML so any XML parser can check it.

#include <filesystem>
#include <nlohmann/json.hpp>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace fxmimo::report {

/// A results file the report cannot use: unreadable, not JSON, unknown "kind", a missing or
/// mistyped key. The message is one line and starts with the file's name.
struct report_input_error : std::runtime_error {
  using std::runtime_error::runtime_error;
};

/// The kinds of results files the report draws.
enum class report_kind { run, range, sweep, tune };

/// The kind of one results file: its "kind" ("run", "range", "sweep", "tune"); a file without
/// "kind" that has "summary" and "users" is a run (older `fxmimo run --json` output).
/// Throws report_input_error naming `name` otherwise.
report_kind report_input_kind(const std::string& name, const nlohmann::json& doc);

/// Reads and parses one results file; throws report_input_error("PATH: ...") when the file
/// cannot be read, is not JSON or is of no known kind.
nlohmann::json read_report_input(const std::filesystem::path& path);

/// The whole report for (file name, parsed JSON) pairs, in the order given: a summary of the
/// inputs, then one section per file. Sweeps: per node, SINR loss (dB) and EVM (%) against the
/// swept width, and for integer-bit sweeps the overflow rate (log scale); ranges: log2 |value|
/// histograms with the proposed integer bits; tunes: widths, cost, margins and the PASS/FAIL of
/// the re-verification; runs: the node, user and summary tables. Deterministic (no date).
/// Throws report_input_error naming the file and key when a file lacks what its kind needs.
std::string render_report_html(const std::vector<std::pair<std::string, nlohmann::json>>& inputs);

}  // namespace fxmimo::report
