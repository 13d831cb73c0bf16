// Link metrics (README "Evaluation") on constructed received blocks whose SINR and EVM are known.
#include "fxmimo/golden/link_metrics.hpp"

#include <gtest/gtest.h>

#include <cmath>

#include "fxmimo/golden/qam.hpp"
#include "fxmimo/golden/rng.hpp"
#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

Eigen::MatrixXcd random_symbols(int num_users, int num_sym, modulation mod, random_stream& rng) {
  Eigen::MatrixXcd s(num_users, num_sym);
  for (int i_user = 0; i_user < num_users; ++i_user) {
    for (int i_sym = 0; i_sym < num_sym; ++i_sym) {
      s(i_user, i_sym) = qam_map(mod, static_cast<std::uint32_t>(rng.uniform_below(1ULL << bits_per_symbol(mod))));
    }
  }
  return s;
}

// r = g s: the equaliser recovers g exactly, no error: EVM 0, SINR = |g|^2 / noise.
TEST(link_metrics, clean_gain_is_recovered) {
  random_stream rng(3);
  const Eigen::MatrixXcd s = random_symbols(3, 100, modulation::qam64, rng);
  const std::complex<double> g(0.3, -2.0);
  const link_metrics m = measure_link(g * s, s, 0.5);
  for (int k = 0; k < 3; ++k) {
    EXPECT_NEAR(std::abs(m.gain[static_cast<std::size_t>(k)] - g), 0.0, 1e-14);
    EXPECT_NEAR(m.sinr[static_cast<std::size_t>(k)], std::norm(g) / 0.5, 1e-12);
    EXPECT_LT(m.evm_pct[static_cast<std::size_t>(k)], 1e-12);
    EXPECT_NEAR(m.rate[static_cast<std::size_t>(k)], std::log2(1.0 + std::norm(g) / 0.5), 1e-12);
  }
}

// r = g s + e with e ~ CN(0, sigma^2) independent of s: EVM_rms = sigma / |g| = 1 / sqrt(SNR) for
// AWGN-like error, and SINR = |g|^2 / (sigma^2 + noise) (README "Evaluation"; EVM definition of 3GPP
// TS 38.104 Annex B, error power over reference power after one-tap equalisation). The error power
// is a mean of N exponential samples (relative standard error 1/sqrt(N)); 5 standard errors.
// sigma = 0.08 |g| is the 64QAM limit of TS 38.104 Table 6.5.2.2-1 (8 %, i.e. 21.9 dB).
TEST(link_metrics, additive_error_gives_evm_and_sinr) {
  random_stream rng(11);
  const int num_sym = 40000;
  const Eigen::MatrixXcd s = random_symbols(2, num_sym, modulation::qam16, rng);
  const std::complex<double> g(1.5, 0.5);
  const double sigma = 0.08 * std::abs(g);
  Eigen::MatrixXcd r = g * s;
  for (int k = 0; k < 2; ++k) {
    for (int n = 0; n < num_sym; ++n) {
      r(k, n) += sigma * rng.complex_normal();
    }
  }
  const link_metrics m = measure_link(r, s, 1.0);
  const double rel = 5.0 / std::sqrt(static_cast<double>(num_sym));
  for (std::size_t k = 0; k < 2; ++k) {
    EXPECT_NEAR(m.evm_pct[k], 8.0, 8.0 * rel / 2.0 + 1e-9) << "seed 11";  // sqrt halves the relative error
    EXPECT_NEAR(m.evm_db[k], 20.0 * std::log10(0.08), 0.1) << "seed 11";
    EXPECT_NEAR(m.sinr[k], std::norm(g) / (sigma * sigma + 1.0), rel * std::norm(g) / (sigma * sigma + 1.0))
        << "seed 11";
  }
}

TEST(link_metrics, implementation_evm_definition) {
  Eigen::MatrixXcd golden(2, 2);
  golden << 3.0, 0.0, 0.0, 4.0;
  Eigen::MatrixXcd fixed = golden;
  fixed(0, 1) = std::complex<double>(0.0, 0.5);
  // After the least-squares gain a = <f, g> / |f|^2 = 25 / 25.25 the residual energy is
  // |g|^2 (1 - |<f,g>|^2 / (|f|^2 |g|^2)) = 25 (1 - 25 / 25.25), so EVM = sqrt(0.25 / 25.25)
  // (worked by hand).
  EXPECT_NEAR(implementation_evm(fixed, golden), std::sqrt(0.25 / 25.25), 1e-15);
  // A pure complex gain is no error.
  EXPECT_NEAR(implementation_evm(std::complex<double>(0.5, -0.2) * golden, golden), 0.0, 1e-15);
}

}  // namespace
}  // namespace fxmimo::golden
