// The bad-input catalogue: every command given malformed files, out-of-range values,
// inconsistent sets, wrong digests, truncated files, x/z dumps, missing paths, directories where
// files belong, unwritable outputs, empty and non-UTF-8 files, huge numbers. Each case must exit 2
// with exactly one line on stderr naming the file (and line and key) or the value at fault, and
// leave the working directory exactly as it was: nothing created, nothing changed (common
// practice for tools run unattended in regressions). The README lists the catalogue.
#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <string>

#include "cli_support.hpp"

namespace fs = std::filesystem;
using fxmimo::test::read_text;

namespace {

const fs::path source = FXMIMO_SOURCE_DIR;

struct bad_input {
  const char* name;
  const char* args;      ///< the command line after "fxmimo", run in the case's directory
  const char* expected;  ///< part of the one stderr line (file, line, key or value at fault)
  const char* stdin_text = "";
};

void PrintTo(const bad_input& c, std::ostream* os) { *os << c.name; }

void write(const fs::path& p, const std::string& text) { std::ofstream(p, std::ios::binary) << text; }

std::string replaced(std::string text, const std::string& from, const std::string& to) {
  const std::size_t at = text.find(from);
  EXPECT_NE(at, std::string::npos) << from;
  if (at != std::string::npos) text.replace(at, from.size(), to);
  return text;
}

/// Partial results of good.toml (made once by the program, copied into each case): shards 1..3
/// of a 3-trial run, shard 2 of the same run with 4 trials, of 2 shards, and of another scenario.
const fs::path& made_parts() {
  static const fs::path dir = [] {
    const fs::path d = fxmimo::test::scratch_dir("bad_input_parts");
    const std::string good = read_text(source / "examples" / "dpi" / "kiosk-8.toml");
    write(d / "good.toml", good);
    write(d / "other.toml", replaced(good, "seed = 2718", "seed = 2719"));
    std::string script = "cd '" + d.string() + "'";
    const std::string exe = " && '" + std::string(FXMIMO_EXE) + "' run --trials ";
    for (int i = 1; i <= 3; ++i)
      script += exe + "3 -c good.toml --shard " + std::to_string(i) + "/3 -o run-" + std::to_string(i) + ".json";
    script += exe + "4 -c good.toml --shard 2/3 -o trials4-2.json";
    script += exe + "3 -c good.toml --shard 2/2 -o half-2.json";
    script += exe + "3 -c other.toml --shard 2/3 -o other-2.json";
    script += " >/dev/null && rm good.toml other.toml";
    EXPECT_EQ(std::system(script.c_str()), 0) << script;
    return d;
  }();
  return dir;
}

/// The inputs every case may use: a good scenario, vector sets, dumps, results files, partial
/// results, and broken copies of each.
void prepare(const fs::path& dir) {
  const std::string good = read_text(source / "examples" / "dpi" / "kiosk-8.toml");
  write(dir / "good.toml", good);
  for (const auto& e : fs::directory_iterator(made_parts())) fs::copy(e.path(), dir / e.path().filename());
  fs::copy(dir / "run-2.json", dir / "run-2-again.json");
  write(dir / "edited-2.json", replaced(read_text(dir / "run-2.json"), "seed = 2718", "seed = 2717"));
  fs::copy(source / "tests" / "fixtures" / "vec-hex", dir / "vec", fs::copy_options::recursive);
  fs::copy(source / "tests" / "fixtures" / "vec-npy", dir / "vecnpy", fs::copy_options::recursive);
  fs::copy(source / "tests" / "cli" / "readme_inputs" / "sim", dir / "sim", fs::copy_options::recursive);
  fs::copy(source / "tests" / "fixtures" / "run.json", dir / "run.json");
  fs::create_directories(dir / "adir");
  write(dir / "empty.toml", "");
  write(dir / "empty.json", "");
  write(dir / "zeta.toml", "\xCE\xB6");
  write(dir / "nonutf8.toml", "# caf\xFF\n" + good);
  write(dir / "syntax.toml", replaced(good, "seed = 2718", "seed = = 2718"));
  write(dir / "zero_antennas.toml", replaced(good, "antennas = 8", "antennas = 0"));
  // The data phase streams, so a long block needs little memory; 4096 antennas and 1024 users
  // (1.3 GiB a trial), 256 trials at once, need far more than any machine here has.
  write(dir / "huge.toml",
        replaced(replaced(replaced(good, "antennas = 8", "antennas = 4096"),
                          "users_per_cell = 3\nuser_gains_db = [0.0, 3.0, 6.0]", "users_per_cell = 1024"),
                 "length = 4", "length = 1024"));
  write(dir / "huge_seed.toml", replaced(good, "seed = 2718", "seed = 99999999999999999999"));
  write(dir / "unknown_key.toml", replaced(good, "seed = 2718", "seed = 2718\ncolour = 1"));
  write(dir / "bad_format.toml", replaced(good, "format = \"Q0.11\"", "format = \"Q0.x\""));
  write(dir / "bad_rounding.toml", replaced(good, "rounding = \"half_up\"", "rounding = \"nearest\""));
  write(dir / "wide_format.toml", replaced(good, "format = \"Q0.11\"", "format = \"Q100.100\""));
  write(dir / "string_trials.toml", replaced(good, "trials = 4", "trials = \"four\""));
  write(dir / "negative_snr_table.toml", replaced(good, "[data]", "data = 3\n[datax]"));
  write(dir / "block_float_no_top.toml", good + "\n[block_float.chan_est]\nblock = \"user\"\n");
  write(dir / "unit_alternative_twice.toml",
        good + "\n[units.norm]\nkind = \"exact\"\nalternatives = [{ kind = \"exact\" }]\n");
  write(dir / "uplink_zf_beside_mf.toml", good + "\n[uplink]\nsnr_db = 5.0\ncombiner = \"zf\"\n");
  write(dir / "uplink_mrc_own.toml", good + "\n[uplink]\nsnr_db = 5.0\ncombiner = \"mrc\"\ninverse = \"own\"\n");
  write(dir / "uplink_block_float.toml",
        good + "\n[uplink]\nsnr_db = 5.0\n[block_float.chan_est]\nblock = \"user\"\ntop = 2\n");
  write(dir / "ul_adc_table.toml", good + "\n[uplink]\nsnr_db = 5.0\n[nodes.ul_adc]\nformat = \"Q0.9\"\n");
  write(dir / "notaset/keep.txt", "");
  fs::create_directories(dir / "notaset");
  write(dir / "notaset" / "keep.txt", "a file of the user's");
  write(dir / "afile", "not a directory");
  fs::create_directories(dir / "nomanifest");
  fs::copy(dir / "vec" / "dac.out.re.hex", dir / "nomanifest" / "dac.out.re.hex");
  fs::copy(dir / "vec", dir / "badjson", fs::copy_options::recursive);
  write(dir / "badjson" / "manifest.json", "{oops");
  fs::copy(dir / "vec", dir / "badsha", fs::copy_options::recursive);
  std::string words = read_text(dir / "badsha" / "dac.out.re.hex");
  words[0] = words[0] == '0' ? '1' : '0';
  write(dir / "badsha" / "dac.out.re.hex", words);
  fs::copy(dir / "vec", dir / "newer", fs::copy_options::recursive);
  write(dir / "newer" / "manifest.json",
        replaced(read_text(dir / "newer" / "manifest.json"), "\"schema\": 1", "\"schema\": 99"));
  fs::copy(dir / "vec", dir / "badcount", fs::copy_options::recursive);
  write(dir / "badcount" / "manifest.json",
        replaced(read_text(dir / "badcount" / "manifest.json"), "\"word_count\": 1", "\"word_count\": 2"));
  fs::copy(dir / "vecnpy", dir / "truncnpy", fs::copy_options::recursive);
  write(dir / "truncnpy" / "dac.out.re.npy", read_text(dir / "truncnpy" / "dac.out.re.npy").substr(0, 100));
  const std::string re = read_text(dir / "sim" / "dac_re.hex");
  write(dir / "x.hex", "x" + re.substr(1));
  write(dir / "short.hex", re.substr(0, 4 * 5));
  write(dir / "long.hex", re + "000\n");
  write(dir / "g.hex", "g" + re.substr(1));
  write(dir / "prefixed.hex", "0x" + re);
  write(dir / "wide.hex", "f" + re);
  write(dir / "unknown_kind.json", "{\"kind\": \"spectrum\"}");
  write(dir / "missing_key.json", replaced(read_text(dir / "run.json"), "\"users\"", "\"people\""));
}

/// Every file under dir with its bytes: what "nothing created, nothing changed" compares.
std::map<std::string, std::string> snapshot(const fs::path& dir) {
  std::map<std::string, std::string> files;
  for (const auto& e : fs::recursive_directory_iterator(dir)) {
    const std::string name = fs::relative(e.path(), dir).string();
    files[name] = e.is_regular_file() ? read_text(e.path()) : std::string("<dir>");
  }
  return files;
}

class BadInput : public ::testing::TestWithParam<bad_input> {};

TEST_P(BadInput, ExitsTwoWithOneLineAndTouchesNothing) {
  const bad_input c = GetParam();
  const fs::path dir = fxmimo::test::scratch_dir(std::string("bad_") + c.name);
  prepare(dir);
  const auto before = snapshot(dir);
  const fs::path err = dir.parent_path() / (std::string(c.name) + ".err");
  const fs::path in = dir.parent_path() / (std::string(c.name) + ".in");
  write(in, c.stdin_text);
  const std::string command = "cd '" + dir.string() + "' && '" + std::string(FXMIMO_EXE) + "' " + c.args + " <'" +
                              in.string() + "' >/dev/null 2>'" + err.string() + "'";
  const int status = std::system(command.c_str());
  const int exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  const std::string message = read_text(err);
  EXPECT_EQ(exit_code, 2) << c.args << "\n" << message;
  EXPECT_EQ(std::count(message.begin(), message.end(), '\n'), 1) << "exactly one line: " << message;
  EXPECT_NE(message.find(c.expected), std::string::npos) << "expected '" << c.expected << "' in: " << message;
  EXPECT_EQ(message.find("internal error"), std::string::npos) << message;
  const auto after = snapshot(dir);
  for (const auto& [name, bytes] : after) {
    const auto it = before.find(name);
    EXPECT_TRUE(it != before.end()) << c.name << " created " << name;
    if (it != before.end()) {
      EXPECT_TRUE(it->second == bytes) << c.name << " changed " << name;
    }
  }
  EXPECT_EQ(after.size(), before.size()) << c.name << " removed a file";
}

const bad_input catalogue[] = {
    // Scenario files (run, range, sweep, tune, vectors share the reader).
    bad_input{"scenario_missing", "run -c missing.toml", "missing.toml: cannot open the scenario file"},
    bad_input{"scenario_is_a_directory", "run -c adir", "adir: is a directory"},
    bad_input{"scenario_empty", "run -c empty.toml", "empty.toml:1: array: missing required table"},
    bad_input{"scenario_non_ascii_outside_strings", "run -c zeta.toml", "zeta.toml:1: (syntax): byte 0xCE"},
    bad_input{"scenario_not_utf8", "range -c nonutf8.toml", "nonutf8.toml:1: (syntax)"},
    bad_input{"scenario_syntax", "sweep -c syntax.toml --node dac --bits 8:9", "syntax.toml:5: (syntax)"},
    bad_input{"scenario_out_of_range", "vectors -c zero_antennas.toml -o out", "zero_antennas.toml:9: array.antennas"},
    bad_input{"scenario_huge_number", "run -c huge_seed.toml", "huge_seed.toml:5: (syntax)"},
    bad_input{"scenario_unknown_key", "run -c unknown_key.toml", "unknown_key.toml:6: colour: unknown key"},
    bad_input{"scenario_bad_format", "run -c bad_format.toml", "nodes.dac.format: bad format 'Q0.x'"},
    bad_input{"scenario_bad_rounding", "run -c bad_rounding.toml", "nodes.dac.rounding"},
    bad_input{"scenario_format_too_wide", "run -c wide_format.toml", "nodes.dac.format"},
    bad_input{"scenario_wrong_type", "run -c string_trials.toml", "string_trials.toml:6: trials: expected an integer"},
    bad_input{"scenario_table_is_a_value", "run -c negative_snr_table.toml", "negative_snr_table.toml"},
    bad_input{"scenario_block_float_without_top", "run -c block_float_no_top.toml",
              "block_float.chan_est.top: missing required key"},
    bad_input{"scenario_unit_alternative_listed_twice",
              "tune -c unit_alternative_twice.toml --max-sinr-loss 0.1 "
              "--max-evm 2 -o t.toml",
              "units.norm.alternatives: exact is listed twice"},
    bad_input{"scenario_uplink_combiner_without_its_inverse", "run -c uplink_zf_beside_mf.toml",
              "uplink.combiner: combiner = \"zf\" reuses the downlink's inverse of H_hat^H H_hat: it needs "
              "precoder kind = \"zf\" (or inverse = \"own\""},
    bad_input{"scenario_uplink_mrc_with_its_own_inverse", "run -c uplink_mrc_own.toml",
              "uplink.inverse: inverse = \"own\" builds an uplink Gram inverse, which combiner = \"mrc\" does not use"},
    bad_input{"scenario_uplink_with_block_float", "run -c uplink_block_float.toml",
              "uplink.snr_db: the uplink does not carry block exponents yet"},
    bad_input{"scenario_table_for_ul_adc", "run -c ul_adc_table.toml",
              "nodes.ul_adc: ul_adc is the adc converter at another time: set [nodes.adc]"},
    // Resource guards: memory and work estimated before the first trial.
    bad_input{"scenario_needs_more_memory_than_available", "run -c huge.toml --trials 256 --threads 256",
              "huge.toml:13: cells.users_per_cell: the run needs about"},
    bad_input{"run_over_max_memory", "run -c good.toml --max-memory 1K",
              "good.toml:28: data.symbols: the run needs about"},
    bad_input{"vectors_over_max_memory", "vectors -c good.toml -o out --trials 0-3 --max-memory 16K",
              "for the words of 4 trials), more than the 16 KiB that --max-memory allows"},
    bad_input{"max_memory_not_a_size", "range -c good.toml --max-memory lots", "--max-memory 'lots'"},
    bad_input{"cache_budget_not_a_size", "sweep -c good.toml --node dac --bits 8:9 --cache-budget lots",
              "--cache-budget 'lots': expected a size"},
    bad_input{"sweep_over_max_work", "sweep -c good.toml --node all --bits 4:20 --max-work 1e5",
              "good.toml:28: data.symbols: the command asks for about"},
    bad_input{"tune_over_max_work", "tune -c good.toml --max-evm 1 -o t.toml --max-work 100", "than --max-work 100"},
    // Options.
    bad_input{"run_zero_trials", "run -c good.toml --trials 0", "--trials: Value 0 not in range 1"},
    bad_input{"run_json_unwritable", "run -c good.toml --trials 1 --json nodir/x.json", "nodir/x.json: cannot write"},
    bad_input{"range_probability_out_of_range", "range -c good.toml --overflow-prob 2", "--overflow-prob"},
    bad_input{"range_scenario_into_a_directory", "range -c good.toml --trials 1 --write-scenario adir",
              "adir: cannot write"},
    bad_input{"sweep_unknown_node", "sweep -c good.toml --node nosuch --bits 3:5", "unknown node 'nosuch'"},
    bad_input{"sweep_reversed_bits", "sweep -c good.toml --node dac --bits 9:3", "bad --bits '9:3'"},
    bad_input{"sweep_bits_not_numbers", "sweep -c good.toml --node dac --bits abc", "bad --bits 'abc'"},
    bad_input{"sweep_bad_vary", "sweep -c good.toml --node dac --bits 3:5 --vary bogus", "bad --vary 'bogus'"},
    bad_input{"tune_no_evm_limit", "tune -c good.toml -o t.toml", "give --max-evm"},
    bad_input{"tune_bad_cost", "tune -c good.toml --max-evm 1 --cost bogus -o t.toml", "bad --cost 'bogus'"},
    bad_input{"tune_bad_modulation", "tune -c good.toml --modulation bogus -o t.toml", "bad --modulation 'bogus'"},
    bad_input{"tune_bad_sinr_loss_at", "tune -c good.toml --max-evm 1 --sinr-loss-at p100 -o t.toml",
              "bad --sinr-loss-at 'p100'"},
    bad_input{"tune_corner_without_value", "tune -c good.toml --max-evm 1 --corner data.snr_db -o t.toml",
              "--corner: bad override 'data.snr_db'"},
    bad_input{"tune_corner_not_toml", "tune -c good.toml --max-evm 1 --corner data.snr_db=ten -o t.toml",
              "override data.snr_db=ten"},
    bad_input{"sweep_key_without_values", "sweep -c good.toml --key array.antennas", "--key needs --values"},
    bad_input{"sweep_neither_width_nor_key", "sweep -c good.toml", "give --node NAMES and --bits A:B"},
    bad_input{"quant_bad_format", "quant -f Q1.x 0.5", "bad format 'Q1.x'"},
    bad_input{"quant_bad_number", "quant -f Q1.6 1.2.3", "bad number '1.2.3'"},
    bad_input{"quant_word_too_wide", "quant -f Q1.6 0x1ff", "bad word '0x1ff'"},
    bad_input{"quant_unknown_rounding", "quant -f Q1.6 -r nearest 0.5", "bad rounding mode 'nearest'"},
    bad_input{"quant_bad_stdin_line", "quant -f Q1.6", "stdin line 2: bad number 'abc'", "0.5\nabc\n"},
    bad_input{"unknown_option", "run -c good.toml --colour", "--colour"},
    bad_input{"demo_threads_not_a_number", "demo --threads abc", "--threads"},
    // Vector sets written.
    bad_input{"vectors_unknown_node", "vectors -c good.toml -o out --nodes nosuch", "unknown node 'nosuch'"},
    bad_input{"vectors_trial_out_of_range", "vectors -c good.toml -o out --trials 99", "trial 99 is out of range"},
    bad_input{"vectors_bad_form", "vectors -c good.toml -o out --form bogus", "--form 'bogus'"},
    bad_input{"vectors_into_a_foreign_directory", "vectors -c good.toml -o notaset --nodes dac --trials 0",
              "notaset is neither empty nor a vector set"},
    bad_input{"vectors_into_a_file", "vectors -c good.toml -o afile --nodes dac --trials 0", "afile"},
    // Vector sets and dumps read.
    bad_input{"check_no_manifest", "check nomanifest --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex",
              "nomanifest is not a complete vector set"},
    bad_input{"check_manifest_not_json", "check badjson --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex",
              "badjson/manifest.json: not valid JSON"},
    bad_input{"check_wrong_digest", "check badsha --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex",
              "badsha/dac.out.re.hex: SHA-256 differs"},
    bad_input{"check_newer_manifest", "check newer --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex",
              "schema 99 is not supported"},
    bad_input{"check_word_count_beside_dims", "check badcount --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex",
              "word_count"},
    bad_input{"check_truncated_npy", "check truncnpy --node dac --dump sim/dac_re.hex --dump sim/dac_im.hex",
              "truncnpy/dac.out.re.npy"},
    bad_input{"check_dump_with_x", "check vec --node dac --dump x.hex --dump sim/dac_im.hex", "x.hex:1:"},
    bad_input{"check_dump_too_short", "check vec --node dac --dump short.hex --dump sim/dac_im.hex", "short.hex:6:"},
    bad_input{"check_dump_too_long", "check vec --node dac --dump long.hex --dump sim/dac_im.hex", "long.hex:"},
    bad_input{"check_dump_not_hex", "check vec --node dac --dump g.hex --dump sim/dac_im.hex", "g.hex:1:"},
    bad_input{"check_dump_with_prefix", "check vec --node dac --dump prefixed.hex --dump sim/dac_im.hex",
              "prefixed.hex:1:"},
    bad_input{"check_dump_too_wide", "check vec --node dac --dump wide.hex --dump sim/dac_im.hex", "wide.hex:1:"},
    bad_input{"check_dump_is_a_directory", "check vec --node dac --dump adir --dump sim/dac_im.hex",
              "adir: is a directory"},
    bad_input{"check_dump_missing", "check vec --node dac --dump nothere.hex --dump sim/dac_im.hex", "nothere.hex"},
    bad_input{"check_unknown_node", "check vec --node nosuch --dump sim/dac_re.hex", "node 'nosuch'"},
    bad_input{"check_one_dump_for_a_complex_node", "check vec --node dac --dump sim/dac_re.hex", "dac"},
    bad_input{"diff_missing_set", "diff vec missingset", "missingset is not a complete vector set"},
    bad_input{"diff_newer_manifest", "diff vec newer", "newer/manifest.json"},
    // Results files.
    bad_input{"report_unknown_kind", "report unknown_kind.json -o r.html", "unknown_kind.json: unknown kind"},
    bad_input{"report_missing_key", "report missing_key.json -o r.html", "missing_key.json: users: missing"},
    bad_input{"report_empty_file", "report empty.json -o r.html", "empty.json: not valid JSON"},
    bad_input{"report_unwritable_output", "report run.json -o nodir/r.html", "nodir/r.html: cannot write"},
    bad_input{"report_directory_as_input", "report adir -o r.html", "adir: is a directory"},
    // Shards and their merge.
    bad_input{"shard_zero", "run -c good.toml --shard 0/3 -o p.json", "bad --shard '0/3': expected I/N"},
    bad_input{"shard_beyond_count", "sweep -c good.toml --node dac --bits 8:9 --shard 4/3 -o p.json",
              "bad --shard '4/3'"},
    bad_input{"shard_not_a_fraction", "run -c good.toml --shard 2 -o p.json", "bad --shard '2'"},
    bad_input{"shard_without_out", "run -c good.toml --shard 1/2", "--shard 1/2 needs -o PART.json"},
    bad_input{"shard_beside_json", "run -c good.toml --shard 1/2 -o p.json --json r.json",
              "'r.json' is written by fxmimo merge"},
    bad_input{"out_without_shard", "sweep -c good.toml --node dac --bits 8:9 -o p.json", "needs --shard I/N"},
    bad_input{"merge_missing_shard", "merge run-1.json run-3.json -o m.json",
              "shard 2/3 is missing (given: run-1.json, run-3.json)"},
    bad_input{"merge_duplicated_shard", "merge run-1.json run-2.json run-2-again.json run-3.json -o m.json",
              "run-2-again.json: shard 2/3 again (also run-2.json)"},
    bad_input{"merge_other_scenario", "merge run-1.json other-2.json run-3.json -o m.json",
              "other-2.json: not a part of the same computation as run-1.json: another scenario file (SHA-256"},
    bad_input{"merge_other_options", "merge run-1.json trials4-2.json run-3.json -o m.json",
              "trials4-2.json: not a part of the same computation as run-1.json: options.trials is 3 there, 4 here"},
    bad_input{"merge_other_shard_count", "merge run-1.json half-2.json run-3.json -o m.json",
              "half-2.json: shard 2/2, but run-1.json is shard 1/3"},
    bad_input{"merge_edited_part", "merge run-1.json edited-2.json run-3.json -o m.json",
              "edited-2.json: scenario.text does not have the SHA-256"},
    bad_input{"merge_not_a_part", "merge run.json -o m.json", "run.json: top level: not a partial results file"},
    bad_input{"merge_unwritable_output", "merge run-1.json run-2.json run-3.json -o nodir/m.json",
              "nodir/m.json: cannot write"}};

INSTANTIATE_TEST_SUITE_P(Catalogue, BadInput, ::testing::ValuesIn(catalogue),
                         [](const ::testing::TestParamInfo<bad_input>& param_info) {
                           return std::string(param_info.param.name);
                         });

TEST(BadInput, TheCatalogueHasAtLeastFortyDistinctCases) {
  // The README promises at least 40 (the issue that asked for the catalogue did too).
  std::set<std::string> names, args;
  for (const bad_input& c : catalogue) {
    names.insert(c.name);
    args.insert(c.args);
  }
  EXPECT_GE(std::size(catalogue), 40u);
  EXPECT_EQ(names.size(), std::size(catalogue)) << "names are distinct";
  EXPECT_EQ(args.size(), std::size(catalogue)) << "command lines are distinct";
  // README "Robustness" lists every case by name.
  const std::string readme = read_text(source / "README.md");
  for (const bad_input& c : catalogue) {
    EXPECT_NE(readme.find(std::string("`") + c.name + "`"), std::string::npos) << c.name << " missing from README";
  }
}

}  // namespace

namespace {

using fxmimo::test::run_fxmimo;

TEST(QuantInput, NegativeDecimalsAreValuesHoweverTheyAreWritten) {
  // "-.5" is a value as users type it, not an option; the words equal those of "-0.5" etc.
  const auto typed = run_fxmimo("quant -f Q1.6 --json -.5 -.25e1 -0.75 -1");
  const auto quoted = run_fxmimo("quant -f Q1.6 --json -- -0.5 -0.25e1 -0.75 -1");
  ASSERT_EQ(typed.exit_code, 0) << typed.err;
  ASSERT_EQ(quoted.exit_code, 0) << quoted.err;
  const auto words = [](const std::string& json_text) {
    std::vector<std::string> out;
    const nlohmann::json doc = nlohmann::json::parse(json_text);
    for (const auto& v : doc["values"]) out.push_back(v["word"]);
    return out;
  };
  EXPECT_EQ(words(typed.out), words(quoted.out));
  EXPECT_EQ(words(typed.out), (std::vector<std::string>{"-32", "-128", "-48", "-64"}));  // -2.5 saturates at -2
}

TEST(QuantInput, TheErrorOfAVeryLongDecimalIsComputedExactly) {
  // 0.1 followed by 400 zeros and a 1: in Q1.6 it is 6.4 LSB (plus 64e-402), so the word is 6 and
  // the error -0.4 LSB. Through one double the denominator 10^402 overflowed to inf: NaN.
  const std::string value = "0.1" + std::string(400, '0') + "1";
  const auto r = run_fxmimo("quant -f Q1.6 --json -- " + value);
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const auto v = nlohmann::json::parse(r.out)["values"][0];
  EXPECT_EQ(v["word"], "6");
  ASSERT_TRUE(v["error_lsb"].is_number()) << v;
  EXPECT_NEAR(v["error_lsb"].get<double>(), -0.4, 1e-12);
}

TEST(CommandLine, AParseErrorIsOneLine) {
  for (const char* args : {"", "run", "nosuch", "quant -f", "run -c x.toml --trials abc"}) {
    const auto r = run_fxmimo(args);
    EXPECT_EQ(r.exit_code, 2) << args;
    EXPECT_EQ(std::count(r.err.begin(), r.err.end(), '\n'), 1) << args << ": " << r.err;
  }
}

}  // namespace
