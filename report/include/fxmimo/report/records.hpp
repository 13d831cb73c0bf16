#pragma once
/// The results files of run, range, sweep and tune as typed records: one struct per kind with
/// its to_json and from_json beside each other, read through the one checked JSON reader
/// (fxmimo/io/checked_json.hpp) so a missing or mistyped key is one error naming the file and the
/// key path. The JSON writers of the commands and the HTML report both go through these structs,
/// so whatever a command writes, the report can show.
///
/// Node names are text here: a file may name the nodes of a stage a user registered in their own
/// program, which the reader need not know.

#include <cstdint>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <variant>
#include <vector>

#include "fxmimo/analysis/range.hpp"
#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/modes.hpp"
#include "fxmimo/io/checked_json.hpp"
#include "fxmimo/io/junit.hpp"

namespace fxmimo::report {

/// Version of the results files, written as "schema"; a reader refuses any other version with one
/// clear error. Files without the key are version 1 (written before the files were versioned).
inline constexpr int results_schema = 1;

/// A figure that may have no value: NaN and infinities are written as JSON null and read back as
/// nullopt (for an SQNR, nullopt means the node is exact).
using metric = std::optional<double>;

/// The scenario a results file comes from: "scenario": {"name", "source"} (source only in run
/// files); the oldest files give the name as a plain string.
struct scenario_ref {
  std::string name;
  std::string source;
};

// --- run --------------------------------------------------------------------------------------

struct run_node_record {
  std::string node;
  fixedpoint::format fmt;
  fixedpoint::rounding_mode rounding = fixedpoint::rounding_mode::half_even;
  fixedpoint::overflow_mode overflow = fixedpoint::overflow_mode::saturate;
  bool is_default = false;  ///< the node had no [nodes.NAME] table: the wide default
  metric sqnr_db;           ///< nullopt: exact (no error at all)
  double max_err_lsb = 0.0;
  std::uint64_t values = 0;
  std::uint64_t overflows = 0;
  metric overflow_rate;  ///< overflows per requantised value
  // Absent from run files written before the overflow-counting rule was stated:
  std::optional<double> max_abs_golden;
  std::optional<std::uint64_t> requantized, inexact;
  std::optional<double> max_overflow_excess_lsb;
  /// 95 % upper bound of the overflow rate (absent from older files).
  std::optional<metric> overflow_rate_bound;
};

struct run_user_record {
  metric sinr_golden_db, sinr_fixed_db, sinr_loss_db, evm_golden_pct, evm_fixed_pct;
};

struct run_summary_record {
  metric sinr_golden_db, sinr_fixed_db, sinr_loss_db, evm_golden_pct, evm_fixed_pct, evm_impl_pct;
  metric evm_limit_pct;  ///< the 3GPP TS 38.104 limit of the modulation, where it has one
  /// Transmit power of the fixed block against the golden one (absent from the oldest run files).
  std::optional<metric> tx_power_error_db, max_abs_tx_power_error_db, rms_tx_power_error_db;
};

/// Percentiles over trials and users (analysis::run_distribution); absent from older files.
struct distribution_record {
  metric sinr_loss_p5_db, sinr_loss_p50_db, sinr_loss_p95_db;
  std::vector<double> sinr_loss_percentiles_db;  ///< 0, 1, ..., 100 %: the empirical CDF
  metric evm_impl_p95_pct, evm_impl_max_pct;
  std::optional<double> gram_condition_p50, gram_condition_p95, gram_condition_max;
};

/// The uplink of a run (analysis::uplink_results); absent without [uplink].
struct uplink_record {
  std::vector<run_user_record> users;
  metric sinr_golden_db, sinr_fixed_db, sinr_loss_db, evm_golden_pct, evm_fixed_pct;
  std::uint64_t bits = 0, bit_errors_golden = 0, bit_errors_fixed = 0, llr_sign_flips = 0;
};

struct run_record {
  scenario_ref scenario;
  std::uint64_t trials = 0;
  std::vector<std::uint64_t> trial_indices;
  std::vector<run_node_record> nodes;  ///< datapath order
  std::vector<run_user_record> users;
  run_summary_record summary;
  std::optional<distribution_record> distribution;
  std::optional<uplink_record> uplink;
  std::vector<std::string> warnings;
};

// --- range ------------------------------------------------------------------------------------

/// A generalized Pareto fit of a node's tail (analysis/tail.hpp).
struct tail_record {
  std::uint64_t exceedances = 0;
  double threshold = 0.0, shape = 0.0, scale = 0.0, quantile = 0.0, upper_bound = 0.0, confidence = 0.0;
};

struct range_node_record {
  std::string node;
  std::uint64_t values = 0;
  double max_abs = 0.0, p99 = 0.0, p99_99 = 0.0, p99_9999 = 0.0;
  int proposed_int_bits = 0;
  std::string proposal_basis;
  std::optional<int> analytic_int_bits;
  std::string analytic_rule;
  int hist_min_exp = 0;
  std::vector<std::uint64_t> log2_histogram;  ///< [i]: values with 2^(hist_min_exp+i) <= |v| < 2^(hist_min_exp+i+1)
  std::optional<tail_record> tail;            ///< absent from older files and where no fit was made
};

struct range_record {
  scenario_ref scenario;
  std::uint64_t trials = 0;
  double overflow_prob = 0.0;
  std::vector<range_node_record> nodes;                                              ///< datapath order
  std::optional<double> gram_condition_p50, gram_condition_p95, gram_condition_max;  ///< absent without a Gram
};

// --- sweep ------------------------------------------------------------------------------------

struct sweep_point_record {
  std::string node;
  int bits = 0;  ///< the swept quantity's value
  fixedpoint::format fmt;
  metric sinr_loss_db, evm_fixed_pct, evm_impl_pct, overflow_rate;
  metric sqnr_db;                                            ///< nullopt: exact
  std::optional<metric> sinr_fixed_db;                       ///< absent from the oldest sweep files
  std::optional<metric> max_overflow_rate;                   ///< worst node at this point; absent from the oldest files
  std::optional<metric> sinr_loss_p95_db, evm_impl_p95_pct;  ///< percentiles; absent from older files
  std::optional<uplink_record> uplink;                       ///< the run's "uplink" at this point; absent without one
};

struct sweep_record {
  scenario_ref scenario;
  std::uint64_t trials = 0;
  std::string vary;  ///< "frac", "word" or "int"
  std::vector<sweep_point_record> points;
};

// --- key sweep --------------------------------------------------------------------------------

struct key_sweep_point_record {
  std::string value;  ///< the key's value (TOML text)
  metric sinr_golden_db, sinr_fixed_db, sinr_loss_db, evm_impl_pct, interference_db, max_overflow_rate;
  std::vector<std::pair<std::string, int>> growth_int_bits;  ///< accumulating node, integer bits needed
};

struct key_sweep_record {
  scenario_ref scenario;
  std::uint64_t trials = 0;
  std::string key;
  std::vector<key_sweep_point_record> points;
};

// --- tune -------------------------------------------------------------------------------------

struct tune_node_record {
  std::string node;
  fixedpoint::format fmt;
  std::optional<fixedpoint::rounding_mode> rounding;  ///< absent from hand-written files only
  std::optional<fixedpoint::overflow_mode> overflow;
  double cost = 0.0;
  std::optional<metric> overflow_rate_bound;  ///< on the fresh trials (absent from older files)
};

/// The four figures tune limits, as measured on one set of trials.
struct tune_figures_record {
  metric sinr_loss_db, evm_impl_pct, max_overflow_rate;
  /// RMS over trials of the transmit-power error; absent from files without that limit. Files
  /// written before it was named so call it abs_tx_power_error_db (read as this).
  std::optional<metric> rms_tx_power_error_db;
  /// With an uplink limit: the uplink's SINR loss (dB) and bit-error ratio (README "The uplink").
  std::optional<metric> uplink_sinr_loss_db, uplink_ber_ratio;
};

/// A tune's outcome at one operating corner.
struct corner_record {
  std::string name;
  tune_figures_record verification;
  metric proven_overflow_bound;
  std::uint64_t verification_trials = 0;
  bool meets_limits = false;
};

/// One unit variant a tune compared (analysis::variant_outcome).
struct variant_record {
  std::string label;
  double cost = 0.0;
  bool meets_limits = false;
  bool chosen = false;
};

struct tune_record {
  scenario_ref scenario;
  std::string cost_model;  ///< "bits" or "area"
  double cost = 0.0;
  double max_sinr_loss_db = 0.0, max_evm_pct = 0.0, max_overflow_rate = 0.0;
  std::optional<double> max_rms_tx_power_error_db;                      ///< older name: max_tx_power_error_db
  std::optional<double> max_uplink_sinr_loss_db, max_uplink_ber_ratio;  ///< with an uplink limit
  std::vector<tune_node_record> nodes;                                  ///< datapath order
  /// On the search trials (absent from hand-written files only).
  std::optional<tune_figures_record> search;
  std::optional<std::uint64_t> search_trials, evaluations;
  tune_figures_record verification;  ///< on fresh trials
  std::optional<std::uint64_t> verification_trials;
  std::optional<std::vector<std::uint64_t>> verification_trial_indices;
  std::optional<std::uint64_t> range_trials;
  /// The SINR-loss limit's percentile (absent: the mean over users).
  std::optional<double> sinr_loss_percentile;
  /// On the fresh trials: the largest 95 % upper bound of a node's overflow rate and its node
  /// (what a PASS proves), and the distributions. Absent from older files.
  std::optional<metric> proven_overflow_bound;
  std::string weakest_node;
  std::optional<distribution_record> verification_distribution;
  /// Operating corners (absent for a plain tune); per node the corner that set its integer bits
  /// and the one its last fraction bit is for (tune_node_record order).
  std::vector<corner_record> corners;
  std::vector<std::string> int_bits_corner, frac_bits_corner;
  /// The divide and root unit variants compared (absent when the scenario lists none).
  std::vector<variant_record> variants;
  /// The re-verification met every limit (the file says so twice: verification.meets_limits and
  /// the top-level "met"; the second is written from this and ignored when read).
  bool meets_limits = false;
  std::string note;
  // The margins (limit - value on the fresh trials) are not stored: the file's "margins" are
  // written from these fields and ignored when read.

  /// Whether the figures on the search trials meet every limit; nullopt without them.
  std::optional<bool> search_meets_limits() const;
};

// --- any of them ------------------------------------------------------------------------------

/// The kinds of results files.
enum class report_kind { run, range, sweep, tune, key_sweep };
std::string_view to_string(report_kind kind);

using results_record = std::variant<run_record, range_record, sweep_record, tune_record, key_sweep_record>;

/// A results record as the file it came from (or will go to) names it.
struct named_record {
  std::string file;
  results_record record;
};

report_kind kind_of(const results_record& r);

/// The position of a node name in datapath order (README "How it computes"); names this program
/// does not know (a user's own stages) come after every known one. Readers list nodes so.
std::size_t node_rank(std::string_view name);

/// From the analyses' results (node ids become names, non-finite figures nullopt).
run_record make_record(const analysis::run_results& r);
range_record make_record(const analysis::range_results& r);
sweep_record make_record(const analysis::sweep_results& r);
key_sweep_record make_record(const analysis::key_sweep_results& r);
tune_record make_record(const golden::scenario& scen, const analysis::tune_results& r);

/// The file's JSON: "kind", "schema" and every field (the newest key names).
nlohmann::json to_json(const run_record& r);
nlohmann::json to_json(const range_record& r);
nlohmann::json to_json(const sweep_record& r);
nlohmann::json to_json(const key_sweep_record& r);
nlohmann::json to_json(const tune_record& r);
nlohmann::json to_json(const results_record& r);

/// The kind of a parsed results file: its "kind"; a file without "kind" that has "summary" and
/// "users" is a run (older `fxmimo run --json` output). Checks "schema". Throws io::json_error
/// naming the file otherwise.
report_kind kind_of(const io::checked_json& doc);

/// Reads a record of a parsed file; every error names `doc.file()` and the key path.
run_record run_from_json(const io::checked_json& doc);
range_record range_from_json(const io::checked_json& doc);
sweep_record sweep_from_json(const io::checked_json& doc);
key_sweep_record key_sweep_from_json(const io::checked_json& doc);
tune_record tune_from_json(const io::checked_json& doc);
/// Any kind, by kind_of(doc).
results_record record_from_json(const io::checked_json& doc);

/// JUnit XML suite of a tune: one test case per limit, failing when the value on the fresh trials
/// exceeds it (message: value, limit and margin); the chosen formats and the cost as properties.
io::junit_suite to_junit(const tune_record& r);

/// Reads and checks one results file (io::json_error "PATH: ..." on any fault).
named_record read_results_file(const std::filesystem::path& path);

}  // namespace fxmimo::report
