// The bit-identity baseline: for the example scenarios listed below (both directions for the
// uplink ones) and the two scenarios beside this file,
// the SHA-256 of every node's words and counters for trials 0..3 and the run metrics of those
// trials, recomputed and compared with baseline.json. The file is the program's own output at
// the commit that wrote it; it guards every refactor and optimisation. Change it only for a
// deliberate semantic change, in its own commit that says why. To rewrite it:
//   FXMIMO_WRITE_BASELINE=tests/bit_identity/baseline.json ./build/release/tests/fxmimo_bit_identity_tests
// Digests: SHA-256 (FIPS 180-4) of a canonical byte string defined in words_digest below.
#include <gtest/gtest.h>

#include <cstdlib>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/vectors/sha256.hpp"

namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

const std::vector<std::string> baseline_scenarios{"examples/rooftop-64.toml",
                                                  "examples/tower-128-neumann.toml",
                                                  "examples/village-16-mf.toml",
                                                  "tests/bit_identity/rzf-per-antenna.toml",
                                                  "tests/bit_identity/ls-neumann-two-terms.toml",
                                                  "examples/pier-64-uplink.toml",
                                                  "examples/pier-64-mmse-own.toml"};

constexpr int num_baseline_trials = 4;

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw std::runtime_error("cannot read " + path);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

void append_u64(std::string& bytes, std::uint64_t v) {
  for (int i = 0; i < 8; ++i) bytes.push_back(static_cast<char>((v >> (8 * i)) & 0xffU));
}

/// "ROWSxCOLS:c|r:" then every word in flat (row-major) order as 8 little-endian bytes of its
/// two's complement, the real part then (complex nodes) the imaginary part; then the counters
/// (requantised, overflowed, inexact).
std::string words_digest(const d::word_matrix& w, const fxmimo::fixedpoint::counters& c) {
  std::string bytes = std::to_string(w.rows) + "x" + std::to_string(w.cols) + (w.is_complex ? ":c:" : ":r:");
  for (std::size_t i = 0; i < w.size(); ++i) {
    append_u64(bytes, static_cast<std::uint64_t>(w.re[i]));
    if (w.is_complex) append_u64(bytes, static_cast<std::uint64_t>(w.im[i]));
  }
  append_u64(bytes, c.requantized);
  append_u64(bytes, c.overflowed);
  append_u64(bytes, c.inexact);
  return fxmimo::vectors::sha256_hex(bytes);
}

nlohmann::json compute_scenario(const std::string& relative_path) {
  const std::string path = std::string(FXMIMO_SOURCE_DIR) + "/" + relative_path;
  const std::string text = read_text(path);
  const g::scenario scen = g::parse_scenario_text(text, relative_path);
  const d::datapath_config config = d::parse_datapath_config(text, relative_path);
  nlohmann::json out;
  for (int t = 0; t < num_baseline_trials; ++t) {
    const g::trial_data trial = g::run_trial(scen, static_cast<std::uint64_t>(t));
    const d::fixed_trial fixed = d::run_fixed_datapath(scen, config, trial);
    nlohmann::json nodes = nlohmann::json::object();
    for (d::node_id id : d::active_nodes(scen)) {
      nodes[std::string(d::node_name(id))] =
          words_digest(fixed.words[d::index_of(id)], fixed.counters[d::index_of(id)]);
    }
    out["trials"].push_back(nodes);
  }
  const h::run_results r = h::run_trials(scen, config, h::first_trials(num_baseline_trials), 1);
  const h::run_summary& s = r.summary;
  out["metrics"] = {{"sinr_golden_db", s.sinr_golden_db},       {"sinr_fixed_db", s.sinr_fixed_db},
                    {"sinr_loss_db", s.sinr_loss_db},           {"evm_golden_pct", s.evm_golden_pct},
                    {"evm_fixed_pct", s.evm_fixed_pct},         {"evm_impl_pct", s.evm_impl_pct},
                    {"tx_power_error_db", s.tx_power_error_db}, {"rms_tx_power_error_db", s.rms_tx_power_error_db}};
  if (r.uplink) {  // both directions: the uplink's figures and counts too
    const h::uplink_results& u = *r.uplink;
    out["metrics"]["ul_sinr_golden_db"] = u.sinr_golden_db;
    out["metrics"]["ul_sinr_fixed_db"] = u.sinr_fixed_db;
    out["metrics"]["ul_evm_fixed_pct"] = u.evm_fixed_pct;
    out["metrics"]["ul_bit_errors_golden"] = u.bit_errors_golden;
    out["metrics"]["ul_bit_errors_fixed"] = u.bit_errors_fixed;
    out["metrics"]["ul_llr_sign_flips"] = u.llr_sign_flips;
  }
  for (const h::node_result& n : r.nodes) {
    out["node_metrics"][std::string(d::node_name(n.id))] = {
        {"error_energy", n.error_energy}, {"signal_energy", n.signal_energy}, {"max_err_lsb", n.max_err_lsb}};
  }
  return out;
}

TEST(BitIdentity, EveryNodeWordAndMetricMatchesTheBaseline) {
  nlohmann::json now;
  for (const std::string& s : baseline_scenarios) now[s] = compute_scenario(s);
  if (const char* target = std::getenv("FXMIMO_WRITE_BASELINE")) {
    std::ofstream(target) << now.dump(1) << "\n";
    GTEST_SKIP() << "wrote the baseline to " << target;
  }
  const nlohmann::json baseline =
      nlohmann::json::parse(read_text(std::string(FXMIMO_SOURCE_DIR) + "/tests/bit_identity/baseline.json"));
  ASSERT_EQ(baseline.size(), baseline_scenarios.size());
  for (const std::string& s : baseline_scenarios) {
    SCOPED_TRACE(s);
    ASSERT_TRUE(baseline.contains(s));
    const nlohmann::json& want = baseline[s];
    const nlohmann::json& got = now[s];
    ASSERT_EQ(want["trials"].size(), got["trials"].size());
    for (std::size_t t = 0; t < want["trials"].size(); ++t) {
      ASSERT_EQ(want["trials"][t].size(), got["trials"][t].size()) << "trial " << t << ": active node list changed";
      for (const auto& [node, digest] : want["trials"][t].items()) {
        ASSERT_TRUE(got["trials"][t].contains(node)) << "trial " << t << " lost node " << node;
        EXPECT_EQ(got["trials"][t][node], digest) << "trial " << t << " node " << node;
      }
    }
    // Metrics are compared exactly: the same words through the same double evaluation.
    EXPECT_EQ(got["metrics"].size(), want["metrics"].size()) << "the list of metrics changed";
    for (const auto& [key, value] : want["metrics"].items()) EXPECT_EQ(got["metrics"][key], value) << key;
    for (const auto& [node, figures] : want["node_metrics"].items()) {
      ASSERT_TRUE(got["node_metrics"].contains(node)) << node;
      for (const auto& [key, value] : figures.items())
        EXPECT_EQ(got["node_metrics"][node][key], value) << node << " " << key;
    }
  }
}

}  // namespace
