#pragma once
// The options of a shard (`run --shard I/N -o PART`, `sweep --shard I/N -o PART`) and the
// writing of its partial results file; `fxmimo merge` (cmd_merge.cpp) reads the parts.

#include <CLI/CLI.hpp>
#include <optional>
#include <string>

#include "fxmimo/analysis/shard.hpp"
#include "fxmimo/report/parts.hpp"
#include "scenario_input.hpp"

namespace fxmimo::cli {

struct shard_options {
  std::string shard;     ///< "I/N", or "" for the whole computation
  std::string out_path;  ///< -o: the partial results file
};

/// Adds --shard and -o to run or sweep.
void add_shard_options(CLI::App* cmd, shard_options& opt);

/// The shard of --shard, nullopt without it; a usage_error for a malformed I/N, for --shard
/// without -o, for -o without --shard, and for --shard beside an output that merge writes
/// (`merged_outputs`: the command's --json and --csv, "" where not given).
std::optional<analysis::shard> shard_of(const shard_options& opt, std::initializer_list<std::string> merged_outputs);

/// The origin of a part of `command` (run or sweep) on the scenario `in`, `trials` trials each.
report::part_origin part_origin_of(const std::string& command, const scenario_input& in, int trials);

/// Writes the part to -o (atomically) and prints one line naming the shard, its share and the file.
void write_part(const shard_options& opt, const report::part_record& part);

}  // namespace fxmimo::cli
