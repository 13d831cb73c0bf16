// The uplink matched filter in RTL (examples/rtl/uplink_match.v, node ul_match), run under Icarus
// Verilog and Verilator. `fxmimo vectors --nodes ul_match` writes the model's words for
// examples/pier-64-uplink.toml; the testbench tb_uplink_match.v reads ul_adc and chan_est with
// $readmemh (IEEE 1364-2005 §17.2.9), sums ul_adc[m,n] conj(chan_est[m,k]) over the antennas in
// index order, one term per clock, and dumps its sums with $fwrite "%h" (§17.1.1.3); `fxmimo
// check` must find them bit-exact. The RTL's parameters (sizes, formats, rounding and overflow
// codes) come from the set's manifest, so the same flow runs on variants of the scenario:
// 1. The example (three trials; Icarus and Verilator): no sum leaves Q7.10, so every word must
//    also equal the plain sum of its rounded terms, computed here from the stimulus.
// 2. ul_match in Q4.6, half_up, wrap: sums up to about 34 wrap around +-16; every word must be
//    that plain sum modulo 2^11 (wrapping each partial sum is wrapping the total).
// 3. ul_match in Q4.5, toward_zero, saturate_symmetric: partial sums clip in antenna order, and
//    on some words that gives another result than clipping the total; the RTL must follow the
//    sequential order of README "How it computes".
// Negative test: FORCE_TRUNCATE builds the block with floor rounding of its terms. On the
// example `fxmimo check` must exit 1 and name, as the first mismatch, the word where the
// example and its floor twin (the same scenario with rounding = "floor") first differ; the
// broken dump must in turn pass against the floor twin's set.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/fixedpoint/modes.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"
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

const char* const matched_node = "ul_match";
const char* const example_trials = "0,1,2";

bool simulator_present(simulator sim) {
  return sim == simulator::icarus ? testing::have_program("iverilog") && testing::have_program("vvp")
                                  : testing::have_program("verilator");
}

std::string simulator_name(simulator sim) { return sim == simulator::icarus ? "Icarus" : "Verilator"; }

/// A record of the set, its dimension names checked against the layout the testbench reads.
const node_words& record_of(const vector_set& set, const char* direction, const char* port,
                            const std::vector<std::string>& dims) {
  const node_words* r = set.find(matched_node, direction, port);
  if (r == nullptr) throw std::runtime_error(fmt::format("vector set has no {} {} {}", matched_node, direction, port));
  if (r->dim_names != dims || !r->is_complex) {
    std::string names;
    for (const std::string& d : dims) names += (names.empty() ? "" : ", ") + d;
    throw std::runtime_error(fmt::format("{} {} {}: not the complex [{}] record tb_uplink_match.v reads", matched_node,
                                         direction, port, names));
  }
  return *r;
}

struct matched_records {
  const node_words& adc;  ///< ul_match.in.ul_adc [trial, antenna, uplink_symbol]
  const node_words& est;  ///< ul_match.in.chan_est [trial, antenna, user]
  const node_words& out;  ///< ul_match.out [trial, user, uplink_symbol]
};

matched_records records_of(const vector_set& set) {
  return {record_of(set, "in", "ul_adc", {"trial", "antenna", "uplink_symbol"}),
          record_of(set, "in", "chan_est", {"trial", "antenna", "user"}),
          record_of(set, "out", "", {"trial", "user", "uplink_symbol"})};
}

/// The testbench's parameters, every size, format and mode read from the set's manifest.
std::vector<std::pair<std::string, long long>> parameters_of(const vector_set& set) {
  const matched_records r = records_of(set);
  const auto size = [](const node_words& w, std::size_t i) { return static_cast<long long>(w.dim_sizes.at(i)); };
  return {{"T", size(r.out, 0)},
          {"M", size(r.adc, 1)},
          {"K", size(r.out, 1)},
          {"N", size(r.out, 2)},
          {"YW", r.adc.spec.fmt.word_bits},
          {"YF", r.adc.spec.fmt.frac_bits},
          {"HW", r.est.spec.fmt.word_bits},
          {"HF", r.est.spec.fmt.frac_bits},
          {"AW", r.out.spec.fmt.word_bits},
          {"AF", r.out.spec.fmt.frac_bits},
          {"RND", rtl_code(r.out.spec.rounding)},
          {"OVF", rtl_code(r.out.spec.overflow)}};
}

/// pier-64-uplink.toml as it is.
std::string example_text() { return testing::slurp(fs::path(FXMIMO_SOURCE_DIR) / "examples" / "pier-64-uplink.toml"); }

/// The example with its [nodes.ul_match] table (up to the next table) replaced.
std::string with_matched_table(const std::string& format, const std::string& rounding, const std::string& overflow) {
  std::string s = example_text();
  const std::string head = "[nodes.ul_match]";
  const auto at = s.find(head);
  if (at == std::string::npos) throw std::runtime_error("pier-64-uplink.toml lacks " + head);
  const auto next = s.find("\n[", at);
  const auto end = next == std::string::npos ? s.size() : next + 1;
  s.replace(
      at, end - at,
      fmt::format("{}\nformat = \"{}\"\nrounding = \"{}\"\noverflow = \"{}\"\n\n", head, format, rounding, overflow));
  return s;
}

/// `fxmimo vectors --nodes ul_match` of the scenario text, in work/NAME (the scenario beside it).
fs::path matched_vectors(const fs::path& work, const std::string& name, const std::string& scenario_text) {
  const fs::path scenario = work / (name + ".toml");
  std::ofstream(scenario) << scenario_text;
  const fs::path vec = work / name;
  const auto r = run_command(fmt::format("{} vectors -c {} -o {} --nodes {} --trials {}", quote(FXMIMO_EXE),
                                         quote(scenario), quote(vec), matched_node, example_trials),
                             work / (name + ".log"));
  EXPECT_EQ(r.exit_code, 0) << r.output;
  return vec;
}

/// Builds and runs the testbench on `vec`; the dump lands in work/DUMP.
void simulate(simulator sim, const vector_set& set, bool force_truncate, const fs::path& work,
              const std::string& dump) {
  testing::run_testbench(sim, parameters_of(set), force_truncate, work / (dump + "_build"), set.dir, work / dump,
                         "tb_uplink_match.v", "uplink_match.v");
}

testing::command_result check_dump(const fs::path& vec, const fs::path& work, const std::string& dump) {
  return testing::fxmimo_check_node(vec, matched_node, work / dump, work / (dump + ".check.log"));
}

void expect_pass(const testing::command_result& r, const std::string& what) {
  EXPECT_EQ(r.exit_code, 0) << what << "\n" << r.output;
  EXPECT_NE(r.output.find("ul_match/out: PASS"), std::string::npos) << what << "\n" << r.output;
}

/// For every word of ul_match.out (same flat order): the sum over the antennas of the terms
/// ul_adc conj(chan_est), each rounded to the node's LSB by its rounding mode, with no overflow
/// anywhere. Computed here from the set's stimulus, outside the datapath.
struct plain_sums {
  std::vector<std::int64_t> re, im;
};

plain_sums sums_without_overflow(const vector_set& set) {
  const matched_records r = records_of(set);
  const std::size_t num_trials = r.out.dim_sizes[0], num_users = r.out.dim_sizes[1], num_syms = r.out.dim_sizes[2];
  const std::size_t num_ant = r.adc.dim_sizes[1];
  const int drop = r.adc.spec.fmt.frac_bits + r.est.spec.fmt.frac_bits - r.out.spec.fmt.frac_bits;
  const auto term = [&](std::int64_t p) {
    return drop > 0 ? fp::round_shift<std::int64_t>(p, drop, r.out.spec.rounding).value
                    : p * (std::int64_t{1} << -drop);
  };
  plain_sums s;
  for (std::size_t t = 0; t < num_trials; ++t) {
    for (std::size_t k = 0; k < num_users; ++k) {
      for (std::size_t n = 0; n < num_syms; ++n) {
        std::int64_t sum_re = 0, sum_im = 0;
        for (std::size_t m = 0; m < num_ant; ++m) {
          const std::size_t iy = (t * num_ant + m) * num_syms + n, ih = (t * num_ant + m) * num_users + k;
          const std::int64_t yr = r.adc.re[iy], yi = r.adc.im[iy], hr = r.est.re[ih], hi = r.est.im[ih];
          sum_re += term(yr * hr + yi * hi);  // y conj(h)
          sum_im += term(yi * hr - yr * hi);
        }
        s.re.push_back(sum_re);
        s.im.push_back(sum_im);
      }
    }
  }
  return s;
}

/// How many parts of the words lie outside the node's range before overflow handling.
std::size_t count_out_of_range(const plain_sums& s, const fp::format& fmt) {
  const std::int64_t hi = (std::int64_t{1} << (fmt.word_bits - 1)) - 1, lo = -hi - 1;
  std::size_t n = 0;
  for (const std::vector<std::int64_t>* part : {&s.re, &s.im}) {
    for (const std::int64_t v : *part) n += (v < lo || v > hi) ? 1 : 0;
  }
  return n;
}

class RtlMatchedFilter : public ::testing::TestWithParam<simulator> {
 protected:
  void SetUp() override {
    if (!simulator_present(GetParam())) {
      GTEST_SKIP() << simulator_name(GetParam()) << " not installed (Debian packages iverilog, verilator)";
    }
  }
};

TEST_P(RtlMatchedFilter, ExampleScenarioIsBitExact) {
  const fs::path work = scratch_dir();
  const vector_set set = read_vector_set(matched_vectors(work, "vec", example_text()));
  const matched_records r = records_of(set);
  ASSERT_EQ(r.out.dim_sizes.at(0), 3U);
  ASSERT_EQ(r.adc.dim_sizes.at(1), 64U);

  // The set itself: Q7.10 holds every sum of these trials, so each word is the plain sum.
  const plain_sums plain = sums_without_overflow(set);
  EXPECT_EQ(count_out_of_range(plain, r.out.spec.fmt), 0U);
  EXPECT_EQ(plain.re, r.out.re);
  EXPECT_EQ(plain.im, r.out.im);

  simulate(GetParam(), set, false, work, "dump");
  expect_pass(check_dump(set.dir, work, "dump"), "pier-64-uplink, trials " + std::string(example_trials));
}

TEST_P(RtlMatchedFilter, WrappingVariantIsBitExact) {
  const fs::path work = scratch_dir();
  const vector_set set = read_vector_set(matched_vectors(work, "vec", with_matched_table("Q4.6", "half_up", "wrap")));
  const matched_records r = records_of(set);
  ASSERT_EQ(r.out.spec.fmt.word_bits, 11);

  // The variant must wrap, and wrapping in antenna order is wrapping the total: every word is
  // its plain sum modulo 2^11.
  const plain_sums plain = sums_without_overflow(set);
  const std::size_t wrapped = count_out_of_range(plain, r.out.spec.fmt);
  std::cout << "[ uplink   ] Q4.6 wrap: " << wrapped << " of " << 2 * plain.re.size() << " sum parts wrap\n";
  EXPECT_GT(wrapped, 0U) << "no sum leaves Q4.6: the variant does not exercise wrap";
  const std::uint64_t mask = (std::uint64_t{1} << 11) - 1;
  const auto same_mod = [&](std::int64_t a, std::int64_t b) {
    return ((static_cast<std::uint64_t>(a) - static_cast<std::uint64_t>(b)) & mask) == 0;
  };
  std::size_t not_modular = 0;
  for (std::size_t i = 0; i < plain.re.size(); ++i) {
    if (!same_mod(plain.re[i], r.out.re[i]) || !same_mod(plain.im[i], r.out.im[i])) {
      if (not_modular++ == 0) ADD_FAILURE() << "word " << i << " is not its plain sum modulo 2^11";
    }
  }
  EXPECT_EQ(not_modular, 0U);

  simulate(GetParam(), set, false, work, "dump");
  expect_pass(check_dump(set.dir, work, "dump"), "Q4.6 half_up wrap");
}

TEST_P(RtlMatchedFilter, SymmetricSaturationFollowsTheAntennaOrder) {
  const fs::path work = scratch_dir();
  const vector_set set =
      read_vector_set(matched_vectors(work, "vec", with_matched_table("Q4.5", "toward_zero", "saturate_symmetric")));
  const matched_records r = records_of(set);

  // Clipping only the total would give other words than clipping every partial sum: count them.
  const plain_sums plain = sums_without_overflow(set);
  const fp::requantizer<std::int64_t> q(r.out.spec);
  fp::counters ignored;
  std::size_t order_matters = 0;
  for (std::size_t i = 0; i < plain.re.size(); ++i) {
    if (q.overflow(plain.re[i], ignored) != r.out.re[i]) ++order_matters;
    if (q.overflow(plain.im[i], ignored) != r.out.im[i]) ++order_matters;
  }
  const std::size_t clipped = count_out_of_range(plain, r.out.spec.fmt);
  std::cout << "[ uplink   ] Q4.5 saturate_symmetric: " << clipped << " sum parts beyond the range, " << order_matters
            << " where clipping in antenna order differs from clipping the total\n";
  EXPECT_GT(order_matters, 0U) << "the variant does not make the accumulation order visible";

  simulate(GetParam(), set, false, work, "dump");
  expect_pass(check_dump(set.dir, work, "dump"), "Q4.5 toward_zero saturate_symmetric");
}

TEST_P(RtlMatchedFilter, TruncatedTermsAreCaughtAtThePredictedWord) {
  const fs::path work = scratch_dir();
  const vector_set set = read_vector_set(matched_vectors(work, "vec", example_text()));
  const node_words& good = records_of(set).out;
  ASSERT_NE(good.spec.rounding, fp::rounding_mode::floor) << "the example already truncates: no negative test";
  // The floor twin: the example with ul_match's rounding alone changed.
  const vector_set floor_set = read_vector_set(matched_vectors(
      work, "vec_floor",
      with_matched_table(fp::to_q_string(good.spec.fmt), "floor", std::string(fp::to_string(good.spec.overflow)))));
  const auto first = testing::first_word_difference(good, records_of(floor_set).out);
  ASSERT_TRUE(first.has_value()) << "floor and half_even agree on every word: no negative test";

  simulate(GetParam(), set, true, work, "dump_trunc");
  const auto bad = check_dump(set.dir, work, "dump_trunc");
  EXPECT_EQ(bad.exit_code, 1) << bad.output;
  EXPECT_NE(bad.output.find("ul_match/out: MISMATCH"), std::string::npos) << bad.output;
  const std::vector<std::size_t> at = good.coordinates(first->first);
  const std::string where = fmt::format("first mismatch: flat index {} (trial={}, user={}, uplink_symbol={}), part {}",
                                        first->first, at[0], at[1], at[2], first->second);
  EXPECT_NE(bad.output.find(where), std::string::npos) << "expected \"" << where << "\" in:\n" << bad.output;

  // The broken block is exactly the floor model.
  expect_pass(check_dump(floor_set.dir, work, "dump_trunc"), "FORCE_TRUNCATE against the floor twin");
}

// A Verilator build takes seconds: the example under both simulators, the variants and the
// negative test under Icarus only.
INSTANTIATE_TEST_SUITE_P(uplink, RtlMatchedFilter, ::testing::Values(simulator::icarus),
                         [](const auto& param_info) { return simulator_name(param_info.param); });

class RtlMatchedFilterVerilator : public RtlMatchedFilter {};

TEST_P(RtlMatchedFilterVerilator, ExampleScenarioIsBitExact) {
  const fs::path work = scratch_dir();
  const vector_set set = read_vector_set(matched_vectors(work, "vec", example_text()));
  simulate(GetParam(), set, false, work, "dump");
  expect_pass(check_dump(set.dir, work, "dump"), "pier-64-uplink under Verilator");
}

INSTANTIATE_TEST_SUITE_P(uplink, RtlMatchedFilterVerilator, ::testing::Values(simulator::verilator),
                         [](const auto& param_info) { return simulator_name(param_info.param); });

}  // namespace
}  // namespace fxmimo::vectors
