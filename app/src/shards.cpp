#include "shards.hpp"

#include <fmt/core.h>

#include <charconv>

#include "commands.hpp"
#include "fxmimo/vectors/sha256.hpp"
#include "output_files.hpp"

namespace fxmimo::cli {

namespace {

/// Most shards a computation may have: far beyond a batch system's array size.
constexpr std::size_t max_shards = 1000000;

std::optional<std::size_t> whole_number(std::string_view text) {
  std::size_t v = 0;
  const auto [ptr, ec] = std::from_chars(text.data(), text.data() + text.size(), v);
  if (text.empty() || ec != std::errc{} || ptr != text.data() + text.size()) return std::nullopt;
  return v;
}

}  // namespace

void add_shard_options(CLI::App* cmd, shard_options& opt) {
  cmd->add_option("--shard", opt.shard,
                  "Compute share I of N (I = 1..N) and write it as a partial results file to -o; fxmimo merge "
                  "turns the N parts into the results");
  cmd->add_option("-o,--out", opt.out_path, "With --shard: the partial results file (JSON)");
}

std::optional<analysis::shard> shard_of(const shard_options& opt, std::initializer_list<std::string> merged_outputs) {
  if (opt.shard.empty()) {
    if (!opt.out_path.empty())
      throw usage_error("-o names a shard's partial results file and needs --shard I/N; the results go to --json");
    return std::nullopt;
  }
  const auto slash = opt.shard.find('/');
  const std::optional<std::size_t> index =
      slash == std::string::npos ? std::nullopt : whole_number(std::string_view(opt.shard).substr(0, slash));
  const std::optional<std::size_t> count =
      slash == std::string::npos ? std::nullopt : whole_number(std::string_view(opt.shard).substr(slash + 1));
  if (!index || !count || *count < 1 || *count > max_shards || *index < 1 || *index > *count) {
    throw usage_error(fmt::format(
        "bad --shard '{}': expected I/N with shards numbered 1 to N (N at most {}), e.g. --shard 1/4 ... --shard 4/4",
        opt.shard, max_shards));
  }
  if (opt.out_path.empty())
    throw usage_error(
        fmt::format("--shard {} needs -o PART.json, the partial results file that fxmimo merge reads", opt.shard));
  for (const std::string& path : merged_outputs) {
    if (!path.empty())
      throw usage_error(fmt::format(
          "--shard writes a partial results file (-o); '{}' is written by fxmimo merge from the parts", path));
  }
  return analysis::shard{*index, *count};
}

report::part_origin part_origin_of(const std::string& command, const scenario_input& in, int trials) {
  report::part_origin o;
  o.program = "fxmimo " FXMIMO_VERSION;
  o.command = command;
  o.scenario_source = in.doc.source_name;
  o.scenario_text = in.text();
  o.scenario_sha256 = vectors::sha256_hex(o.scenario_text);
  o.trials = static_cast<std::uint64_t>(trials);
  return o;
}

void write_part(const shard_options& opt, const report::part_record& part) {
  write_file_atomically(opt.out_path, report::to_json(part).dump(1) + "\n");
  const bool run = part.origin.command == "run";
  const std::string unit = run ? "trial" : "point";
  const auto units = [&](std::uint64_t n) { return fmt::format("{} {}{}", n, unit, n == 1 ? "" : "s"); };
  const std::uint64_t last = part.first + part.count() - 1;
  std::string share;
  if (part.count() == 0) {
    share = fmt::format("none of the {} (more shards than {}s)", units(part.total), unit);
  } else if (run) {  // trials by their index, as --trials and vectors --trials count them
    share = part.count() == 1 ? fmt::format("trial {} of 0 to {}", part.first, part.total - 1)
                              : fmt::format("trials {} to {} of 0 to {}", part.first, last, part.total - 1);
  } else {  // points by their row in the sweep's table, from 1
    share = part.count() == 1 ? fmt::format("point {} of {}", part.first + 1, part.total)
                              : fmt::format("points {} to {} of {}", part.first + 1, last + 1, part.total);
  }
  fmt::print("{}: shard {}/{}: {}; wrote {}\n", part.origin.command, part.shard.index, part.shard.count, share,
             opt.out_path);
}

}  // namespace fxmimo::cli
