// One evaluation of a word-length search on examples/metro-7-shadowed.toml (seven cells, 256
// antennas, 32 users per cell, ZF with LDL^H): the tune's search trials evaluated at a point one
// node away from the previous one, in full (golden trial, golden node values and the whole
// fixed datapath, as before the cache) and through analysis::trial_cache (golden kept, only the
// stages downstream of the changed node rerun). Each iteration evaluates the point and its
// neighbour, so the incremental path always has one node to redo. Read the ratio
// full / incremental per changed node (issue target: at least 5x), within one run.
#include <benchmark/benchmark.h>

#include <fstream>
#include <sstream>
#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/trial_cache.hpp"
#include "fxmimo/datapath/config.hpp"

namespace g = fxmimo::golden;
namespace d = fxmimo::datapath;
namespace h = fxmimo::analysis;

namespace {

/// Widths of the order tune chooses on this scenario (README "Word lengths that hold").
constexpr const char* tuned_nodes = R"(
[nodes.adc]
format = "Q0.10"
[nodes.pilot_rom]
format = "Q2.0"
[nodes.pilot_acc]
format = "Q5.10"
[nodes.est_scale]
format = "Q8.9"
[nodes.chan_est]
format = "Q11.15"
[nodes.gram]
format = "Q31.16"
[nodes.ldl_acc]
format = "Q33.10"
[nodes.inv_diag_recip]
format = "Q30.24"
[nodes.inv_factor]
format = "Q15.20"
[nodes.inv_fwd]
format = "Q15.11"
[nodes.inv_out]
format = "Q14.23"
[nodes.precoder]
format = "Q3.17"
[nodes.power_acc]
format = "Q11.15"
[nodes.norm]
format = "Q3.8"
[nodes.tx_gain]
format = "Q4.0"
[nodes.weights]
format = "Q0.12"
[nodes.symbols]
format = "Q2.8"
[nodes.tx_acc]
format = "Q1.13"
[nodes.dac]
format = "Q1.10"
)";

struct setup {
  g::scenario scen;
  d::datapath_config config;
};

const setup& metro() {
  static const setup s = [] {
    std::ifstream in(std::string(FXMIMO_SOURCE_DIR) + "/examples/metro-7-shadowed.toml");
    std::ostringstream text;
    text << in.rdbuf() << tuned_nodes;
    setup out{g::parse_scenario_text(text.str(), "metro-7-shadowed.toml"), {}};
    out.config = d::parse_datapath_config(text.str(), "metro-7-shadowed.toml");
    return out;
  }();
  return s;
}

constexpr int num_search_trials = 2;
const std::vector<d::node_id> changed_at{d::node_id::chan_est, d::node_id::inv_out, d::node_id::weights,
                                         d::node_id::dac};

d::datapath_config neighbour(const d::datapath_config& c, d::node_id id) {
  d::datapath_config out = c;
  const auto f = out[id].spec.fmt;
  out[id].spec.fmt = f.with_int_frac(f.int_bits(), f.frac_bits - 1);
  return out;
}

void evaluation_full(benchmark::State& state) {
  const setup& s = metro();
  const d::node_id id = changed_at[static_cast<std::size_t>(state.range(0))];
  const d::datapath_config a = s.config, b = neighbour(a, id);
  const auto trials = h::first_trials(num_search_trials);
  for (auto _ : state) {
    benchmark::DoNotOptimize(h::run_trials(s.scen, a, trials, 1));
    benchmark::DoNotOptimize(h::run_trials(s.scen, b, trials, 1));
  }
  state.SetItemsProcessed(2 * state.iterations());  // evaluations
  state.SetLabel(std::string("changed ") + std::string(d::node_name(id)));
}

void evaluation_incremental(benchmark::State& state) {
  const setup& s = metro();
  const d::node_id id = changed_at[static_cast<std::size_t>(state.range(0))];
  const d::datapath_config a = s.config, b = neighbour(a, id);
  const auto trials = h::first_trials(num_search_trials);
  // One entry per trial: the point alternates, so each evaluation differs from the kept one.
  h::trial_cache cache(s.scen, h::default_cache_budget_bytes(), 1);
  h::run_trials(cache, a, trials, 1);  // the golden parts, once, outside the timing
  for (auto _ : state) {
    benchmark::DoNotOptimize(h::run_trials(cache, b, trials, 1));
    benchmark::DoNotOptimize(h::run_trials(cache, a, trials, 1));
  }
  state.SetItemsProcessed(2 * state.iterations());
  state.SetLabel(std::string("changed ") + std::string(d::node_name(id)));
}

BENCHMARK(evaluation_full)->DenseRange(0, 3)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(evaluation_incremental)->DenseRange(0, 3)->Unit(benchmark::kMillisecond)->UseRealTime();

}  // namespace

BENCHMARK_MAIN();
