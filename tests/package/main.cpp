// Consumer of the installed fxmimo package: one call into every exported target.
//   fixedpoint: requantises 0.3 into Q0.15 -> 9830.4 -> 9830 = 0x2666 (half_even)
//   golden:     parses a small scenario
//   datapath:   lays out its stages (MF: 13 nodes, adc first, dac last)
//   analysis:   runs one trial of it
//   io:         reads the scenario name back through the checked JSON reader
//   report:     writes the run as a results record (JSON) and reads it back
//   vectors:    SHA-256 of "abc" (FIPS 180-2 appendix B.1: ba7816bf...)
//   dpi:        the C ABI requantises 0x15 of Q3.4 (1.3125) into Q3.1, half_even: 3 (1.5)
//   app:        the fxmimo program's --version
#include <fxmimo_dpi.h>

#include <cstdio>
#include <fxmimo/analysis/runner.hpp>
#include <fxmimo/app/program.hpp>
#include <fxmimo/datapath/plan.hpp>
#include <fxmimo/fixedpoint/conversions.hpp>
#include <fxmimo/fixedpoint/words.hpp>
#include <fxmimo/golden/scenario.hpp>
#include <fxmimo/io/checked_json.hpp>
#include <fxmimo/report/records.hpp>
#include <fxmimo/report/report.hpp>
#include <fxmimo/vectors/sha256.hpp>
#include <string>

int main(int argc, char** argv) {
  namespace fp = fxmimo::fixedpoint;
  if (argc > 1) return fxmimo::app::run_program(argc, argv);  // consumer --version
  const fp::requantizer<std::int64_t> q(
      {fp::parse_format("Q0.15"), fp::rounding_mode::half_even, fp::overflow_mode::saturate});
  fp::counters c;
  std::printf("%s\n", fp::to_hex_word(fp::from_double(0.3, q, c), 16).c_str());
  const fxmimo::golden::scenario scen = fxmimo::golden::parse_scenario_text(R"(
name = "consumer"
seed = 1
[array]
antennas = 4
[cells]
users_per_cell = 2
user_gains_db = [0.0, 0.0]
[pilots]
length = 2
snr_db = 10.0
[precoder]
kind = "mf"
[data]
modulation = "qpsk"
symbols = 4
snr_db = 10.0
)",
                                                                            "consumer");
  const auto nodes = fxmimo::datapath::stages_for(scen).nodes();
  std::printf("%zu %s %s\n", nodes.size(), std::string(fxmimo::datapath::node_name(nodes.front())).c_str(),
              std::string(fxmimo::datapath::node_name(nodes.back())).c_str());
  const auto run = fxmimo::analysis::run_trials(scen, fxmimo::datapath::datapath_config{}, {0}, 1);
  const nlohmann::json run_json = fxmimo::report::to_json(fxmimo::report::make_record(run));
  const fxmimo::io::checked_json doc(run_json, "run.json");
  std::printf("%s %s\n", doc["kind"].text().c_str(), fxmimo::report::run_from_json(doc).scenario.name.c_str());
  std::printf("%s\n", fxmimo::vectors::sha256_hex("abc").substr(0, 8).c_str());
  std::int64_t word = 0;
  const int overflowed = fxm_requantize("Q3.4", 0x15, "Q3.1", "half_even", "saturate", &word);
  std::printf("%d %lld\n", overflowed, static_cast<long long>(word));
  return 0;
}
