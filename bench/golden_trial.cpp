// One golden trial at the reference size (M = 128, K = 16, tau_p = 16, N = 168, one cell): the
// yardstick the fixed-point datapath model is compared with.
#include <benchmark/benchmark.h>

#include "fxmimo/golden/trial.hpp"

namespace {

const char* const reference_scenario = R"(seed = 1
[array]
antennas = 128
[cells]
users_per_cell = 16
[pilots]
length = 16
snr_db = 10
[estimator]
kind = "mmse"
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "64qam"
symbols = 168
snr_db = 10
)";

void golden_trial_128x16(benchmark::State& state) {
  const fxmimo::golden::scenario scen = fxmimo::golden::parse_scenario_text(reference_scenario, "bench");
  std::uint64_t trial_index = 0;
  for (auto _ : state) {
    benchmark::DoNotOptimize(fxmimo::golden::run_trial(scen, trial_index++));
  }
}
BENCHMARK(golden_trial_128x16)->Unit(benchmark::kMillisecond);

} // namespace

BENCHMARK_MAIN();
