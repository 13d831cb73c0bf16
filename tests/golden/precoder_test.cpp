// Downlink precoding against published closed forms for i.i.d. Rayleigh fading, unit noise,
// equal large-scale gains beta = 1, single cell.
#include "fxmimo/golden/precoder.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <iostream>
#include <string>
#include <vector>

#include "fxmimo/golden/trial.hpp"
#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

using test::jackknife;
using test::make_scenario;
using test::mean_se;

// Single cell, K users at 0 dB, pilot SNR rho_p, downlink SNR rho_d.
std::string single_cell_text(int num_ant, int num_users, const std::string& estimator, const std::string& precoder,
                             double rho_d_db, double rho_p_db, int num_symbols, std::uint64_t seed) {
  std::string gains;
  for (int i_user = 0; i_user < num_users; ++i_user) {
    gains += i_user == 0 ? "0" : ", 0";
  }
  return fmt::format(R"(seed = {}
[array]
antennas = {}
[cells]
users_per_cell = {}
user_gains_db = [{}]
[pilots]
length = {}
snr_db = {}
[estimator]
kind = "{}"
[precoder]
kind = "{}"
[data]
modulation = "qpsk"
symbols = {}
snr_db = {}
)",
                     seed, num_ant, num_users, gains, num_users, rho_p_db, estimator, precoder, num_symbols, rho_d_db);
}

// ---------------------------------------------------------------------------------------------
// Closed forms (long-term "use-and-then-forget" SINR, power rho_d / K per user, eta = 1/K).
// MMSE estimate variance gamma = tau_p rho_p beta^2 / (1 + tau_p rho_p beta): Björnson, Hoydis &
// Sanguinetti, Massive MIMO Networks (2017), eq. (3.9) (equation number from memory).
double mmse_gamma(double beta, int tau_p, double rho_p) {
  return tau_p * rho_p * beta * beta / (1.0 + tau_p * rho_p * beta);
}
// MR: SINR = M rho gamma eta / (1 + rho beta); ZF: SINR = (M - K) rho gamma eta / (1 + rho (beta - gamma)).
// Yang & Marzetta, IEEE JSAC 31(2), 2013 (beta = 1; perfect CSI gamma = beta); Björnson et al. 2017,
// Sec. 6.3 for the imperfect-CSI forms (section from memory).
double mr_uatf(int num_ant, int num_users, double rho, double beta, double gamma) {
  return num_ant * rho * gamma / num_users / (1.0 + rho * beta);
}
double zf_uatf(int num_ant, int num_users, double rho, double beta, double gamma) {
  return (num_ant - num_users) * rho * gamma / num_users / (1.0 + rho * (beta - gamma));
}

TEST(precoder_closed_forms, reproduce_reference_check_values) {
  // Guards the helpers above against typos: check values of the closed forms above at M=64, K=8,
  // rho_d=10, tau_p=8, rho_p=1 (gamma = 0.8889), computed by hand to 4-5 significant digits.
  const double gamma = mmse_gamma(1.0, 8, 1.0);
  EXPECT_NEAR(gamma, 0.8889, 5e-5);
  EXPECT_NEAR(mr_uatf(64, 8, 10.0, 1.0, 1.0), 7.2727, 5e-5);
  EXPECT_NEAR(zf_uatf(64, 8, 10.0, 1.0, 1.0), 70.0, 1e-12);
  EXPECT_NEAR(mr_uatf(64, 8, 10.0, 1.0, gamma), 6.4646, 5e-5);
  EXPECT_NEAR(zf_uatf(64, 8, 10.0, 1.0, gamma), 29.4737, 5e-5);
}

// ---------------------------------------------------------------------------------------------
// Use-and-then-forget SINR measured on the golden precoder node. The closed forms assume
// long-term normalisation: x = sqrt(rho / E||W||_F^2) W s. We therefore take the unscaled
// precoder node W of every trial, estimate E||W||_F^2 by its trial mean, and form
//   a_kj = sqrt(rho / E||W||^2) h_k^T w_j  (h_k the true channel),
//   SINR = |E a_kk|^2 / (sum_j E|a_kj|^2 - |E a_kk|^2 + 1),
// the expectations being trial means (users are statistically identical, so the user average of
// a_kk and of sum_j |a_kj|^2 is used). The per-realisation Frobenius normalisation the datapath
// uses would give a slightly different number (Jensen's inequality on the normalisation), hence this
// statistic.
struct uatf_case {
  std::string name;
  std::string estimator;
  std::string precoder;
  int num_ant;
  int num_users;
  int nominal_trials;
};

void PrintTo(const uatf_case& c, std::ostream* os) { *os << c.name; }

class uatf_sinr : public ::testing::TestWithParam<uatf_case> {};

TEST_P(uatf_sinr, matches_closed_form) {
  const uatf_case& c = GetParam();
  const double rho_d_db = 10.0;
  const double rho_p_db = 0.0;
  const std::uint64_t seed = 777;
  const scenario scen =
      make_scenario(single_cell_text(c.num_ant, c.num_users, c.estimator, c.precoder, rho_d_db, rho_p_db, 1, seed));
  const double rho = test::db_to_linear(rho_d_db);
  const int num_trials = c.nominal_trials;

  std::vector<Eigen::VectorXd> samples;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(i_trial));
    const Eigen::MatrixXcd a = td.channel_to_cell0[0].transpose() * td.precoder;  // h_k^T w_j
    Eigen::VectorXd s(4);
    s(0) = td.precoder.squaredNorm();
    s(1) = a.diagonal().real().mean();
    s(2) = a.diagonal().imag().mean();
    s(3) = a.cwiseAbs2().rowwise().sum().mean();
    samples.push_back(s);
  }
  const auto sinr_of = [rho](const Eigen::VectorXd& m) {
    const double scale = rho / m(0);
    const double desired = scale * (m(1) * m(1) + m(2) * m(2));
    return desired / (scale * m(3) - desired + 1.0);
  };
  const mean_se measured = jackknife(samples, sinr_of);

  const double gamma = c.estimator == "perfect" ? 1.0 : mmse_gamma(1.0, c.num_users, test::db_to_linear(rho_p_db));
  const double expected = c.precoder == "mf" ? mr_uatf(c.num_ant, c.num_users, rho, 1.0, gamma)
                                             : zf_uatf(c.num_ant, c.num_users, rho, 1.0, gamma);
  // Tolerance: 4 jackknife standard errors (the ratio estimator's O(1/trials) bias is far below
  // one standard error at these counts).
  EXPECT_NEAR(measured.mean, expected, 4.0 * measured.se)
      << c.name << ": seed " << seed << ", " << num_trials << " trials, se " << measured.se;
  std::cout << c.name << ": measured " << measured.mean << " +- " << measured.se << ", closed form " << expected
            << "\n";
  // The test must be able to fail: the tolerance stays below a 2 % error.
  EXPECT_LT(4.0 * measured.se, 0.02 * expected) << c.name;
}

INSTANTIATE_TEST_SUITE_P(yang_marzetta_2013, uatf_sinr,
                         ::testing::Values(uatf_case{"mf_perfect_64x8", "perfect", "mf", 64, 8, 3000},
                                           uatf_case{"mf_perfect_128x16", "perfect", "mf", 128, 16, 1500},
                                           uatf_case{"zf_perfect_64x8", "perfect", "zf", 64, 8, 600},
                                           uatf_case{"zf_perfect_128x16", "perfect", "zf", 128, 16, 300},
                                           uatf_case{"mf_mmse_64x8", "mmse", "mf", 64, 8, 3000},
                                           uatf_case{"zf_mmse_64x8", "mmse", "zf", 64, 8, 600}),
                         [](const ::testing::TestParamInfo<uatf_case>& param_info) { return param_info.param.name; });

// ---------------------------------------------------------------------------------------------
// Zero forcing, perfect CSI, through the whole golden chain (normalisation, tx, evaluate_downlink).
// With per-realisation Frobenius normalisation every user gets SINR = rho / tr(G^-1) (G = H^H H),
// so 1/SINR = tr(G^-1) / rho and E[1/SINR] = K / (rho (M - K)) exactly, from the complex
// inverse-Wishart mean E[G^-1] = I / (M - K) (Tulino & Verdú, Random Matrix Theory and Wireless
// Communications, 2004, Lemma 2.10 (from memory)). The "mean SINR" rho (M - K) / K of the
// issue is therefore checked as the harmonic mean 1 / E[1/SINR]; the arithmetic mean of the
// per-realisation SINR is larger by Jensen's inequality and is only checked from below.
class zf_perfect_sinr : public ::testing::TestWithParam<std::pair<int, int>> {};

TEST_P(zf_perfect_sinr, harmonic_mean_matches_inverse_wishart) {
  const auto [num_ant, num_users] = GetParam();
  const std::uint64_t seed = 99;
  const double rho_d_db = 10.0;
  const scenario scen = make_scenario(single_cell_text(num_ant, num_users, "perfect", "zf", rho_d_db, 0.0, 8, seed));
  const double rho = test::db_to_linear(rho_d_db);
  const int num_trials = 400;
  std::vector<double> inverse_sinr;
  std::vector<double> sinr;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(i_trial));
    double sum_inv = 0.0;
    double sum = 0.0;
    for (double v : td.metrics.sinr) {
      sum_inv += 1.0 / v;
      sum += v;
    }
    inverse_sinr.push_back(sum_inv / num_users);
    sinr.push_back(sum / num_users);
  }
  const mean_se inv = test::sample_mean(inverse_sinr);
  const double expected_inv = num_users / (rho * (num_ant - num_users));
  EXPECT_NEAR(inv.mean, expected_inv, 4.0 * inv.se) << "seed " << seed << ", " << num_trials << " trials";
  EXPECT_LT(4.0 * inv.se, 0.01 * expected_inv);
  const mean_se arith = test::sample_mean(sinr);
  EXPECT_GE(arith.mean + 4.0 * arith.se, 1.0 / expected_inv) << "Jensen: E[SINR] >= 1 / E[1/SINR]";
}

INSTANTIATE_TEST_SUITE_P(tulino_verdu_2004, zf_perfect_sinr, ::testing::Values(std::pair{64, 8}, std::pair{128, 16}),
                         [](const ::testing::TestParamInfo<std::pair<int, int>>& param_info) {
                           return fmt::format("M{}_K{}", param_info.param.first, param_info.param.second);
                         });

// ---------------------------------------------------------------------------------------------
// Regularised ZF, W = conj(H (G + (K/rho) I)^-1), per-realisation Frobenius normalisation, per-
// realisation SINR_k = |a_kk|^2 / (sum_{j != k} |a_kj|^2 + 1): the large-system limit with
// beta' = K/M, s = M rho / K is SINR = ((1 - beta') s - 1 + sqrt(((1 - beta') s - 1)^2 + 4 s)) / 2
// (Tse & Hanly 1999 / Verdú & Shamai 1999 (from memory)); finite M sits 0.5-2 % above it
// (a Monte Carlo run on this kind of machine when the test was written), so the accepted band is [-4 se, +3 % + 4 se].
TEST(rzf, large_system_limit) {
  const int num_ant = 128;
  const int num_users = 32;
  const std::uint64_t seed = 4242;
  const scenario scen = make_scenario(single_cell_text(num_ant, num_users, "perfect", "rzf", 10.0, 0.0, 1, seed));
  const double rho = 10.0;
  const int num_trials = 100;
  std::vector<double> sinr;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(i_trial));
    const Eigen::MatrixXcd a = std::sqrt(rho / td.digital_power) * (td.channel_to_cell0[0].transpose() * td.weights);
    double sum = 0.0;
    for (int k = 0; k < num_users; ++k) {
      const double desired = std::norm(a(k, k));
      sum += desired / (a.row(k).squaredNorm() - desired + 1.0);
    }
    sinr.push_back(sum / num_users);
  }
  const mean_se m = test::sample_mean(sinr);
  const double load = static_cast<double>(num_users) / num_ant;
  const double s = num_ant * rho / num_users;
  const double u = (1.0 - load) * s - 1.0;
  const double limit = 0.5 * (u + std::sqrt(u * u + 4.0 * s));
  EXPECT_GE(m.mean, limit - 4.0 * m.se) << "seed " << seed;
  EXPECT_LE(m.mean, 1.03 * limit + 4.0 * m.se) << "seed " << seed;
}

// ---------------------------------------------------------------------------------------------
// Conventions: user k receives h_k^T x, so zero forcing with perfect CSI must give
// H^T * precoder = I (definition of the ZF precoder). Error bound: cond(G) * K * eps with
// cond(G) < 30 for 32 x 8 i.i.d. Rayleigh in practice (a Monte Carlo run on this kind of machine:
// 99.9th percentile of log2 cond about 2.2 at 64 x 8); we allow 1e-12.
TEST(precoder_convention, zero_forcing_inverts_the_channel) {
  const scenario scen = make_scenario(single_cell_text(32, 8, "perfect", "zf", 10.0, 0.0, 4, 5));
  for (std::uint64_t i_trial = 0; i_trial < 5; ++i_trial) {
    const trial_data td = run_trial(scen, i_trial);
    const Eigen::MatrixXcd product = td.channel_to_cell0[0].transpose() * td.precoder;
    EXPECT_LT((product - Eigen::MatrixXcd::Identity(8, 8)).norm(), 1e-12) << "trial " << i_trial << ", seed 5";
    // Total-power normalisation: ||weights||_F^2 = P_dig = M 10^(-dac_backoff/10) (12 dB default).
    EXPECT_NEAR(td.weights.squaredNorm(), 32.0 * std::pow(10.0, -1.2), 1e-12 * 32.0);
  }
}

TEST(precoder_convention, per_antenna_normalisation_sets_every_row) {
  std::string text = single_cell_text(16, 4, "perfect", "zf", 10.0, 0.0, 4, 5);
  text.replace(text.find("kind = \"zf\""), 11, "kind = \"zf\"\nnormalization = \"per_antenna\"");
  const scenario scen = make_scenario(text);
  const trial_data td = run_trial(scen, 0);
  ASSERT_EQ(td.norm.size(), 16);
  for (int i_ant = 0; i_ant < 16; ++i_ant) {
    EXPECT_NEAR(td.weights.row(i_ant).squaredNorm(), std::pow(10.0, -1.2), 1e-14) << "antenna " << i_ant;
  }
}

}  // namespace
}  // namespace fxmimo::golden
