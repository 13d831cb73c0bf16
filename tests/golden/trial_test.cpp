// Whole trials: pilot contamination in a multi-cell network against its closed forms, and
// reproducibility of a trial.
#include "fxmimo/golden/trial.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <cmath>
#include <iostream>
#include <string>
#include <thread>
#include <vector>

#include "fxmimo/golden/qam.hpp"
#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

using test::jackknife;
using test::make_scenario;
using test::mean_se;

// ---------------------------------------------------------------------------------------------
// Pilot contamination. L = 4 cells, K = 2 users per cell, every user has gain 1 to its own BS and
// b = -6 dB to every other BS; tau_p = 6, rho_p = 1, rho_d = 10 dB, MMSE estimates, MR (MF)
// precoding at every BS with total-power normalisation. Every user of a BS is statistically
// alike, so the long-term Frobenius normalisation gives each user power p = rho_d / K.
//
// Finite M, UatF SINR of user k in cell 0 (Björnson, Hoydis & Sanguinetti, Massive MIMO Networks,
// 2017, Cor. 6.6 / eq. (6.47) with ideal hardware and uncorrelated fading; numbers from memory):
//   SINR = p M gamma^0 / (p K sum_l beta^l + p M sum_{l != 0, sharing} gamma^l + 1),
//   beta^l = gain BS l -> user, gamma^l = tau_p rho_p (beta^l)^2 psi^l,
//   psi^l = 1 / (tau_p rho_p sum_{j sharing with l} beta^l_{j} + 1).
// M -> infinity: (beta^0)^2 psi^0 / sum_{l != 0, sharing} (beta^l)^2 psi^l (Björnson eq. (6.51)),
// which in this symmetric case equals Marzetta's limit beta_00^2 / sum_{l != 0} beta_0l^2 over the
// sharing cells (Marzetta, IEEE TWC 9(11), 2010): 1 / ((L - 1) b^2) with reuse 1, 1 / b^2 with
// reuse 3 (fixed gains: pilot group = cell mod 3, so only cell 3 shares cell 0's pilots).
constexpr int num_cells = 4;
constexpr int num_users = 2;
constexpr int tau_p = 6;
constexpr double cross_db = -6.0;
constexpr double rho_d_db = 10.0;

bool shares_pilots(int reuse, int a, int b) { return a % reuse == b % reuse; }

double contamination_sinr(int num_ant, int reuse) {
  const double b = test::db_to_linear(cross_db);
  const double p = test::db_to_linear(rho_d_db) / num_users;
  const double tau_rho = tau_p * 1.0;
  auto beta = [b](int i_bs, int i_cell) { return i_bs == i_cell ? 1.0 : b; };
  auto gamma = [&](int i_bs) {
    double sharing = 0.0;
    for (int j = 0; j < num_cells; ++j) {
      if (shares_pilots(reuse, i_bs, j)) {
        sharing += beta(i_bs, j);
      }
    }
    return tau_rho * beta(i_bs, 0) * beta(i_bs, 0) / (tau_rho * sharing + 1.0);
  };
  double noncoherent = 0.0;
  double coherent = 0.0;
  for (int l = 0; l < num_cells; ++l) {
    noncoherent += beta(l, 0);
    if (l != 0 && shares_pilots(reuse, l, 0)) {
      coherent += gamma(l);
    }
  }
  return p * num_ant * gamma(0) / (p * num_users * noncoherent + p * num_ant * coherent + 1.0);
}

double marzetta_limit(int reuse) {
  const double b = test::db_to_linear(cross_db);
  int num_sharing = 0;
  for (int l = 1; l < num_cells; ++l) {
    num_sharing += shares_pilots(reuse, l, 0) ? 1 : 0;
  }
  return 1.0 / (num_sharing * b * b);
}

std::string contamination_text(int num_ant, int reuse) {
  return fmt::format(R"(seed = 2718
[array]
antennas = {}
[cells]
count = {}
users_per_cell = {}
user_gains_db = [0, 0]
cross_gain_db = {}
[pilots]
length = {}
snr_db = 0
reuse = {}
[estimator]
kind = "mmse"
[precoder]
kind = "mf"
[data]
symbols = 1
snr_db = {}
)",
                     num_ant, num_cells, num_users, cross_db, tau_p, reuse, rho_d_db);
}

// UatF SINR of cell 0's users measured from the golden nodes with long-term normalisation (the
// closed form's): a^l_{ki} = sqrt(rho_d / E||W_l||^2) (h^l_{0k})^T w^l_i from every BS's unscaled
// precoder and the true channels; SINR = |E a^0_kk|^2 / (sum_{l,i} E|a^l_ki|^2 - |E a^0_kk|^2 + 1).
mean_se measured_contamination_sinr(int num_ant, int reuse, int num_trials) {
  const scenario scen = make_scenario(contamination_text(num_ant, reuse));
  std::vector<Eigen::VectorXd> samples;
  for (int i_trial = 0; i_trial < num_trials; ++i_trial) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(i_trial));
    Eigen::VectorXd s(2 * num_cells + 2);
    for (int l = 0; l < num_cells; ++l) {
      const auto idx = static_cast<std::size_t>(l);
      const Eigen::MatrixXcd a = td.channel_to_cell0[idx].transpose() * td.cell_precoder[idx];
      s(l) = td.cell_precoder[idx].squaredNorm();
      s(num_cells + l) = a.cwiseAbs2().rowwise().sum().mean();
      if (l == 0) {
        s(2 * num_cells) = a.diagonal().real().mean();
        s(2 * num_cells + 1) = a.diagonal().imag().mean();
      }
    }
    samples.push_back(s);
  }
  const double rho = test::db_to_linear(rho_d_db);
  return jackknife(samples, [rho](const Eigen::VectorXd& m) {
    const double desired =
        rho / m(0) * (m(2 * num_cells) * m(2 * num_cells) + m(2 * num_cells + 1) * m(2 * num_cells + 1));
    double total = 0.0;
    for (int l = 0; l < num_cells; ++l) {
      total += rho / m(l) * m(num_cells + l);
    }
    return desired / (total - desired + 1.0);
  });
}

TEST(pilot_contamination, mf_sinr_approaches_the_large_array_limit) {
  const std::vector<int> antennas = {64, 256, 1024};
  std::vector<double> reuse1;
  std::vector<double> reuse3;
  for (int reuse : {1, 3}) {
    const double limit = marzetta_limit(reuse);
    for (int num_ant : antennas) {
      const int num_trials = num_ant >= 1024 ? 200 : (num_ant >= 256 ? 600 : 3000);
      const mean_se m = measured_contamination_sinr(num_ant, reuse, num_trials);
      const double expected = contamination_sinr(num_ant, reuse);
      std::cout << fmt::format("reuse {} M {:5d}: measured {:.4f} +- {:.4f}, eq. (6.47) {:.4f}, limit {:.4f}\n", reuse,
                               num_ant, m.mean, m.se, expected, limit);
      // 4 jackknife standard errors; the finite-M formula is exact for this statistic.
      EXPECT_NEAR(m.mean, expected, 4.0 * m.se) << "reuse " << reuse << ", M " << num_ant << ", seed 2718";
      // The check must be able to fail: 4 se stays below 3 %.
      EXPECT_LT(4.0 * m.se, 0.03 * expected);
      EXPECT_LT(m.mean, limit) << "the large-M limit bounds the finite-M SINR from above";
      (reuse == 1 ? reuse1 : reuse3).push_back(m.mean);
    }
  }
  // Growing M closes the gap to Marzetta's limit; at M = 1024 the reuse-1 SINR is within 10 % of
  // it (eq. (6.47) gives 3.6 %), while at M = 64 it is still far (eq. (6.47): 37 % below).
  const double limit1 = marzetta_limit(1);
  EXPECT_LT(limit1 - reuse1.back(), limit1 - reuse1.front());
  EXPECT_GT(reuse1.back(), 0.9 * limit1);
  EXPECT_LT(reuse1.front(), 0.75 * limit1);
  // Reuse 3 removes two of the three contaminating cells: higher SINR at every M.
  for (std::size_t i = 0; i < antennas.size(); ++i) {
    EXPECT_GT(reuse3[i], reuse1[i]) << "M " << antennas[i];
  }
}

// ---------------------------------------------------------------------------------------------
// Reproducibility: a trial depends only on (seed, trial index), not on what ran before it or on
// which thread runs it. Bit-exact comparison of every stored node.
void expect_same_trial(const scenario& scen, const trial_data& a, const trial_data& b) {
  EXPECT_EQ(a.seed, b.seed);
  EXPECT_TRUE(a.adc == b.adc);
  EXPECT_TRUE(a.pilot_acc == b.pilot_acc);
  EXPECT_TRUE(a.chan_est == b.chan_est);
  EXPECT_TRUE(a.gram == b.gram);
  EXPECT_TRUE(a.inverse == b.inverse);
  EXPECT_TRUE(a.weights == b.weights);
  EXPECT_EQ(a.gains.gain, b.gains.gain);
  const data_block da = whole_data(scen, a), db = whole_data(scen, b);
  EXPECT_TRUE(da.labels == db.labels);
  EXPECT_TRUE(da.tx == db.tx);
  EXPECT_TRUE(da.interference == db.interference);
  EXPECT_EQ(a.metrics.sinr, b.metrics.sinr);
  EXPECT_EQ(a.metrics.evm_pct, b.metrics.evm_pct);
}

TEST(trial, reproducible_in_any_order_and_thread) {
  const scenario scen = make_scenario(R"(seed = 123456789
[array]
antennas = 16
layout = "upa"
columns = 4
[cells]
count = 7
users_per_cell = 3
[channel]
model = "rician"
k_factor_db = 6
[pilots]
snr_db = 5
reuse = 3
[precoder]
kind = "rzf"
inversion = "neumann"
neumann_terms = 4
[data]
modulation = "64qam"
symbols = 12
snr_db = 15
)");
  const trial_data first = run_trial(scen, 5);
  run_trial(scen, 3);
  const trial_data again = run_trial(scen, 5);
  expect_same_trial(scen, first, again);
  trial_data threaded;
  std::thread worker([&] { threaded = run_trial(scen, 5); });
  worker.join();
  expect_same_trial(scen, first, threaded);
  const trial_data other = run_trial(scen, 6);
  EXPECT_FALSE(whole_data(scen, other).tx == whole_data(scen, first).tx)
      << "different trial indices must draw different numbers";
}

// The golden metrics, summed block by block about provisional gains, against the definition
// computed in two passes over the whole data phase at once (README "Evaluation": the gain
// g_k = sum r conj(s) / sum |s|^2, then the mean residual |r - g s|^2); N = 600 spans three
// blocks (256 + 256 + 88). Agreement to 1e-10 relative: the two differ only in double rounding.
TEST(trial, metrics_are_those_of_the_golden_block) {
  const scenario scen = make_scenario(R"(seed = 8
[array]
antennas = 32
[cells]
count = 3
users_per_cell = 4
[pilots]
snr_db = 10
[data]
snr_db = 20
symbols = 600
)");
  const trial_data td = run_trial(scen, 0);
  const data_block all = whole_data(scen, td);
  ASSERT_EQ(all.tx.cols(), 600);
  const Eigen::MatrixXcd r = td.amplitude * (td.channel_to_cell0[0].transpose() * all.tx + all.interference);
  for (Eigen::Index k = 0; k < r.rows(); ++k) {
    const std::complex<double> g =
        (r.row(k).array() * all.symbols.row(k).array().conjugate()).sum() / all.symbols.row(k).squaredNorm();
    const double error = (r.row(k) - g * all.symbols.row(k)).squaredNorm() / 600.0;
    const auto u = static_cast<std::size_t>(k);
    EXPECT_NEAR(std::abs(td.metrics.gain[u] - g) / std::abs(g), 0.0, 1e-12) << "user " << k;
    EXPECT_NEAR(td.metrics.sinr[u] / (std::norm(g) / (error + 1.0)), 1.0, 1e-10) << "user " << k;
    EXPECT_NEAR(td.metrics.evm_pct[u] / (100.0 * std::sqrt(error / std::norm(g))), 1.0, 1e-10) << "user " << k;
  }
  // The least-squares gain of a block against itself is 1 up to double rounding (a few eps).
  EXPECT_NEAR(implementation_evm(all.tx, all.tx), 0.0, 1e-14);
  EXPECT_NEAR(implementation_evm(1.01 * all.tx, all.tx), 0.0, 1e-14);  // a gain is aligned away
}

// The streamed blocks are the whole data phase cut in pieces: the labels of user k are the N
// labels drawn in a row from where its row starts, and each block's golden products are the
// block's own (symbol_block_size columns, the last the rest).
TEST(trial, blocks_are_the_data_phase_in_order) {
  const scenario scen = make_scenario(R"(seed = 21
[array]
antennas = 16
[cells]
count = 3
users_per_cell = 3
[pilots]
snr_db = 5
[data]
symbols = 530
snr_db = 10
)");
  const trial_data td = run_trial(scen, 4);
  const data_block all = whole_data(scen, td);
  data_stream stream(scen, td);
  data_block block;
  std::vector<int> firsts, sizes;
  while (stream.next(block)) {
    firsts.push_back(block.first);
    sizes.push_back(block.size());
    EXPECT_TRUE(block.labels == all.labels.middleCols(block.first, block.size()));
    EXPECT_TRUE(block.tx == Eigen::MatrixXcd(td.weights * block.symbols));
    EXPECT_EQ(block.interference.rows(), 3);
    EXPECT_EQ(block.interference.cols(), block.size());
  }
  EXPECT_EQ(firsts, (std::vector<int>{0, 256, 512}));
  EXPECT_EQ(sizes, (std::vector<int>{256, 256, 18}));
  const std::uint64_t num_labels = std::uint64_t{1} << bits_per_symbol(scen.data.mod);
  for (int k = 0; k < 3; ++k) {
    random_stream row = td.cell_labels[0].rows[static_cast<std::size_t>(k)];
    for (int n = 0; n < 530; ++n)
      ASSERT_EQ(all.labels(k, n), row.uniform_below(num_labels)) << "user " << k << " symbol " << n;
  }
}

}  // namespace
}  // namespace fxmimo::golden
