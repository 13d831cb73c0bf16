// `fxmimo vectors` end to end: a scenario file goes through the golden model and the bit-true
// datapath into a vector set; the example Verilog-2005 precoding block (examples/rtl/) reads the
// set's tx_acc stimulus with $readmemh (IEEE 1364-2005 §17.2.9), runs under Icarus Verilog and
// Verilator with its parameters taken from manifest.json, and dumps tx_acc and dac with $fwrite
// "%h" (§17.1.1.3); `fxmimo check` must find both dumps bit-exact. The RTL is the outside
// reference here: its arithmetic follows 1364-2005 signed-expression rules (§5.5.1, §5.4.1),
// not our C++. A FORCE_TRUNCATE build (floor rounding) must be caught at the first coordinates
// where a floor-rounding datapath differs, and must match that datapath bit for bit.
// Also: repeatability (SHA-256 per FIPS 180-4, cross-checked with coreutils sha256sum), the
// regression diff after a one-bit-narrower weights format, trial order, input ports, dimension
// names, and the one-line errors with exit code 2.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <map>
#include <nlohmann/json.hpp>
#include <regex>
#include <sstream>

#include "fxmimo/vectors/vector_set.hpp"
#include "test_support.hpp"

#ifndef FXMIMO_EXE
#error "FXMIMO_EXE (path of the fxmimo program) must be defined by tests/CMakeLists.txt"
#endif

namespace fxmimo::vectors {
namespace {

namespace fs = std::filesystem;
using testing::quote;
using testing::run_command;
using testing::scratch_dir;
using testing::simulator;

/// Node formats of the test scenario that the flow varies.
struct scenario_knobs {
  std::string weights_format = "Q1.10";  // 12 bits
  std::string tx_acc_rounding = "half_even";
  std::string dac_rounding = "half_up";
};

/// A scenario of our own invention: one cell, 4 antennas, 3 users, ZF with an LDL^H inverter,
/// 16-QAM, 8 symbols. The DAC back-off is only 2 dB, so per-antenna peaks pass full scale: the
/// tx_acc accumulator (Q0.9, range [-1, 1)) saturates on many words. Upstream nodes keep the
/// wide default format.
std::string scenario_text(const scenario_knobs& k = {}) {
  return fmt::format(R"(# Test scenario: a 4-antenna, 3-user cell whose transmit chain is narrow enough to saturate.
name = "bench-4x3-sat"
seed = 90517
trials = 4

[array]
antennas = 4

[cells]
count = 1
users_per_cell = 3
user_gains_db = [0.0, 4.0, 8.0]

[channel]
model = "rayleigh"

[pilots]
length = 4
sequence = "walsh"
snr_db = 15.0

[estimator]
kind = "ls"

[precoder]
kind = "zf"
inversion = "ldl"

[data]
modulation = "16qam"
symbols = 8
snr_db = 20.0

[frontend]
agc_backoff_db = 12.0
dac_backoff_db = 2.0

[nodes.weights]
format = "{}"
rounding = "half_even"
overflow = "saturate"

[nodes.symbols]
format = "Q1.8"
rounding = "half_even"
overflow = "saturate"

[nodes.tx_acc]
format = "Q0.9"
rounding = "{}"
overflow = "saturate"

[nodes.dac]
format = "Q0.7"
rounding = "{}"
overflow = "saturate_symmetric"
)",
                     k.weights_format, k.tx_acc_rounding, k.dac_rounding);
}

fs::path write_scenario(const fs::path& dir, const std::string& name, const scenario_knobs& k = {}) {
  const fs::path file = dir / name;
  testing::spit(file, scenario_text(k));
  return file;
}

testing::command_result fxmimo(const std::string& args, const fs::path& log) {
  return run_command(quote(FXMIMO_EXE) + " " + args, log);
}

/// Runs `fxmimo vectors` and fails the test unless it exits 0.
void make_set(const fs::path& scenario, const fs::path& out, const std::string& extra, const fs::path& log) {
  const auto r = fxmimo(fmt::format("vectors -c {} -o {} {}", quote(scenario), quote(out), extra), log);
  ASSERT_EQ(r.exit_code, 0) << r.output;
}

nlohmann::json read_manifest(const fs::path& dir) {
  return nlohmann::json::parse(testing::slurp(dir / "manifest.json"));
}

/// The first manifest entry of a record (node, direction, port), straight from the JSON.
const nlohmann::json& manifest_entry(const nlohmann::json& man, const std::string& node, const std::string& direction,
                                     const std::string& port) {
  for (const auto& f : man.at("files")) {
    if (f.at("node") == node && f.at("direction") == direction && f.at("port") == port) return f;
  }
  throw std::runtime_error("manifest has no file for " + node + "/" + direction + "/" + port);
}

std::size_t dim_size(const nlohmann::json& entry, const std::string& name) {
  for (const auto& d : entry.at("dims")) {
    if (d.at("name") == name) return d.at("size").get<std::size_t>();
  }
  throw std::runtime_error("no dimension " + name + " in " + entry.at("file").get<std::string>());
}

/// RTL codes of the manifest's mode names.
int rtl_rounding_code(const nlohmann::json& name) {
  return testing::rtl_code(*fp::parse_rounding_mode(name.get<std::string>()));
}
int rtl_overflow_code(const nlohmann::json& name) {
  return testing::rtl_code(*fp::parse_overflow_mode(name.get<std::string>()));
}

/// Testbench parameters (tb_precode_mac.v) from a set holding tx_acc and dac of one trial.
std::vector<std::pair<std::string, long long>> tb_parameters(const nlohmann::json& man) {
  const auto& w = manifest_entry(man, "tx_acc", "in", "weights");
  const auto& s = manifest_entry(man, "tx_acc", "in", "symbols");
  const auto& a = manifest_entry(man, "tx_acc", "out", "tx_acc");
  const auto& d = manifest_entry(man, "dac", "out", "dac");
  for (const auto* e : {&w, &s, &a, &d}) {
    if (!e->at("signed").get<bool>()) throw std::runtime_error("the example RTL takes signed formats only");
    if (dim_size(*e, "trial") != 1) throw std::runtime_error("the testbench streams one trial");
  }
  auto ll = [](const nlohmann::json& v) { return v.get<long long>(); };
  return {{"M", static_cast<long long>(dim_size(a, "antenna"))},
          {"K", static_cast<long long>(dim_size(w, "user"))},
          {"N", static_cast<long long>(dim_size(a, "symbol"))},
          {"WW", ll(w.at("word_bits"))},
          {"WF", ll(w.at("frac_bits"))},
          {"SW", ll(s.at("word_bits"))},
          {"SF", ll(s.at("frac_bits"))},
          {"AW", ll(a.at("word_bits"))},
          {"AF", ll(a.at("frac_bits"))},
          {"DW", ll(d.at("word_bits"))},
          {"DF", ll(d.at("frac_bits"))},
          {"ACC_RND", rtl_rounding_code(a.at("rounding"))},
          {"ACC_OVF", rtl_overflow_code(a.at("overflow"))},
          {"DAC_RND", rtl_rounding_code(d.at("rounding"))},
          {"DAC_OVF", rtl_overflow_code(d.at("overflow"))}};
}

/// Compiles and runs the testbench with the parameters the manifest gives.
void simulate(simulator sim, const nlohmann::json& man, bool force_truncate, const fs::path& work,
              const fs::path& vec_dir, const fs::path& dump_dir) {
  testing::run_testbench(sim, tb_parameters(man), force_truncate, work / (force_truncate ? "build_trunc" : "build"),
                         vec_dir, dump_dir);
}

testing::command_result check_dumps(const fs::path& vec_dir, const std::string& node, const fs::path& dump_dir,
                                    const fs::path& log, const std::string& extra = {}) {
  return fxmimo(fmt::format("check {} --node {} --dump {} --dump {} {}", quote(vec_dir), node,
                            quote(dump_dir / (node + "_re.hex")), quote(dump_dir / (node + "_im.hex")), extra),
                log);
}

/// Exact tx_acc sums from the set's stimulus words, in LSBs of the product (WF + SF fraction
/// bits), independent of any accumulator: the test's evidence that the scenario saturates.
bool some_exact_sum_exceeds_tx_acc(const vector_set& set) {
  const node_words& w = *set.find("tx_acc", "in", "weights");
  const node_words& s = *set.find("tx_acc", "in", "symbols");
  const node_words& a = *set.find("tx_acc", "out");
  const std::size_t num_ant = w.dim_sizes[1], num_user = w.dim_sizes[2], num_sym = s.dim_sizes[2];
  const int shift = w.spec.fmt.frac_bits + s.spec.fmt.frac_bits - a.spec.fmt.frac_bits;
  if (shift < 0) throw std::runtime_error("tx_acc has more fraction bits than the product");
  // tx_acc spans [-2^(AW-1), 2^(AW-1) - 1] of its LSBs, [-limit, limit - 2^shift] in product
  // LSBs: a sum >= limit or < -limit cannot be held, whatever the rounding.
  const std::int64_t limit = std::int64_t{1} << (a.spec.fmt.word_bits - 1 + shift);
  for (std::size_t i_ant = 0; i_ant < num_ant; ++i_ant) {
    for (std::size_t i_sym = 0; i_sym < num_sym; ++i_sym) {
      std::int64_t re = 0;
      std::int64_t im = 0;
      for (std::size_t i_user = 0; i_user < num_user; ++i_user) {
        const std::size_t iw = i_ant * num_user + i_user, is = i_user * num_sym + i_sym;
        re += w.re[iw] * s.re[is] - w.im[iw] * s.im[is];
        im += w.re[iw] * s.im[is] + w.im[iw] * s.re[is];
      }
      if (re >= limit || re < -limit || im >= limit || im < -limit) return true;
    }
  }
  return false;
}

/// Every (flat index, part) where two complex records differ, in report order.
std::vector<std::pair<std::size_t, std::string>> differences(const node_words& a, const node_words& b) {
  std::vector<std::pair<std::size_t, std::string>> out;
  for (std::size_t i = 0; i < a.re.size() && i < b.re.size(); ++i) {
    if (a.re[i] != b.re[i]) out.emplace_back(i, "re");
    if (a.im[i] != b.im[i]) out.emplace_back(i, "im");
  }
  return out;
}

/// The rows "FLAT PART TRIAL ANTENNA SYMBOL ..." of a check report's list of failing words,
/// each as "FLAT PART (trial=T, antenna=A, symbol=S)".
std::vector<std::string> reported_rows(const std::string& output) {
  static const std::regex row(R"(^\s+(\d+)\s+(re|im)\s+(\d+)\s+(\d+)\s+(\d+)\s+\d+'h)");
  std::vector<std::string> rows;
  std::istringstream in(output);
  std::string line;
  std::smatch m;
  while (std::getline(in, line)) {
    if (std::regex_search(line, m, row)) {
      rows.push_back(fmt::format("{} {} (trial={}, antenna={}, symbol={})", m[1].str(), m[2].str(), m[3].str(),
                                 m[4].str(), m[5].str()));
    }
  }
  return rows;
}

void run_rtl_flow(simulator sim) {
  const fs::path work = scratch_dir();
  const fs::path scen = write_scenario(work, "bench.toml");
  const fs::path vec = work / "vec";
  make_set(scen, vec, "--nodes tx_acc,dac --trials 0", work / "vectors.log");
  const nlohmann::json man = read_manifest(vec);
  const vector_set set = read_vector_set(vec);
  ASSERT_TRUE(some_exact_sum_exceeds_tx_acc(set)) << "the scenario no longer drives tx_acc past its range";

  // 1. The RTL as designed, parameters from the manifest: bit-exact on both nodes.
  simulate(sim, man, false, work, vec, work / "dump");
  for (const std::string node : {"tx_acc", "dac"}) {
    const auto r = check_dumps(vec, node, work / "dump", work / ("check_" + node + ".log"));
    EXPECT_EQ(r.exit_code, 0) << node << "\n" << r.output;
    EXPECT_NE(r.output.find("PASS"), std::string::npos) << r.output;
  }

  // 2. The same scenario with floor rounding at tx_acc and dac predicts where the truncating RTL
  //    differs: the stimulus is upstream of both and stays the same.
  scenario_knobs floor_knobs;
  floor_knobs.tx_acc_rounding = "floor";
  floor_knobs.dac_rounding = "floor";
  const fs::path vec_floor = work / "vec_floor";
  make_set(write_scenario(work, "bench_floor.toml", floor_knobs), vec_floor, "--nodes tx_acc,dac --trials 0",
           work / "vectors_floor.log");
  const vector_set set_floor = read_vector_set(vec_floor);
  ASSERT_EQ(set_floor.find("tx_acc", "in", "weights")->re, set.find("tx_acc", "in", "weights")->re);
  const node_words& expected = *set.find("tx_acc", "out");
  const auto diffs = differences(expected, *set_floor.find("tx_acc", "out"));
  ASSERT_FALSE(diffs.empty()) << "floor and half_even agree on every tx_acc word: no negative test";

  simulate(sim, man, true, work, vec, work / "dump_trunc");
  const auto bad = check_dumps(vec, "tx_acc", work / "dump_trunc", work / "check_trunc.log", "--max-report 1000");
  EXPECT_EQ(bad.exit_code, 1) << bad.output;
  const auto coords = expected.coordinates(diffs.front().first);
  const std::string where = fmt::format("first mismatch: flat index {} (trial={}, antenna={}, symbol={}), part {}",
                                        diffs.front().first, coords[0], coords[1], coords[2], diffs.front().second);
  EXPECT_NE(bad.output.find("tx_acc/out: MISMATCH"), std::string::npos) << bad.output;
  EXPECT_NE(bad.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << bad.output;
  EXPECT_NE(bad.output.find(fmt::format("{} of {} words differ", diffs.size(), 2 * expected.re.size())),
            std::string::npos)
      << bad.output;
  // Every failing word, with its coordinates, is the one the floor datapath predicts.
  std::vector<std::string> predicted;
  for (const auto& [flat, part] : diffs) {
    const auto c = expected.coordinates(flat);
    predicted.push_back(fmt::format("{} {} (trial={}, antenna={}, symbol={})", flat, part, c[0], c[1], c[2]));
  }
  EXPECT_EQ(reported_rows(bad.output), predicted) << bad.output;
  const auto bad_dac = check_dumps(vec, "dac", work / "dump_trunc", work / "check_trunc_dac.log");
  EXPECT_EQ(bad_dac.exit_code, 1) << bad_dac.output;
  // 3. The truncating RTL is exactly the floor datapath.
  for (const std::string node : {"tx_acc", "dac"}) {
    const auto r = check_dumps(vec_floor, node, work / "dump_trunc", work / ("check_floor_" + node + ".log"));
    EXPECT_EQ(r.exit_code, 0) << node << " against the floor datapath\n" << r.output;
  }
}

TEST(ScenarioFlow, IcarusBitExactAndTruncationCaught) {
  if (!testing::have_program("iverilog") || !testing::have_program("vvp")) {
    GTEST_SKIP() << "Icarus Verilog (Debian package iverilog) not installed: RTL flow not run";
  }
  run_rtl_flow(simulator::icarus);
}

TEST(ScenarioFlow, VerilatorBitExactAndTruncationCaught) {
  if (!testing::have_program("verilator")) {
    GTEST_SKIP() << "Verilator 5 (Debian package verilator) not installed: RTL flow not run";
  }
  run_rtl_flow(simulator::verilator);
}

/// SHA-256 of a file by coreutils sha256sum (FIPS 180-4), or empty when it is absent.
std::string coreutils_sha256(const fs::path& file, const fs::path& log) {
  if (!testing::have_program("sha256sum")) return {};
  const auto r = run_command("sha256sum " + quote(file), log);
  return r.exit_code == 0 ? r.output.substr(0, 64) : std::string{};
}

TEST(ScenarioFlow, TwoRunsGiveIdenticalFiles) {
  const fs::path work = scratch_dir();
  const fs::path scen = write_scenario(work, "bench.toml");
  make_set(scen, work / "a", "--trials 0,2", work / "a.log");
  make_set(scen, work / "b", "--trials 0,2", work / "b.log");
  const nlohmann::json man_a = read_manifest(work / "a");
  const nlohmann::json man_b = read_manifest(work / "b");
  ASSERT_EQ(man_a.at("files").size(), man_b.at("files").size());
  ASSERT_GT(man_a.at("files").size(), 20U);  // every active node of a ZF/LDL datapath and its ports
  for (std::size_t i = 0; i < man_a.at("files").size(); ++i) {
    const auto& fa = man_a.at("files")[i];
    const auto& fb = man_b.at("files")[i];
    const std::string name = fa.at("file");
    EXPECT_EQ(fa.at("file"), fb.at("file"));
    EXPECT_EQ(fa.at("sha256"), fb.at("sha256")) << name;
    EXPECT_EQ(testing::slurp(work / "a" / name), testing::slurp(work / "b" / name)) << name;
    // The manifest's digest is the file's: an outside SHA-256 (FIPS 180-4) agrees.
    const std::string outside = coreutils_sha256(work / "a" / name, work / "sha.log");
    if (!outside.empty()) {
      EXPECT_EQ(fa.at("sha256").get<std::string>(), outside) << name;
    }
  }
  EXPECT_EQ(man_a, man_b);
  EXPECT_EQ(man_a.at("scenario").at("text"), scenario_text());
  EXPECT_EQ(man_a.at("seed"), 90517);
  EXPECT_EQ(man_a.at("trials"), nlohmann::json::array({0, 2}));
}

/// Splits the diff table into record label -> its line.
std::map<std::string, std::string> diff_lines(const std::string& output) {
  std::map<std::string, std::string> lines;
  std::istringstream in(output);
  std::string line;
  while (std::getline(in, line)) {
    const std::size_t space = line.find(' ');
    if (space != std::string::npos && line.find('/') < space) lines[line.substr(0, space)] = line;
  }
  return lines;
}

TEST(ScenarioFlow, DiffNamesNarrowerWeights) {
  const fs::path work = scratch_dir();
  make_set(write_scenario(work, "bench.toml"), work / "wide", "--nodes tx_acc,dac", work / "wide.log");
  scenario_knobs narrow;
  narrow.weights_format = "Q1.9";  // one fraction bit fewer: 11 bits
  make_set(write_scenario(work, "bench_narrow.toml", narrow), work / "narrow", "--nodes tx_acc,dac",
           work / "narrow.log");
  const auto same = fxmimo(fmt::format("diff {} {}", quote(work / "wide"), quote(work / "wide")), work / "same.log");
  EXPECT_EQ(same.exit_code, 0) << same.output;
  const auto r = fxmimo(fmt::format("diff {} {}", quote(work / "wide"), quote(work / "narrow")), work / "diff.log");
  EXPECT_EQ(r.exit_code, 1) << r.output;
  const auto lines = diff_lines(r.output);
  ASSERT_TRUE(lines.contains("tx_acc/in/weights")) << r.output;
  ASSERT_TRUE(lines.contains("tx_acc/out")) << r.output;
  ASSERT_TRUE(lines.contains("tx_acc/in/symbols")) << r.output;
  EXPECT_NE(lines.at("tx_acc/in/weights").find("changed"), std::string::npos) << r.output;
  EXPECT_NE(lines.at("tx_acc/out").find("changed"), std::string::npos) << r.output;
  EXPECT_NE(lines.at("tx_acc/in/symbols").find("identical"), std::string::npos) << r.output;
  const auto allowed =
      fxmimo(fmt::format("diff {} {} --allow tx_acc --allow dac", quote(work / "wide"), quote(work / "narrow")),
             work / "allowed.log");
  EXPECT_EQ(allowed.exit_code, 0) << allowed.output;
}

/// Each trial's block of a record is the record of that trial alone: trials go first, in the
/// order given, and an input port carries its source node's words and format.
TEST(ScenarioFlow, TrialOrderAndInputPorts) {
  const fs::path work = scratch_dir();
  const fs::path scen = write_scenario(work, "bench.toml");
  make_set(scen, work / "t31", "--nodes weights,tx_acc,dac --trials 3,1", work / "t31.log");
  make_set(scen, work / "t1", "--nodes tx_acc --trials 1", work / "t1.log");
  make_set(scen, work / "t3", "--nodes tx_acc --trials 3", work / "t3.log");
  const vector_set both = read_vector_set(work / "t31");
  const vector_set one = read_vector_set(work / "t1");
  const vector_set three = read_vector_set(work / "t3");
  const node_words& acc = *both.find("tx_acc", "out");
  ASSERT_EQ(acc.dim_names, (std::vector<std::string>{"trial", "antenna", "symbol"}));
  ASSERT_EQ(acc.dim_sizes, (std::vector<std::size_t>{2, 4, 8}));
  const std::size_t block = 4 * 8;
  auto block_of = [&](const std::vector<std::int64_t>& v, std::size_t i) {
    return std::vector<std::int64_t>(v.begin() + static_cast<std::ptrdiff_t>(i * block),
                                     v.begin() + static_cast<std::ptrdiff_t>((i + 1) * block));
  };
  EXPECT_EQ(block_of(acc.re, 0), three.find("tx_acc", "out")->re);
  EXPECT_EQ(block_of(acc.im, 0), three.find("tx_acc", "out")->im);
  EXPECT_EQ(block_of(acc.re, 1), one.find("tx_acc", "out")->re);
  EXPECT_NE(three.find("tx_acc", "out")->re, one.find("tx_acc", "out")->re) << "trials 1 and 3 must differ";

  const node_words& weights_out = *both.find("weights", "out");
  const node_words& weights_in = *both.find("tx_acc", "in", "weights");
  EXPECT_EQ(weights_in.re, weights_out.re);
  EXPECT_EQ(weights_in.im, weights_out.im);
  EXPECT_EQ(weights_in.dim_names, (std::vector<std::string>{"trial", "antenna", "user"}));
  EXPECT_EQ(fp::to_q_string(weights_in.spec.fmt), "Q1.10");
  EXPECT_EQ(weights_in.spec.rounding, fp::rounding_mode::half_even);
  const node_words& dac_in = *both.find("dac", "in", "tx_acc");
  EXPECT_EQ(dac_in.re, acc.re);
  EXPECT_EQ(fp::to_q_string(dac_in.spec.fmt), "Q0.9");
  EXPECT_EQ(dac_in.spec.overflow, fp::overflow_mode::saturate);
  const node_words& dac_out = *both.find("dac", "out");
  EXPECT_EQ(dac_out.spec.overflow, fp::overflow_mode::saturate_symmetric);
  // weights has three inputs, tx_acc two, dac one, and each node one output: 9 records.
  EXPECT_EQ(both.records.size(), 9U);
}

/// The dimension names of every active node and input port of a ZF/LDL datapath.
TEST(ScenarioFlow, DimensionNamesPerNode) {
  const fs::path work = scratch_dir();
  make_set(write_scenario(work, "bench.toml"), work / "vec", "--form npy --layout interleaved", work / "vec.log");
  const vector_set set = read_vector_set(work / "vec");
  using names = std::vector<std::string>;
  const std::map<std::string, names> expected{{"adc", {"trial", "antenna", "pilot_symbol"}},
                                              {"pilot_rom", {"trial", "pilot_symbol", "user"}},
                                              {"pilot_acc", {"trial", "antenna", "user"}},
                                              {"est_scale", {"trial", "user"}},
                                              {"chan_est", {"trial", "antenna", "user"}},
                                              {"gram", {"trial", "user", "user"}},
                                              {"ldl_acc", {"trial", "user", "user"}},
                                              {"inv_diag_recip", {"trial", "user"}},
                                              {"inv_factor", {"trial", "user", "user"}},
                                              {"inv_fwd", {"trial", "user", "user"}},
                                              {"inv_out", {"trial", "user", "user"}},
                                              {"precoder", {"trial", "antenna", "user"}},
                                              {"power_acc", {"trial", "one"}},
                                              {"norm", {"trial", "one"}},
                                              {"tx_gain", {"trial", "one"}},
                                              {"weights", {"trial", "antenna", "user"}},
                                              {"symbols", {"trial", "user", "symbol"}},
                                              {"tx_acc", {"trial", "antenna", "symbol"}},
                                              {"dac", {"trial", "antenna", "symbol"}}};
  std::size_t num_out = 0;
  for (const node_words& r : set.records) {
    const std::string source = r.direction == "out" ? r.node : r.port;
    ASSERT_TRUE(expected.contains(source)) << record_label(r);
    EXPECT_EQ(r.dim_names, expected.at(source)) << record_label(r);
    if (r.direction == "out") ++num_out;
  }
  EXPECT_EQ(num_out, expected.size());
  EXPECT_NE(set.find("pilot_acc", "in", "adc"), nullptr);
  EXPECT_NE(set.find("pilot_acc", "in", "pilot_rom"), nullptr);
  EXPECT_NE(set.find("chan_est", "in", "pilot_acc"), nullptr);
  EXPECT_NE(set.find("chan_est", "in", "est_scale"), nullptr);
  EXPECT_NE(set.find("gram", "in", "chan_est"), nullptr);
  EXPECT_EQ(set.find("adc", "in", "pilot_rom"), nullptr);
  EXPECT_EQ(set.find("gram", "out")->dim_sizes, (std::vector<std::size_t>{1, 3, 3}));
  EXPECT_EQ(set.find("adc", "out")->dim_sizes, (std::vector<std::size_t>{1, 4, 4}));
  EXPECT_EQ(set.man.form, file_form::npy);
  EXPECT_EQ(set.man.layout, complex_layout::interleaved);
}

struct bad_call {
  const char* name;
  const char* args;
  const char* message;  ///< expected in the one line on stderr
};

std::ostream& operator<<(std::ostream& os, const bad_call& c) { return os << c.name; }

class ScenarioFlowErrors : public ::testing::TestWithParam<bad_call> {};

TEST_P(ScenarioFlowErrors, OneLineAndExitTwo) {
  const fs::path work = scratch_dir();
  const fs::path scen = write_scenario(work, "bench.toml");
  const fs::path out = work / "vec";
  const auto r =
      fxmimo(fmt::format("vectors -c {} -o {} {}", quote(scen), quote(out), GetParam().args), work / "run.log");
  EXPECT_EQ(r.exit_code, 2) << r.output;
  EXPECT_EQ(std::count(r.output.begin(), r.output.end(), '\n'), 1) << r.output;
  EXPECT_EQ(r.output.rfind("fxmimo vectors: ", 0), 0U) << r.output;
  EXPECT_NE(r.output.find(GetParam().message), std::string::npos) << r.output;
  EXPECT_FALSE(fs::exists(out / "manifest.json"));
}

INSTANTIATE_TEST_SUITE_P(Cases, ScenarioFlowErrors,
                         ::testing::Values(bad_call{"empty_item", "--trials 0,,2", "'' is not a trial index"},
                                           bad_call{"not_a_number", "--trials 1,x", "'x' is not a trial index"},
                                           bad_call{"backwards_range", "--trials 3-1", "range '3-1' runs backwards"},
                                           bad_call{"repeated_trial", "--trials 0-2,1", "trial 1 is listed twice"},
                                           // The scenario has trials = 4: indices 0..3.
                                           bad_call{"out_of_range", "--trials 2-4", "trial 4 is out of range"},
                                           bad_call{"unknown_node", "--nodes tx_acc,txacc", "unknown node 'txacc'"},
                                           // ZF with LDL^H: the Neumann nodes are not in this datapath.
                                           bad_call{"inactive_node", "--nodes inv_iter", "node 'inv_iter' is not used"},
                                           bad_call{"bad_form", "--form csv", "--form 'csv'"},
                                           bad_call{"bad_layout", "--layout planar", "--layout 'planar'"}),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

}  // namespace
}  // namespace fxmimo::vectors
