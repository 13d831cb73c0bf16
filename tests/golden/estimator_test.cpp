// Uplink channel estimation against the closed-form estimation errors of uncorrelated Rayleigh
// fading with pilot contamination.
#include "fxmimo/golden/estimator.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <string>
#include <vector>

#include "fxmimo/golden/pilots.hpp"
#include "fxmimo/golden/trial.hpp"
#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

using test::make_scenario;
using test::mean_se;

// Björnson, Hoydis & Sanguinetti, Massive MIMO Networks (2017), per antenna, uncorrelated fading
// (eqs. (3.13), (3.20), (3.35)-(3.36), numbers from memory):
//   psi = 1 / (tau_p rho_p sum_{sharing l} beta_l + 1), gamma = tau_p rho_p beta_0^2 psi,
//   MMSE error = beta_0 - gamma; LS error = 1 / (tau_p rho_p) + sum_{sharing l != 0} beta_l.
double mmse_error(const std::vector<double>& sharing_betas, double tau_rho) {
  double sum = 0.0;
  for (double b : sharing_betas) {
    sum += b;
  }
  return sharing_betas[0] - tau_rho * sharing_betas[0] * sharing_betas[0] / (tau_rho * sum + 1.0);
}
double mmse_variance(const std::vector<double>& sharing_betas, double tau_rho) {
  return sharing_betas[0] - mmse_error(sharing_betas, tau_rho);
}
double ls_error(const std::vector<double>& sharing_betas, double tau_rho) {
  double sum = 1.0 / tau_rho;
  for (std::size_t l = 1; l < sharing_betas.size(); ++l) {
    sum += sharing_betas[l];
  }
  return sum;
}

TEST(estimation_closed_forms, reproduce_reference_check_values) {
  // L = 4 cells sharing a pilot, beta = (1, 0.2, 0.1, 0.05), tau_p rho_p = 4, worked by hand from the
  // closed forms above (Björnson, Hoydis & Sanguinetti 2017): MMSE error 1 - 4 / (1 + 4 x 1.35) = 0.3750; LS error 0.35
  // + 1/4 = 0.6.
  EXPECT_NEAR(mmse_error({1.0, 0.2, 0.1, 0.05}, 4.0), 0.3750, 1e-12);
  EXPECT_NEAR(ls_error({1.0, 0.2, 0.1, 0.05}, 4.0), 0.6, 1e-12);
}

// Four cells, one user each, BS 0 sees cell l's user with gain beta_l = (1, 0.2, 0.1, 0.05); the
// other base stations see the same pattern rotated. tau_p = 4, rho_p = 1 (tau_p rho_p = 4).
// Pilot reuse 1: every cell shares the pilot; reuse 3 (fixed gains: group = cell mod 3): cell 3
// shares with cell 0, cells 1 and 2 use orthogonal pilots.
const std::vector<double> pattern = {1.0, 0.2, 0.1, 0.05};

std::string four_cell_text(const std::string& estimator, int reuse, double agc_backoff_db) {
  std::string gains = "[";
  for (int i_bs = 0; i_bs < 4; ++i_bs) {
    gains += i_bs == 0 ? "[" : ", [";
    for (int i_cell = 0; i_cell < 4; ++i_cell) {
      const double beta = pattern[static_cast<std::size_t>((i_cell - i_bs + 4) % 4)];
      gains += fmt::format("{}[{:.17g}]", i_cell == 0 ? "" : ", ", 10.0 * std::log10(beta));
    }
    gains += "]";
  }
  gains += "]";
  return fmt::format(R"(seed = 31337
[array]
antennas = 128
[cells]
gains_db = {}
[pilots]
length = 4
snr_db = 0
reuse = {}
[estimator]
kind = "{}"
[precoder]
kind = "mf"
[data]
symbols = 1
snr_db = 10
[frontend]
agc_backoff_db = {}
)",
                     gains, reuse, estimator, agc_backoff_db);
}

struct estimation_case {
  std::string name;
  std::string estimator;
  int reuse;
  double agc_backoff_db;
};

void PrintTo(const estimation_case& c, std::ostream* os) { *os << c.name; }

class estimation_error : public ::testing::TestWithParam<estimation_case> {};

TEST_P(estimation_error, matches_closed_form) {
  const estimation_case& c = GetParam();
  const scenario scen = make_scenario(four_cell_text(c.estimator, c.reuse, c.agc_backoff_db));
  const std::vector<double> sharing = c.reuse == 1 ? pattern : std::vector<double>{pattern[0], pattern[3]};
  const double expected = c.estimator == "mmse" ? mmse_error(sharing, 4.0) : ls_error(sharing, 4.0);

  const int num_trials = 400;
  std::vector<double> error_power;
  std::vector<double> estimate_power;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(i_trial));
    error_power.push_back((td.chan_est - td.channel_to_cell0[0]).cwiseAbs2().mean());
    estimate_power.push_back(td.chan_est.cwiseAbs2().mean());
  }
  // Per-antenna errors are i.i.d. complex Gaussian, so the per-trial mean over 128 antennas has a
  // relative spread of 1/sqrt(128) and the trial mean's standard error comes from the samples;
  // 4 standard errors (about 1.8 % at 400 trials).
  const mean_se mse = test::sample_mean(error_power);
  EXPECT_NEAR(mse.mean, expected, 4.0 * mse.se) << c.name << ", seed 31337, " << num_trials << " trials";
  EXPECT_LT(4.0 * mse.se, 0.05 * expected);
  if (c.estimator == "mmse") {
    // Orthogonality principle: E|h_hat|^2 = gamma = beta - MSE (same source).
    const mean_se var = test::sample_mean(estimate_power);
    EXPECT_NEAR(var.mean, mmse_variance(sharing, 4.0), 4.0 * var.se) << c.name;
  }
}

INSTANTIATE_TEST_SUITE_P(
    bjornson_2017, estimation_error,
    ::testing::Values(estimation_case{"mmse_reuse1", "mmse", 1, 12.0}, estimation_case{"ls_reuse1", "ls", 1, 12.0},
                      estimation_case{"mmse_reuse3", "mmse", 3, 20.0}, estimation_case{"ls_reuse3", "ls", 3, 3.0}),
    [](const ::testing::TestParamInfo<estimation_case>& param_info) { return param_info.param.name; });

// AGC: with unit-modulus pilots E|Y[m,t]|^2 = rho_p sum_{l,k} beta^0_{lk} + 1, so the mean adc
// power must be 10^(-agc_backoff_db/10) (definition of the AGC set point).
TEST(agc, expected_power_sits_at_the_backoff) {
  const scenario scen = make_scenario(four_cell_text("ls", 1, 9.0));
  const int num_trials = 200;
  std::vector<double> power;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    power.push_back(run_trial(scen, static_cast<std::uint64_t>(i_trial)).adc.cwiseAbs2().mean());
  }
  const mean_se p = test::sample_mean(power);
  EXPECT_NEAR(p.mean, std::pow(10.0, -0.9), 4.0 * p.se) << "seed 31337";
}

// Pilot families: orthogonal with energy tau_p (phi^H phi = tau_p I), unit-modulus / +-1 entries.
TEST(pilots, families_are_orthogonal) {
  for (const auto sequence : {pilot_sequence::dft, pilot_sequence::walsh}) {
    for (int length : {1, 2, 4, 8, 16, 64}) {
      const Eigen::MatrixXcd phi = pilot_family(sequence, length);
      const Eigen::MatrixXcd g = phi.adjoint() * phi;
      EXPECT_LT((g - length * Eigen::MatrixXcd::Identity(length, length)).norm(), 1e-12 * length * length)
          << "length " << length;
      EXPECT_LT((phi.cwiseAbs().array() - 1.0).abs().maxCoeff(), 1e-15);
    }
  }
  for (int length : {3, 5, 12}) {
    const Eigen::MatrixXcd phi = pilot_family(pilot_sequence::dft, length);
    EXPECT_LT((phi.adjoint() * phi - length * Eigen::MatrixXcd::Identity(length, length)).norm(),
              1e-12 * length * length);
  }
}

}  // namespace
}  // namespace fxmimo::golden
