// The table + Newton-Raphson reciprocal unit in RTL (examples/rtl/recip_newton.v), run under
// Icarus Verilog and Verilator. The testbench reads the LDL^H diagonal and the seed ROM with
// $readmemh (IEEE 1364-2005 §17.2.9) and dumps the unit's words with $fwrite "%h" (§17.1.1.3);
// `fxmimo check` must find recip_mant, recip_prod, recip_iter and inv_diag_recip bit-exact.
// The RTL's parameters come from the vector set's manifest (formats, modes, ROM size, steps).
// 1. Scenario flow: `fxmimo vectors` on examples/quay-96-newton.toml (24 trials) and on a variant
//    with other seed bits and steps, other rounding modes and a mantissa that rounds.
// 2. Every word of a 12-bit signed input (zero and the negative words included) against the
//    fixedpoint core's unit (the model), written as a vector set.
// Negative test: FORCE_TRUNCATE builds the products' requantisation with floor rounding; the
// check of recip_prod must exit 1 and name the first word where the floor model differs.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <fstream>
#include <iostream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/newton.hpp"
#include "fxmimo/vectors/vector_set.hpp"
#include "test_support.hpp"

#ifndef FXMIMO_EXE
#error "FXMIMO_EXE (path of the fxmimo program) must be defined by tests/CMakeLists.txt"
#endif

namespace fxmimo::vectors {
namespace {

namespace fs = std::filesystem;
using testing::quote;
using testing::rtl_code;
using testing::run_command;
using testing::scratch_dir;
using testing::simulator;

const char* const unit_nodes[] = {"recip_mant", "recip_prod", "recip_iter", "inv_diag_recip"};

bool have(simulator sim) {
  return sim == simulator::icarus ? testing::have_program("iverilog") && testing::have_program("vvp")
                                  : testing::have_program("verilator");
}

std::string slurp_file(const fs::path& p) {
  std::ifstream in(p, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// The testbench's parameters from a vector set: every format and mode from its manifest.
std::vector<std::pair<std::string, long long>> parameters_of(const vector_set& set) {
  const auto spec = [&](const char* node, const char* direction, const char* port = "") -> const node_words& {
    const node_words* r = set.find(node, direction, port);
    if (r == nullptr) throw std::runtime_error(fmt::format("vector set has no {} {} {}", node, direction, port));
    return *r;
  };
  const node_words& d = spec("inv_diag_recip", "in", "ldl_acc");
  const node_words& rom = spec("recip_rom", "out");
  const node_words& mant = spec("recip_mant", "out");
  const node_words& prod = spec("recip_prod", "out");
  const node_words& iter = spec("recip_iter", "out");
  const node_words& out = spec("inv_diag_recip", "out");
  int seed_bits = 0;
  while ((std::size_t{1} << seed_bits) < rom.dim_sizes.at(1)) ++seed_bits;
  const auto w = [](const node_words& r) { return static_cast<long long>(r.spec.fmt.word_bits); };
  const auto f = [](const node_words& r) { return static_cast<long long>(r.spec.fmt.frac_bits); };
  return {{"T", static_cast<long long>(out.dim_sizes.at(0))},
          {"K", static_cast<long long>(out.dim_sizes.at(1))},
          {"DW", w(d)},
          {"DF", f(d)},
          {"SA", seed_bits},
          {"N", static_cast<long long>(prod.dim_sizes.at(2))},
          {"MW", w(mant)},
          {"MF", f(mant)},
          {"M_RND", rtl_code(mant.spec.rounding)},
          {"M_OVF", rtl_code(mant.spec.overflow)},
          {"RW", w(rom)},
          {"RF", f(rom)},
          {"PW", w(prod)},
          {"PF", f(prod)},
          {"P_RND", rtl_code(prod.spec.rounding)},
          {"P_OVF", rtl_code(prod.spec.overflow)},
          {"XW", w(iter)},
          {"XF", f(iter)},
          {"X_RND", rtl_code(iter.spec.rounding)},
          {"X_OVF", rtl_code(iter.spec.overflow)},
          {"OW", w(out)},
          {"OF", f(out)},
          {"O_RND", rtl_code(out.spec.rounding)},
          {"O_OVF", rtl_code(out.spec.overflow)}};
}

testing::command_result check_node(const fs::path& vec, const char* node, const fs::path& dump_dir) {
  return run_command(fmt::format("{} check {} --node {} --dump {}", quote(FXMIMO_EXE), quote(vec), node,
                                 quote(dump_dir / (std::string(node) + ".hex"))),
                     dump_dir / (std::string(node) + ".check.log"));
}

/// Simulates the unit on `vec` and checks every node of the unit bit-exact.
void simulate_and_check(simulator sim, const fs::path& work, const fs::path& vec) {
  const vector_set set = read_vector_set(vec);
  const auto params = parameters_of(set);
  testing::run_testbench(sim, params, false, work / "build", vec, work / "dump", "tb_recip_newton.v", "recip_newton.v");
  for (const char* node : unit_nodes) {
    const auto r = check_node(vec, node, work / "dump");
    EXPECT_EQ(r.exit_code, 0) << node << "\n" << r.output;
    EXPECT_NE(r.output.find("PASS"), std::string::npos) << r.output;
  }
}

/// `fxmimo vectors` of the unit's nodes for `trials` of the scenario text.
fs::path scenario_vectors(const fs::path& work, const std::string& scenario_text, const char* trials) {
  const fs::path scenario = work / "scenario.toml";
  std::ofstream(scenario) << scenario_text;
  const fs::path vec = work / "vec";
  const auto r = run_command(
      fmt::format("{} vectors -c {} -o {} --trials {} --nodes recip_rom,{},{},{},{}", quote(FXMIMO_EXE),
                  quote(scenario), quote(vec), trials, unit_nodes[0], unit_nodes[1], unit_nodes[2], unit_nodes[3]),
      work / "vectors.log");
  EXPECT_EQ(r.exit_code, 0) << r.output;
  return vec;
}

std::string example_text() { return slurp_file(fs::path(FXMIMO_SOURCE_DIR) / "examples" / "quay-96-newton.toml"); }

/// The example with another unit: 2^4 seeds, three steps, floor products, half_up iterates, a
/// 10-bit mantissa (24-bit d_j words round into it) and a toward_zero output.
std::string variant_text() {
  std::string s = example_text();
  const auto replace = [&](const std::string& from, const std::string& to) {
    const auto at = s.find(from);
    if (at == std::string::npos) throw std::runtime_error("example lacks: " + from);
    s.replace(at, from.size(), to);
  };
  replace("seed_bits = 6\nsteps = 1", "seed_bits = 4\nsteps = 3");
  replace("[nodes.recip_mant]          # mantissa in [1/2, 1]\nformat = \"UQ1.15\"",
          "[nodes.recip_mant]\nformat = \"UQ1.9\"");
  replace("[nodes.recip_prod]          # m x_k, close to 1\nformat = \"UQ1.17\"\nrounding = \"half_even\"",
          "[nodes.recip_prod]\nformat = \"UQ1.17\"\nrounding = \"floor\"");
  replace("[nodes.recip_iter]          # x_k+1 in (1, 2]\nformat = \"UQ2.16\"\nrounding = \"half_even\"",
          "[nodes.recip_iter]\nformat = \"UQ2.16\"\nrounding = \"half_up\"");
  replace("[nodes.inv_diag_recip]      # 1/d'_j below 1/2 here\nformat = \"Q0.17\"\nrounding = \"half_even\"",
          "[nodes.inv_diag_recip]\nformat = \"Q0.17\"\nrounding = \"toward_zero\"");
  return s;
}

class RtlNewton : public ::testing::TestWithParam<simulator> {
 protected:
  void SetUp() override {
    if (!have(GetParam())) GTEST_SKIP() << "simulator not installed (./run.sh installs iverilog and verilator)";
  }
};

TEST_P(RtlNewton, ExampleScenarioIsBitExact) {
  const fs::path work = scratch_dir();
  simulate_and_check(GetParam(), work, scenario_vectors(work, example_text(), "0-23"));
}

TEST_P(RtlNewton, VariantWithRoundingMantissaAndThreeStepsIsBitExact) {
  const fs::path work = scratch_dir();
  const fs::path vec = scenario_vectors(work, variant_text(), "0-7");
  // The variant must exercise what it exists for: a mantissa that rounds.
  const vector_set set = read_vector_set(vec);
  ASSERT_EQ(set.find("recip_prod", "out")->dim_sizes.at(2), 3U);
  simulate_and_check(GetParam(), work, vec);
}

/// Every word of a signed 12-bit input (Q5.6) through the core's unit: T = 256 trials of K = 16
/// users, each d_j on a diagonal, as `fxmimo vectors` lays inv_diag_recip.in.ldl_acc out.
struct exhaustive_set {
  std::vector<node_words> records;
  std::vector<std::int64_t> prod_floor;  ///< recip_prod with floor rounding (the planted bug's model)
};

exhaustive_set exhaustive_records(const fp::newton_unit& unit, const fp::target& out_spec, const fp::target& in_spec) {
  constexpr std::size_t num_trials = 256, num_users = 16;
  const auto record = [](const char* node, const char* direction, const char* port, const fp::target& spec,
                         std::vector<std::string> names, std::vector<std::size_t> sizes) {
    node_words r;
    r.node = node;
    r.direction = direction;
    r.port = port;
    r.spec = spec;
    r.dim_names = std::move(names);
    r.dim_sizes = std::move(sizes);
    return r;
  };
  const std::size_t n = static_cast<std::size_t>(unit.steps);
  const std::size_t entries = std::size_t{1} << unit.seed_bits;
  node_words d =
      record("inv_diag_recip", "in", "ldl_acc", in_spec, {"trial", "user", "user"}, {num_trials, num_users, num_users});
  d.is_complex = true;
  d.re.assign(num_trials * num_users * num_users, 0);
  d.im.assign(d.re.size(), 0);
  node_words rom = record("recip_rom", "out", "", unit.rom, {"trial", "rom_entry"}, {num_trials, entries});
  node_words mant = record("recip_mant", "out", "", unit.mant, {"trial", "user"}, {num_trials, num_users});
  node_words prod =
      record("recip_prod", "out", "", unit.prod, {"trial", "user", "newton_step"}, {num_trials, num_users, n});
  node_words iter =
      record("recip_iter", "out", "", unit.iter, {"trial", "user", "newton_step"}, {num_trials, num_users, n});
  node_words out = record("inv_diag_recip", "out", "", out_spec, {"trial", "user"}, {num_trials, num_users});
  fp::counters c;
  const std::vector<std::int64_t> table = fp::newton_rom(unit, c);
  fp::newton_unit floor_unit = unit;
  floor_unit.prod.rounding = fp::rounding_mode::floor;
  exhaustive_set set;
  for (std::size_t t = 0; t < num_trials; ++t) {
    rom.re.insert(rom.re.end(), table.begin(), table.end());
    for (std::size_t k = 0; k < num_users; ++k) {
      const auto x = static_cast<std::int64_t>(t * num_users + k) - 2048;  // -2048 .. 2047
      d.re[(t * num_users + k) * num_users + k] = x;
      fp::newton_counters nc;
      fp::newton_trace tr, tr_floor;
      out.re.push_back(fp::newton_evaluate(unit, table, x, in_spec.fmt.frac_bits, out_spec, c, nc, tr));
      mant.re.push_back(tr.mant);
      prod.re.insert(prod.re.end(), tr.prod.begin(), tr.prod.end());
      iter.re.insert(iter.re.end(), tr.iter.begin(), tr.iter.end());
      (void)fp::newton_evaluate(floor_unit, table, x, in_spec.fmt.frac_bits, out_spec, c, nc, tr_floor);
      set.prod_floor.insert(set.prod_floor.end(), tr_floor.prod.begin(), tr_floor.prod.end());
    }
  }
  set.records = {d, rom, mant, prod, iter, out};
  return set;
}

TEST_P(RtlNewton, EveryTwelveBitInputWordIsBitExactAndTruncationIsCaught) {
  const fs::path work = scratch_dir();
  const auto tgt = [](const char* q, fp::rounding_mode r, fp::overflow_mode o = fp::overflow_mode::saturate) {
    return fp::target{fp::parse_format(q), r, o};
  };
  fp::newton_unit unit;
  unit.function = fp::newton_function::reciprocal;
  unit.seed_bits = 5;
  unit.steps = 2;
  unit.mant = tgt("UQ1.8", fp::rounding_mode::half_even);  // 11 magnitude bits round into 8
  unit.rom = tgt("UQ1.9", fp::rounding_mode::half_up);
  unit.prod = tgt("UQ1.13", fp::rounding_mode::half_even);
  unit.iter = tgt("UQ2.12", fp::rounding_mode::half_away);
  // 1/D up to 64 overflows Q4.10: saturate at the top; d = 0 is +infinity.
  const fp::target out = tgt("Q4.10", fp::rounding_mode::half_even);
  const exhaustive_set set = exhaustive_records(unit, out, tgt("Q5.6", fp::rounding_mode::half_even));
  manifest_info info;
  info.scenario_name = "newton-exhaustive";
  info.scenario_text = "# every word of a 12-bit input through the reciprocal unit\n";
  info.trials.resize(256);
  const fs::path vec = work / "vec";
  write_vector_set(vec, info, set.records);
  simulate_and_check(GetParam(), work, vec);

  // FORCE_TRUNCATE: floor rounding of the products; the first differing word is predicted.
  const std::vector<std::int64_t>& good = set.records[3].re;
  std::size_t first = 0;
  while (first < good.size() && good[first] == set.prod_floor[first]) ++first;
  ASSERT_LT(first, good.size()) << "floor and half_even products agree on every word: no negative test";
  testing::run_testbench(GetParam(), parameters_of(read_vector_set(vec)), true, work / "build_trunc", vec,
                         work / "dump_trunc", "tb_recip_newton.v", "recip_newton.v");
  const auto bad = check_node(vec, "recip_prod", work / "dump_trunc");
  EXPECT_EQ(bad.exit_code, 1) << bad.output;
  const std::vector<std::size_t> at = set.records[3].coordinates(first);
  const std::string where =
      fmt::format("first mismatch: flat index {} (trial={}, user={}, newton_step={}):", first, at[0], at[1], at[2]);
  EXPECT_NE(bad.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << bad.output;
}

INSTANTIATE_TEST_SUITE_P(Simulators, RtlNewton, ::testing::Values(simulator::icarus, simulator::verilator),
                         [](const auto& param_info) {
                           return param_info.param == simulator::icarus ? "Icarus" : "Verilator";
                         });

}  // namespace
}  // namespace fxmimo::vectors
