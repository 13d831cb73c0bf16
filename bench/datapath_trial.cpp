// One full trial at M = 128, K = 16, tau_p = 16, N = 168, ZF with LDL^H, single cell: the
// bit-true datapath against the golden model of the same trial, in the same run. The ratio
// fixed / golden is the figure to read (issue target: at most 1.0).
#include <benchmark/benchmark.h>

#include <string>

#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/golden/trial.hpp"

namespace g = fxmimo::golden;
namespace d = fxmimo::datapath;
namespace fp = fxmimo::fixedpoint;

namespace {

const g::scenario& bench_scenario() {
  static const g::scenario scen = g::parse_scenario_text(R"(
name = "bench-128x16"
seed = 99
trials = 1
[array]
antennas = 128
[cells]
count = 1
users_per_cell = 16
user_gains_db = [0, 1, 2, 3, 4, 5, 6, 7, 0, 1, 2, 3, 4, 5, 6, 7]
[pilots]
length = 16
sequence = "walsh"
snr_db = 10.0
[estimator]
kind = "mmse"
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "64qam"
symbols = 168
snr_db = 20.0
)",
                                                         "bench.toml");
  return scen;
}

/// Hardware-like widths (all at most 32 bits, so products run on native 64-bit integers).
d::datapath_config bench_config() {
  d::datapath_config c;
  auto set = [&](d::node_id id, const char* q) {
    c[id] = {{fp::parse_format(q), fp::rounding_mode::half_even, fp::overflow_mode::saturate}, {}, false};
  };
  set(d::node_id::adc, "Q0.13");
  set(d::node_id::pilot_rom, "Q1.6");
  set(d::node_id::pilot_acc, "Q4.15");
  set(d::node_id::est_scale, "Q2.13");
  set(d::node_id::chan_est, "Q4.13");
  set(d::node_id::gram, "Q11.14");
  set(d::node_id::ldl_acc, "Q11.14");
  set(d::node_id::inv_diag_recip, "Q-6.24");
  set(d::node_id::inv_factor, "Q0.17");
  set(d::node_id::inv_fwd, "Q1.17");
  set(d::node_id::inv_out, "Q-6.24");
  set(d::node_id::precoder, "Q-4.21");
  set(d::node_id::power_acc, "Q-3.24");
  set(d::node_id::norm, "Q3.15");
  set(d::node_id::tx_gain, "Q3.13");
  set(d::node_id::weights, "Q-1.18");
  set(d::node_id::symbols, "Q1.12");
  set(d::node_id::tx_acc, "Q1.18");
  set(d::node_id::dac, "Q0.15");
  return c;
}

void golden_trial(benchmark::State& state) {
  std::uint64_t t = 0;
  for (auto _ : state) benchmark::DoNotOptimize(g::run_trial(bench_scenario(), t++));
}

void fixed_datapath(benchmark::State& state) {
  const g::trial_data trial = g::run_trial(bench_scenario(), 0);
  const d::datapath_config c = bench_config();
  for (auto _ : state) benchmark::DoNotOptimize(d::run_fixed_datapath(bench_scenario(), c, trial));
}

void fixed_datapath_wide_default(benchmark::State& state) {
  const g::trial_data trial = g::run_trial(bench_scenario(), 0);
  d::datapath_config c;
  for (auto _ : state) benchmark::DoNotOptimize(d::run_fixed_datapath(bench_scenario(), c, trial));
}

BENCHMARK(golden_trial)->Unit(benchmark::kMillisecond);
BENCHMARK(fixed_datapath)->Unit(benchmark::kMillisecond);
BENCHMARK(fixed_datapath_wide_default)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
