#pragma once
/// The visual report: results files of `fxmimo run`, `range`, `sweep` and `tune` drawn into one
/// self-contained HTML page with inline SVG charts. No scripts, no external resources; the markup
/// is also well-formed XML so any XML parser can check it. The page is drawn from the typed
/// records (records.hpp), so whatever a command writes into its file, the report can show.

#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <utility>
#include <vector>

#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/report/records.hpp"

namespace fxmimo::report {

/// A results file the report cannot use: unreadable, not JSON, unknown "kind", a missing or
/// mistyped key. The message is one line and starts with the file's name. (The one error type
/// of the checked reader.)
using report_input_error = io::json_error;

/// The kind of one parsed results file (see kind_of in records.hpp). Throws report_input_error
/// naming `name`.
report_kind report_input_kind(const std::string& name, const nlohmann::json& doc);

/// Reads and parses one results file; throws report_input_error("PATH: ...") when the file
/// cannot be read, is not JSON or is of no known kind.
nlohmann::json read_report_input(const std::filesystem::path& path);

/// The whole report for the records, in the order given: a summary of the inputs, then one
/// section per file. Sweeps: per node, SINR loss (dB) and EVM (%) against the swept width, and
/// for integer-bit sweeps the overflow rate (log scale); ranges: log2 |value| histograms with the
/// proposed integer bits; tunes: widths, modes, cost, limits with the search and re-verified
/// values, margins and the PASS/FAIL of the re-verification; runs: the summary, transmit-power
/// error, node and user tables. Deterministic (no date).
std::string render_report_html(const std::vector<named_record>& inputs);

/// The same for parsed files (name, JSON): each is read into its record first; throws
/// report_input_error naming the file and key when a file lacks what its kind needs.
std::string render_report_html(const std::vector<std::pair<std::string, nlohmann::json>>& inputs);

}  // namespace fxmimo::report
