// The run's warning for a Gauss-Seidel inverse that has not converged (runner.cpp, README
// "Downlink precoding"): raised exactly for the trials whose golden residual ||I - G X||_F /
// sqrt(K) exceeds golden::gauss_seidel_residual_limit, recomputed here from the golden trials.
#include <gtest/gtest.h>

#include <algorithm>
#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/gauss_seidel.hpp"
#include "fxmimo/golden/trial.hpp"

namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

/// Our own scenario: 16 users, `antennas` antennas, perfect CSI, `sweeps` Gauss-Seidel sweeps.
std::string text(int antennas, int sweeps) {
  return "name = \"gs-warning\"\nseed = 11\ntrials = 3\n[array]\nantennas = " + std::to_string(antennas) +
         "\n[cells]\ncount = 1\nusers_per_cell = 16\n[pilots]\nsnr_db = 20.0\n[estimator]\nkind = \"perfect\"\n"
         "[precoder]\ninversion = \"gauss_seidel\"\nsweeps = " +
         std::to_string(sweeps) + "\n[data]\nsymbols = 8\nsnr_db = 10.0\n";
}

std::size_t count_warnings(const h::run_results& r, const std::string& start) {
  return static_cast<std::size_t>(std::count_if(r.warnings.begin(), r.warnings.end(),
                                                [&](const std::string& w) { return w.rfind(start, 0) == 0; }));
}

TEST(inverter_warnings, gauss_seidel_residual_above_the_limit_is_reported) {
  // M/K = 2, one sweep: the median residual of such Gram matrices is about 0.39
  // (tests/golden/inverters_test.cpp), far above the limit 0.01, in every trial.
  const std::string one = text(32, 1);
  const g::scenario scen = g::parse_scenario_text(one, "gs.toml");
  const d::datapath_config config = d::parse_datapath_config(one, "gs.toml");
  const std::vector<std::uint64_t> trials = h::first_trials(3);
  std::size_t above = 0;
  for (std::uint64_t t : trials) {
    const g::trial_data td = g::run_trial(scen, t);
    EXPECT_DOUBLE_EQ(td.gauss_seidel_residual, g::inverse_residual(td.gram, td.inverse));
    above += td.gauss_seidel_residual > g::gauss_seidel_residual_limit ? 1 : 0;
  }
  ASSERT_EQ(above, 3U);
  const h::run_results r = h::run_trials(scen, config, trials, 1);
  ASSERT_EQ(count_warnings(r, "Gauss-Seidel inverse not converged after 1 sweeps in 3 of 3 trials"), 1U)
      << (r.warnings.empty() ? "no warnings" : r.warnings.front());

  // M/K = 8 and 12 sweeps: the residual falls by about 4x per sweep there (0.10 after one sweep,
  // 0.0018 after four), so it is far below the limit and nothing is reported.
  const std::string many = text(128, 12);
  const g::scenario scen_many = g::parse_scenario_text(many, "gs.toml");
  for (std::uint64_t t : trials)
    EXPECT_LT(g::run_trial(scen_many, t).gauss_seidel_residual, g::gauss_seidel_residual_limit);
  const h::run_results quiet = h::run_trials(scen_many, d::parse_datapath_config(many, "gs.toml"), trials, 1);
  EXPECT_EQ(count_warnings(quiet, "Gauss-Seidel"), 0U);
}

}  // namespace
