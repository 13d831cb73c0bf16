// What the uplink costs per trial: one whole evaluated trial (golden model, bit-true datapath,
// figures: analysis::evaluate_trial) of examples/pier-64-uplink.toml (64 x 8, three cells,
// 168 downlink and 168 uplink 64-QAM symbols, ZF detection sharing the downlink's inverse),
// against the same scenario without its [uplink] table (the downlink alone), and with the
// uplink's own inverse (inverse = "own": a second Gram and LDL^H inverter). The figures to read
// are the ratios both / downlink and own / both, within one run.
#include <benchmark/benchmark.h>

#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace g = fxmimo::golden;
namespace d = fxmimo::datapath;
namespace h = fxmimo::analysis;

namespace {

std::string example_text() {
  const std::string path = std::string(FXMIMO_SOURCE_DIR) + "/examples/pier-64-uplink.toml";
  std::ifstream in(path);
  if (!in) throw std::runtime_error("cannot read " + path);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// The example with its [uplink] table cut out (`which` 0), kept (1), or given its own inverse
/// (2); the ul_* node tables stay (a node's table is only used when its node exists).
std::string variant(int which) {
  std::string text = example_text();
  const std::size_t at = text.find("[uplink]");
  const std::size_t end = text.find("\n[", at + 1);
  if (at == std::string::npos || end == std::string::npos) throw std::runtime_error("no [uplink] table");
  if (which == 0) text.erase(at, end + 1 - at);
  if (which == 2) text.insert(end + 1, "inverse = \"own\"\n");
  return text;
}

struct loaded {
  g::scenario scen;
  d::datapath_config config;
};

const loaded& scenario_of(int which) {
  static const loaded all[3] = {
      {g::parse_scenario_text(variant(0), "downlink.toml"), d::parse_datapath_config(variant(0), "downlink.toml")},
      {g::parse_scenario_text(variant(1), "both.toml"), d::parse_datapath_config(variant(1), "both.toml")},
      {g::parse_scenario_text(variant(2), "own.toml"), d::parse_datapath_config(variant(2), "own.toml")}};
  return all[which];
}

void whole_trial(benchmark::State& state) {
  const loaded& l = scenario_of(static_cast<int>(state.range(0)));
  std::uint64_t t = 0;
  for (auto _ : state) benchmark::DoNotOptimize(h::evaluate_trial(l.scen, l.config, t++ % 8));
}

}  // namespace

// 0: downlink alone; 1: downlink + uplink (shared inverse); 2: downlink + uplink (own inverse).
BENCHMARK(whole_trial)->DenseRange(0, 2)->Unit(benchmark::kMillisecond)->UseRealTime();

BENCHMARK_MAIN();
