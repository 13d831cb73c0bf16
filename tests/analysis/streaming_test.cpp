// The data phase in blocks (golden::data_stream, datapath::run_data_stages, the streamed sums of
// analysis::evaluate_trial) against the whole data phase computed at once, by the definitions
// written out here: per-node energies and maxima over all N symbols, the counters, and the link
// figures in two passes (the least-squares gain, then the mean residual; README "Evaluation";
// implementation EVM after the least-squares alignment, 3GPP TS 38.104 Annex B). N = 700 spans
// three blocks (256 + 256 + 188); the scenario has three cells, so the other cells' signal
// takes part.
#include <gtest/gtest.h>

#include <cmath>
#include <fstream>
#include <sstream>
#include <string>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/golden/trial.hpp"

namespace {

namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;
namespace h = fxmimo::analysis;

std::string read_text(const std::string& path) {
  std::ifstream in(path);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

/// Relative difference, 0 when both are 0.
double rel(double a, double b) { return a == b ? 0.0 : std::abs(a - b) / std::max(std::abs(a), std::abs(b)); }

TEST(StreamedDataPhase, GivesTheFiguresOfTheWholeBlockAtOnce) {
  const std::string path = std::string(FXMIMO_SOURCE_DIR) + "/examples/campus-3-hex.toml";
  std::string text = read_text(path);
  const std::size_t at = text.find("symbols = 48");
  ASSERT_NE(at, std::string::npos);
  text.replace(at, 12, "symbols = 700");
  const g::scenario scen = g::parse_scenario_text(text, "campus-700.toml");
  ASSERT_EQ(scen.data.num_symbols, 700);
  ASSERT_GT(scen.cells.num_cells, 1);
  d::datapath_config config = d::parse_datapath_config(text, "campus-700.toml");
  // A 12-bit DAC, so that the data phase carries a quantisation error well above double rounding.
  config[d::node_id::dac].spec.fmt = fxmimo::fixedpoint::parse_format("Q1.10");
  const d::datapath_plan plan = d::stages_for(scen);

  const h::trial_summary streamed = h::evaluate_trial(scen, config, 2);

  const g::trial_data trial = g::run_trial(scen, 2);
  const g::data_block all = g::whole_data(scen, trial);
  const d::fixed_trial fixed = d::run_fixed_datapath(plan, scen, config, trial);
  const std::vector<Eigen::MatrixXcd> golden = d::golden_node_values(plan, scen, trial);
  for (d::node_id id : {d::node_id::symbols, d::node_id::tx_acc, d::node_id::dac}) {
    const std::size_t i = d::index_of(id);
    const h::node_result& r = streamed.nodes[i];
    const Eigen::MatrixXcd f = d::to_values(fixed.words[i], config[id].spec.fmt.frac_bits);
    const Eigen::MatrixXcd e = golden[i] - f;
    ASSERT_EQ(golden[i].cols(), 700) << d::node_name(id);
    EXPECT_TRUE(r.counters == fixed.counters[i]) << d::node_name(id);
    EXPECT_GT(r.counters.requantized, 0U) << d::node_name(id);
    EXPECT_EQ(r.num_values, static_cast<std::uint64_t>(golden[i].size())) << d::node_name(id);
    EXPECT_LT(rel(r.signal_energy, golden[i].squaredNorm()), 1e-12) << d::node_name(id);
    EXPECT_LT(rel(r.error_energy, e.squaredNorm()), 1e-12) << d::node_name(id);
    const double max_golden = std::max(golden[i].real().cwiseAbs().maxCoeff(), golden[i].imag().cwiseAbs().maxCoeff());
    const double max_error = std::max(e.real().cwiseAbs().maxCoeff(), e.imag().cwiseAbs().maxCoeff());
    EXPECT_EQ(r.max_abs_golden, max_golden) << d::node_name(id);
    EXPECT_EQ(r.max_err_lsb, max_error / config[id].spec.fmt.lsb()) << d::node_name(id);
  }

  // The fixed block at the golden block's power, through the true channels, in two passes.
  const Eigen::MatrixXcd dac =
      d::to_values(fixed.words[d::index_of(d::node_id::dac)], config[d::node_id::dac].spec.fmt.frac_bits);
  const double scale = std::sqrt(all.tx.squaredNorm() / dac.squaredNorm());
  const Eigen::MatrixXcd r =
      trial.amplitude * (scale * (trial.channel_to_cell0[0].transpose() * dac) + all.interference);
  for (Eigen::Index k = 0; k < r.rows(); ++k) {
    const std::complex<double> gain =
        (r.row(k).array() * all.symbols.row(k).array().conjugate()).sum() / all.symbols.row(k).squaredNorm();
    const double error = (r.row(k) - gain * all.symbols.row(k)).squaredNorm() / 700.0;
    const auto u = static_cast<std::size_t>(k);
    EXPECT_LT(rel(streamed.sinr_fixed[u], std::norm(gain) / (error + 1.0)), 1e-10) << "user " << k;
    EXPECT_LT(rel(streamed.evm_fixed_pct[u], 100.0 * std::sqrt(error / std::norm(gain))), 1e-9) << "user " << k;
  }
  const std::complex<double> a = (dac.array().conjugate() * all.tx.array()).sum() / dac.squaredNorm();
  EXPECT_LT(rel(streamed.evm_impl, (a * dac - all.tx).norm() / all.tx.norm()), 1e-9);
  EXPECT_LT(std::abs(streamed.tx_power_error_db - 10 * std::log10(dac.squaredNorm() / all.tx.squaredNorm())), 1e-12);
  EXPECT_GT(streamed.evm_impl, 1e-4) << "the 12-bit DAC must leave an error to compare";
}

}  // namespace
