#pragma once
/// Partial results: what `run --shard I/N` and `sweep --shard I/N` write and `fxmimo merge` reads
/// (README "Sharding a run or a sweep", file format there). A part holds its origin (the command,
/// the scenario file's text and SHA-256, the options that decide the results), its shard, and its
/// share of the computation as it stands before any reduction across shards: per-trial figures of
/// a run (reduced by merge in trial order, as one process does), whole points of a sweep (a point
/// is computed in one shard). Every double is written exactly (io/exact_double.hpp), so a merge
/// reduces the same bits as an unsharded run.

#include <cstdint>
#include <filesystem>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/shard.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/io/checked_json.hpp"

namespace fxmimo::report {

/// Version of the partial results files ("schema"); a reader refuses any other.
inline constexpr int parts_schema = 1;

/// What decides a part's results besides its shard: all parts of one computation have the same
/// origin. Options that do not change results (--threads, --cache-budget, --max-memory,
/// --max-work, the output paths, --shard) are not part of it.
struct part_origin {
  std::string program;          ///< "fxmimo VERSION" that wrote it: versions may compute other bits
  std::string command;          ///< "run" or "sweep"
  std::string scenario_source;  ///< the scenario path as given (a run's results name it)
  std::string scenario_sha256;  ///< of scenario_text
  std::string scenario_text;    ///< the scenario file's bytes: merge parses them again
  std::uint64_t trials = 0;     ///< trials of the run, or per sweep point (the count used)
  /// A sweep over widths: the nodes in sweep order, the bits lo..hi, the axis ("frac", "word",
  /// "int"). Empty nodes: not a width sweep.
  std::vector<std::string> nodes;
  int bits_lo = 0, bits_hi = 0;
  std::string vary;
  /// A sweep over a scenario key: the key and its values (TOML). Empty key: not a key sweep.
  std::string key;
  std::vector<std::string> values;
};

/// The origin as the file writes it (without the scenario text): what merge compares.
nlohmann::json origin_json(const part_origin& o);

struct part_record {
  part_origin origin;
  analysis::shard shard;
  std::uint64_t total = 0;  ///< trials (run) or points (sweep) of the whole computation
  std::uint64_t first = 0;  ///< the index of this part's first trial or point
  /// A run's trials first .. first + count - 1, each as evaluate_trials gives it (a node's id,
  /// figures and counters; its setting, spec and is_default, is the scenario's and is not
  /// stored: the reader leaves it default).
  std::vector<analysis::trial_summary> trials;
  /// The nodes each trial holds, in this order (a run writes datapath::active_nodes); read from
  /// the first trial, and the same in every trial.
  std::vector<datapath::node_id> trial_nodes;
  std::vector<analysis::sweep_point> points;          ///< a sweep over widths
  std::vector<analysis::key_sweep_point> key_points;  ///< a sweep over a key
  /// The trials or points this part holds.
  [[nodiscard]] std::size_t count() const;
};

nlohmann::json to_json(const part_record& p);
/// Reads a part; every error names doc.file() and the key path (io::json_error). Checks the
/// schema, the shard (1 <= index <= count), that the part holds exactly the share of `total`
/// its shard has, and that each trial is the one its position says.
part_record part_from_json(const io::checked_json& doc);
/// Reads and checks one part file (io::json_error "PATH: ...").
part_record read_part_file(const std::filesystem::path& path);

}  // namespace fxmimo::report
