// Golden once, fixed incrementally (analysis/trial_cache.hpp, datapath::rerun_block_stages)
// against its definition, the full evaluation: on every example scenario, a random walk of
// single-node and multi-node changes of format, rounding, overflow and accumulation order, each
// evaluated incrementally from the previous one and in full, must give the same words and
// counters bit for bit (==, no tolerance), and run_trials through a cache the same figures as
// run_trials without one, with any memory budget. Also what "downstream" means on a known plan.
#include "fxmimo/analysis/trial_cache.hpp"

#include <gtest/gtest.h>

#include <fstream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"

namespace fp = fxmimo::fixedpoint;
namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

std::string read_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw std::runtime_error("cannot read " + path);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

struct example {
  const char* path;
  int num_changes;  ///< steps of the random walk (fewer on the large scenarios)
};

void PrintTo(const example& e, std::ostream* os) { *os << e.path; }

/// One random change of a node's setting: integer and fraction bits moved by -3..3 (word kept
/// within 2..64 bits, so that overflow and wide words both occur), a random rounding and
/// overflow mode, and for an accumulator a random order and, a third of the time, a term format.
void change_node(d::node_setting& s, d::node_id id, std::mt19937_64& rng) {
  std::uniform_int_distribution<int> step(-3, 3);
  const fp::format f = s.spec.fmt;
  const int int_bits = f.int_bits() + step(rng), frac_bits = f.frac_bits + step(rng);
  const fp::format moved = f.with_int_frac(int_bits, frac_bits);
  if (moved.word_bits >= 2 && moved.word_bits <= 64 && moved.word_bits >= (f.is_signed ? 2 : 1)) s.spec.fmt = moved;
  s.spec.rounding = fp::all_rounding_modes[rng() % fp::all_rounding_modes.size()];
  s.spec.overflow = fp::all_overflow_modes[rng() % fp::all_overflow_modes.size()];
  if (d::role_of(id) == d::node_role::accumulator) {
    s.order.order = fp::all_accumulation_orders[rng() % fp::all_accumulation_orders.size()];
    s.order.lanes = s.order.order == fp::accumulation_order::lanes ? static_cast<int>(2 + rng() % 4) : 1;
    // Now and then narrow product terms: the node's format with 1..4 fraction bits fewer.
    s.order.term_format.reset();
    if (rng() % 3 == 0) {
      const fp::format term =
          s.spec.fmt.with_int_frac(s.spec.fmt.int_bits(), s.spec.fmt.frac_bits - 1 - int(rng() % 4));
      if (term.word_bits >= 2) s.order.term_format = term;
      s.order.term_rounding = fp::all_rounding_modes[rng() % fp::all_rounding_modes.size()];
    }
  }
  s.is_default = false;
}

/// Changes one node (even steps) or two to four nodes (odd steps) of `config`.
d::datapath_config random_step(const d::datapath_config& config, const std::vector<d::node_id>& nodes, int i_step,
                               std::mt19937_64& rng) {
  d::datapath_config out = config;
  const std::size_t count = i_step % 2 == 0 ? 1 : 2 + rng() % 3;
  for (std::size_t i = 0; i < count; ++i) {
    const d::node_id id = nodes[rng() % nodes.size()];
    change_node(out[id], id, rng);
  }
  return out;
}

/// Words and counters equal; the first differing node named.
void expect_same_trial(const d::fixed_trial& full, const d::fixed_trial& again, const std::vector<d::node_id>& nodes,
                       const std::string& where) {
  for (d::node_id id : nodes) {
    const std::size_t i = d::index_of(id);
    const d::word_matrix &a = full.words[i], &b = again.words[i];
    ASSERT_EQ(a.rows, b.rows) << where << " node " << d::node_name(id);
    ASSERT_EQ(a.cols, b.cols) << where << " node " << d::node_name(id);
    for (std::size_t k = 0; k < a.size(); ++k) {
      ASSERT_EQ(a.re[k], b.re[k]) << where << " node " << d::node_name(id) << " word " << k << " (real)";
      if (a.is_complex) {
        ASSERT_EQ(a.im[k], b.im[k]) << where << " node " << d::node_name(id) << " word " << k;
      }
    }
    EXPECT_TRUE(full.counters[i] == again.counters[i])
        << where << " node " << d::node_name(id) << ": counters " << full.counters[i].requantized << "/"
        << full.counters[i].overflowed << "/" << full.counters[i].inexact << " against "
        << again.counters[i].requantized << "/" << again.counters[i].overflowed << "/" << again.counters[i].inexact;
  }
}

/// Every figure of two runs equal (exact double comparison: the same words give the same sums).
void expect_same_results(const h::run_results& a, const h::run_results& b, const std::string& where) {
  ASSERT_EQ(a.nodes.size(), b.nodes.size()) << where;
  for (std::size_t i = 0; i < a.nodes.size(); ++i) {
    const h::node_result &x = a.nodes[i], &y = b.nodes[i];
    const std::string node = where + " node " + std::string(d::node_name(x.id));
    EXPECT_EQ(x.id, y.id) << node;
    EXPECT_TRUE(x.spec == y.spec) << node;
    EXPECT_EQ(x.signal_energy, y.signal_energy) << node;
    EXPECT_EQ(x.error_energy, y.error_energy) << node;
    EXPECT_EQ(x.max_err_lsb, y.max_err_lsb) << node;
    EXPECT_EQ(x.max_abs_golden, y.max_abs_golden) << node;
    EXPECT_EQ(x.num_values, y.num_values) << node;
    EXPECT_TRUE(x.counters == y.counters) << node;
  }
  ASSERT_EQ(a.users.size(), b.users.size()) << where;
  for (std::size_t k = 0; k < a.users.size(); ++k) {
    EXPECT_EQ(a.users[k].sinr_fixed_db, b.users[k].sinr_fixed_db) << where << " user " << k;
    EXPECT_EQ(a.users[k].sinr_golden_db, b.users[k].sinr_golden_db) << where << " user " << k;
    EXPECT_EQ(a.users[k].evm_fixed_pct, b.users[k].evm_fixed_pct) << where << " user " << k;
  }
  EXPECT_EQ(a.summary.evm_impl_pct, b.summary.evm_impl_pct) << where;
  EXPECT_EQ(a.summary.rms_tx_power_error_db, b.summary.rms_tx_power_error_db) << where;
  EXPECT_EQ(a.summary.sinr_loss_db, b.summary.sinr_loss_db) << where;
  EXPECT_EQ(a.distribution.sinr_loss_percentiles_db, b.distribution.sinr_loss_percentiles_db) << where;
  EXPECT_EQ(a.distribution.evm_impl_max_pct, b.distribution.evm_impl_max_pct) << where;
  EXPECT_EQ(a.distribution.gram_condition_max, b.distribution.gram_condition_max) << where;
  EXPECT_EQ(a.warnings, b.warnings) << where;
}

class IncrementalEvaluation : public ::testing::TestWithParam<example> {};

TEST_P(IncrementalEvaluation, EqualsTheFullEvaluationBitForBit) {
  const example e = GetParam();
  const std::string text = read_text(std::string(FXMIMO_SOURCE_DIR) + "/" + e.path);
  const g::scenario scen = g::parse_scenario_text(text, e.path);
  const d::datapath_config start = d::parse_datapath_config(text, e.path);
  const d::datapath_plan plan = d::stages_for(scen);
  const std::vector<d::node_id> nodes = plan.nodes();
  const std::uint64_t seed = 20261203;
  std::mt19937_64 rng(seed);
  const g::trial_data trial = g::run_trial(scen, 1);

  d::datapath_config before = start;
  d::fixed_trial earlier = d::run_block_stages(plan, scen, before, trial);
  std::size_t reran = 0, reused = 0;
  for (int i_step = 0; i_step < e.num_changes; ++i_step) {
    const d::datapath_config now = random_step(before, nodes, i_step, rng);
    const std::string where = std::string(e.path) + " step " + std::to_string(i_step) + " seed " + std::to_string(seed);
    d::fixed_trial full, again;
    std::vector<bool> recomputed;
    bool full_threw = false;
    try {
      full = d::run_block_stages(plan, scen, now, trial);
    } catch (const std::exception&) {
      full_threw = true;  // a setting a stage refuses: the incremental run must refuse it too
    }
    if (full_threw) {
      EXPECT_ANY_THROW(d::rerun_block_stages(plan, scen, now, trial, earlier, before, &recomputed)) << where;
      continue;
    }
    again = d::rerun_block_stages(plan, scen, now, trial, earlier, before, &recomputed);
    expect_same_trial(full, again, nodes, where);
    if (HasFatalFailure()) return;
    for (d::node_id id : nodes) (recomputed[d::index_of(id)] ? reran : reused) += 1;
    before = now;
    earlier = std::move(again);
  }
  // The walk must have reused some nodes, or the test compared full runs with full runs.
  EXPECT_GT(reused, 0U) << "no node was reused: the incremental path was not exercised";
  EXPECT_GT(reran, 0U);
}

TEST_P(IncrementalEvaluation, RunsThroughTheCacheGiveTheFiguresOfRunsWithout) {
  const example e = GetParam();
  const std::string text = read_text(std::string(FXMIMO_SOURCE_DIR) + "/" + e.path);
  const g::scenario scen = g::parse_scenario_text(text, e.path);
  const d::datapath_config start = d::parse_datapath_config(text, e.path);
  const std::vector<d::node_id> nodes = d::active_nodes(scen);
  std::mt19937_64 rng(7);
  const std::vector<std::uint64_t> trials = e.num_changes > 6 ? std::vector<std::uint64_t>{0, 2} : h::first_trials(1);
  h::trial_cache roomy(scen, 1e12);
  h::trial_cache none(scen, 0.0);  // keeps nothing: every evaluation full, the same figures
  d::datapath_config config = start;
  const int steps = std::min(e.num_changes, 4);
  for (int i_step = 0; i_step < steps; ++i_step) {
    const std::string where = std::string(e.path) + " step " + std::to_string(i_step);
    h::run_results plain;
    try {
      plain = h::run_trials(scen, config, trials, 1);
    } catch (const std::exception&) {
      config = random_step(start, nodes, i_step, rng);
      continue;
    }
    expect_same_results(plain, h::run_trials(roomy, config, trials, 2), where + " (cache)");
    expect_same_results(plain, h::run_trials(none, config, trials, 1), where + " (zero budget)");
    config = random_step(config, nodes, i_step, rng);
  }
  const h::cache_statistics kept = roomy.statistics(), not_kept = none.statistics();
  EXPECT_EQ(kept.golden_computed, trials.size()) << "each trial's golden part computed once";
  EXPECT_GT(kept.evaluations_incremental, 0U);
  EXPECT_EQ(not_kept.evaluations_incremental, 0U);
  EXPECT_EQ(not_kept.bytes_kept, 0.0);
}

INSTANTIATE_TEST_SUITE_P(
    Examples, IncrementalEvaluation,
    ::testing::Values(example{"examples/rooftop-64.toml", 24}, example{"examples/tower-128-neumann.toml", 24},
                      example{"examples/village-16-mf.toml", 24}, example{"examples/campus-3-hex.toml", 24},
                      example{"examples/metro-7-shadowed.toml", 6}, example{"examples/dpi/kiosk-8.toml", 40},
                      example{"examples/quay-96-newton.toml", 24}, example{"examples/metro-7-blockfloat.toml", 6},
                      example{"examples/pier-64-uplink.toml", 24}, example{"examples/pier-64-mmse-own.toml", 24},
                      example{"tests/bit_identity/rzf-per-antenna.toml", 24},
                      example{"tests/bit_identity/ls-neumann-two-terms.toml", 24},
                      example{"tests/analysis/scenarios/cholesky-newton.toml", 24},
                      example{"tests/analysis/scenarios/gauss-seidel-sweeps.toml", 24}),
    [](const ::testing::TestParamInfo<example>& param_info) {
      std::string name = param_info.param.path;
      name = name.substr(name.rfind('/') + 1);
      name = name.substr(0, name.find('.'));
      for (char& c : name)
        if (c == '-') c = '_';
      return name;
    });

// What "downstream" means, on the reference ZF/LDL^H plan, against a second formulation: a node
// depends on another when that one is among its sources or a source depends on it (recursion
// over sources_of, where stages_downstream_of makes one pass in stage order). A change at the ADC
// reruns everything that depends on it but not the pilot ROM or the symbols; a change at the DAC
// reruns only the stage that computes it.
bool depends_on(const d::datapath_plan& plan, d::node_id node, d::node_id on, std::vector<bool>& seen) {
  if (node == on) return true;
  if (seen[d::index_of(node)]) return false;  // a stage may read its own outputs (the LDL^H recursion)
  seen[d::index_of(node)] = true;
  for (d::node_id source : plan.sources_of(node))
    if (depends_on(plan, source, on, seen)) return true;
  return false;
}

bool depends_on(const d::datapath_plan& plan, d::node_id node, d::node_id on) {
  std::vector<bool> seen(d::node_count(), false);
  return depends_on(plan, node, on, seen);
}

TEST(StagesDownstream, FollowTheStagePorts) {
  const std::string text = read_text(std::string(FXMIMO_SOURCE_DIR) + "/examples/rooftop-64.toml");
  const g::scenario scen = g::parse_scenario_text(text, "rooftop-64.toml");
  const d::datapath_plan plan = d::stages_for(scen);
  const std::size_t n = plan.stages.size();
  for (d::node_id changed : plan.nodes()) {
    const std::vector<bool> rerun = plan.stages_downstream_of({changed});
    for (std::size_t i = 0; i < n; ++i) {
      bool expected = false;
      for (const d::port& p : plan.stages[i]->ports()) expected = expected || depends_on(plan, p.node, changed);
      EXPECT_EQ(static_cast<bool>(rerun[i]), expected)
          << "change at " << d::node_name(changed) << ", stage " << plan.stages[i]->name();
    }
  }
  auto count = [](const std::vector<bool>& v) { return std::count(v.begin(), v.end(), true); };
  const std::vector<bool> at_adc = plan.stages_downstream_of({d::node_id::adc});
  for (std::size_t i = 0; i < n; ++i) {
    if (plan.stages[i]->outputs(d::node_id::pilot_rom) || plan.stages[i]->outputs(d::node_id::symbols)) {
      EXPECT_FALSE(at_adc[i]) << plan.stages[i]->name();
    }
    if (plan.stages[i]->outputs(d::node_id::dac)) {
      EXPECT_TRUE(at_adc[i]);
    }
  }
  EXPECT_EQ(count(plan.stages_downstream_of({d::node_id::dac})), 1);
  EXPECT_EQ(count(plan.stages_downstream_of({})), 0);
}

}  // namespace
