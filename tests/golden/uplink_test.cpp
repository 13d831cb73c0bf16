// The golden uplink against outside references: mean SINR of ZF and MRC combining with perfect
// CSI against their closed forms, the per-trial SINR of ZF, MRC and MMSE against the
// instantaneous formulas computed here from the true channel, uncoded BER against the exact
// Gray-QAM bit error probability, max-log against exact LLRs, the independence of the uplink's
// random stream, and the [uplink] table's errors.
#include "fxmimo/golden/uplink.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <iostream>
#include <string>
#include <vector>

#include "fxmimo/golden/qam.hpp"
#include "fxmimo/golden/rng.hpp"
#include "fxmimo/golden/trial.hpp"
#include "golden_test_support.hpp"

namespace fxmimo::golden {
namespace {

using test::make_scenario;
using test::mean_se;
using test::sample_mean;

// One cell, K users at 0 dB, i.i.d. Rayleigh, perfect CSI: the textbook setting. The downlink
// data phase is cut to one symbol (only its precoder's inverse is reused by the uplink).
std::string single_cell_text(int num_ant, int num_users, const std::string& precoder, double ul_snr_db,
                             const std::string& mod, int num_symbols, const std::string& combiner, std::uint64_t seed) {
  std::string gains = "[0";
  for (int k = 1; k < num_users; ++k) gains += ", 0";
  gains += "]";
  return fmt::format(R"(seed = {}
[array]
antennas = {}
[cells]
users_per_cell = {}
user_gains_db = {}
[pilots]
snr_db = 0
[estimator]
kind = "perfect"
[precoder]
{}
[data]
symbols = 1
snr_db = 10
[uplink]
snr_db = {:.17g}
modulation = "{}"
symbols = {}
combiner = "{}"
)",
                     seed, num_ant, num_users, gains, precoder, ul_snr_db, mod, num_symbols, combiner);
}

std::string zf_precoder() { return "kind = \"zf\""; }
std::string rzf_precoder_for(double ul_snr_db) {
  return fmt::format("kind = \"rzf\"\nregularizer = {:.17g}", std::pow(10.0, -ul_snr_db / 10.0));
}

// ---------------------------------------------------------------------------------------------
// Instantaneous SINR of user k with the true channel H (M x K), y = sqrt(rho) H s + n,
// E|s|^2 = 1, n ~ CN(0, I) (the uplink model of uplink.hpp):
//   ZF:   rho / [(H^H H)^-1]_kk (Ngo, Larsson & Marzetta, IEEE Trans. Commun. 61(4), 2013,
//         Sec. III; from memory);
//   MRC:  rho ||h_k||^4 / (rho sum_{j != k} |h_k^H h_j|^2 + ||h_k||^2) (same paper, same
//         section; from memory);
//   MMSE: rho h_k^H (I + rho sum_{j != k} h_j h_j^H)^-1 h_k (Tse & Viswanath, Fundamentals of
//         Wireless Communication, 2005, Sec. 8.3.3; from memory). This is the SINR of the MMSE
//         output after its own bias is divided out, which the one-tap fit of measure_uplink does.
// Written here from the definitions, with Eigen's LU, independently of the golden inverse.
std::vector<double> instantaneous_sinr(const std::string& combiner, const Eigen::MatrixXcd& h, double rho) {
  const Eigen::Index num_ant = h.rows();
  const Eigen::Index num_users = h.cols();
  std::vector<double> out;
  if (combiner == "zf") {
    const Eigen::MatrixXcd inv = (h.adjoint() * h).partialPivLu().inverse();
    for (Eigen::Index k = 0; k < num_users; ++k) out.push_back(rho / inv(k, k).real());
  } else if (combiner == "mrc") {
    for (Eigen::Index k = 0; k < num_users; ++k) {
      const double norm2 = h.col(k).squaredNorm();
      double interference = 0.0;
      for (Eigen::Index j = 0; j < num_users; ++j)
        if (j != k) interference += std::norm(h.col(k).dot(h.col(j)));  // dot conjugates the first
      out.push_back(rho * norm2 * norm2 / (rho * interference + norm2));
    }
  } else {
    for (Eigen::Index k = 0; k < num_users; ++k) {
      Eigen::MatrixXcd a = Eigen::MatrixXcd::Identity(num_ant, num_ant);
      for (Eigen::Index j = 0; j < num_users; ++j)
        if (j != k) a += rho * h.col(j) * h.col(j).adjoint();
      const Eigen::VectorXcd x = a.partialPivLu().solve(h.col(k));
      out.push_back(rho * h.col(k).dot(x).real());
    }
  }
  return out;
}

struct sinr_run {
  mean_se inverse_sinr;  ///< mean over trials of the per-trial mean over users of 1 / SINR_fit
  mean_se ratio;         ///< mean over trials of mean_k SINR_formula / SINR_fit
};

sinr_run run_sinr(const scenario& scen, const std::string& combiner, int num_trials) {
  const double rho = scen.uplink_snr();
  std::vector<double> inv, ratio;
  for (int t = 0; t < num_trials; ++t) {
    const trial_data td = run_trial(scen, static_cast<std::uint64_t>(t));
    const uplink_metrics& m = td.uplink->metrics;
    const std::vector<double> exact = instantaneous_sinr(combiner, td.channel_to_cell0[0], rho);
    double a = 0.0, b = 0.0;
    for (std::size_t k = 0; k < m.sinr.size(); ++k) {
      a += 1.0 / m.sinr[k];
      b += exact[k] / m.sinr[k];
    }
    inv.push_back(a / static_cast<double>(m.sinr.size()));
    ratio.push_back(b / static_cast<double>(m.sinr.size()));
  }
  return {sample_mean(inv), sample_mean(ratio)};
}

// 1. Mean SINR of ZF and MRC against the closed forms; per-trial SINR of ZF, MRC (and MMSE at
// the first size) against the instantaneous formulas above.
//
// Closed forms (Ngo, Larsson & Marzetta 2013, Sec. III, the lower bounds on the rates with
// perfect CSI, log2(1 + 1 / E[1 / SINR]); from memory):
//   ZF:  E[1 / SINR_k] = E[[(H^H H)^-1]_kk] / rho = 1 / (rho (M - K)): H^H H is complex Wishart
//        W_K(M, I) and E[W^-1] = I / (M - K) (Tulino & Verdú, Random Matrix Theory and Wireless
//        Communications, 2004, Lemma 2.10; from memory).
//   MRC: 1 / SINR_k = sum_{j != k} |h_k^H h_j|^2 / ||h_k||^4 + 1 / (rho ||h_k||^2)
//        = (sum_{j != k} z_j + 1 / rho) / ||h_k||^2, z_j = |h_k^H h_j|^2 / ||h_k||^2.
//        Given h_k, h_k^H h_j / ||h_k|| is CN(0, 1) (a unit-norm projection of an i.i.d. CN(0, I)
//        vector independent of h_k), so z_j ~ Exp(1) whatever h_k is: z_j is independent of
//        ||h_k||^2 and the expectation factorises:
//        E[1 / SINR] = ((K - 1) + 1 / rho) E[1 / ||h_k||^2], ||h_k||^2 ~ Gamma(M, 1), whose
//        inverse has mean 1 / (M - 1). Hence 1 / E[1 / SINR] = rho (M - 1) / (rho (K - 1) + 1).
//
// The SINR of measure_uplink is fitted over the N symbols of a trial: r_i = g0 s_i + v_i with v
// zero-mean, independent across i and of s (noise plus the other users' QPSK symbols), |s_i| = 1.
// The least-squares residual err = ||v||^2 - |s^H v|^2 / N has E[err] = (N - 1) sigma^2 exactly,
// and |g|^2 N = N |g0 + s^H v / N|^2 has mean N |g0|^2 + sigma^2. So E[1 / SINR_fit] =
// (1 / SINR)(N - 1) / N (1 + O(1 / (N SINR)) + O(1 / N) from the ratio's Jensen gap): the closed
// forms are multiplied by (N - 1) / N and a remaining bias of 1 / N (relative) is allowed.
//
// Sampling error: the per-trial mean over users of 1 / SINR_fit is one sample per trial (trials are
// independent); its standard error over the trials is the sample one. Tolerance: 4.5 standard
// errors (two-sided normal tail 7e-6 per check, CLT over >= 200 trials) plus the 1 / N bias.
// Spread expected (to size the trial counts): ZF, 1 / [(H^H H)^-1]_kk ~ Gamma(M - K + 1, 1), so
// the relative std of 1 / SINR is 1 / sqrt(M - K - 1) = 13.5 % at (64, 8); MRC, sqrt(K - 1) /
// (K - 1 + 1 / rho) and 1 / sqrt(M - 2) combined, 38 % at (64, 8); divided by sqrt(K T) with
// T = 500 that is 0.2 % and 0.6 % if the users of a trial were uncorrelated. Measured standard
// errors are 0.23 % (ZF) and 0.8 % (MRC, whose users share the cross terms |h_k^H h_j|^2).
//
// The conditional ratio SINR_formula / SINR_fit has mean (N - 1) / N (same argument) and a
// spread of about 1 / sqrt(N) per user (err is a sum of N squared residuals): its check is far
// sharper and tests the per-trial computation; the same 4.5 standard errors + 1 / N.
TEST(uplink, combiner_sinr_matches_closed_forms) {
  const double ul_snr_db = 5.0;
  const double rho = std::pow(10.0, ul_snr_db / 10.0);
  const int num_symbols = 512;
  const double n = num_symbols;
  const double fit = (n - 1.0) / n;
  struct array_size {
    int num_ant, num_users, num_trials;
  };
  for (const array_size& sz : {array_size{64, 8, 500}, array_size{128, 16, 200}}) {
    const double m = sz.num_ant, k = sz.num_users;
    for (const char* combiner_name_c : {"zf", "mrc", "mmse"}) {
      const std::string combiner = combiner_name_c;
      if (combiner == "mmse" && sz.num_ant != 64) continue;  // one size is enough for the formula check
      const std::string precoder = combiner == "mmse" ? rzf_precoder_for(ul_snr_db) : zf_precoder();
      const scenario scen = make_scenario(
          single_cell_text(sz.num_ant, sz.num_users, precoder, ul_snr_db, "qpsk", num_symbols, combiner, 4242));
      const sinr_run r = run_sinr(scen, combiner, sz.num_trials);
      // Conditional check against the instantaneous formula.
      std::cout << fmt::format("M {:3d} K {:2d} {:4s}: SINR_formula / SINR_fit = {:.5f} +- {:.5f} (expected {:.5f})\n",
                               sz.num_ant, sz.num_users, combiner, r.ratio.mean, r.ratio.se, fit);
      EXPECT_NEAR(r.ratio.mean, fit, 4.5 * r.ratio.se + 1.0 / n) << combiner << " M " << sz.num_ant;
      EXPECT_LT(4.5 * r.ratio.se, 0.005) << "the conditional check must stay sharp";
      if (combiner == "mmse") continue;
      // Closed form of the mean.
      const double closed = combiner == "zf" ? 1.0 / (rho * (m - k)) : ((k - 1.0) + 1.0 / rho) / (m - 1.0);
      const double expected = closed * fit;
      std::cout << fmt::format(
          "M {:3d} K {:2d} {:4s}: 1/E[1/SINR] measured {:.4f} +- {:.4f}, closed form {:.4f}, measured / closed "
          "{:.4f}\n",
          sz.num_ant, sz.num_users, combiner, 1.0 / r.inverse_sinr.mean,
          r.inverse_sinr.se / std::pow(r.inverse_sinr.mean, 2), 1.0 / closed, closed / r.inverse_sinr.mean);
      EXPECT_NEAR(r.inverse_sinr.mean, expected, 4.5 * r.inverse_sinr.se + expected / n)
          << combiner << " M " << sz.num_ant << " K " << sz.num_users;
      // The check must be able to fail: the band stays within 5 % of the value (about 1.2 % for
      // ZF and 3.8 % for MRC at (64, 8); an off-by-one in K moves the MRC form by 13 %, a gain or
      // SNR error of 0.25 dB moves either by 6 %).
      EXPECT_LT(4.5 * r.inverse_sinr.se + expected / n, 0.05 * expected);
    }
  }
}

// 1b. The uplink's own inverse (inverse = "own"): with a matched-filter precoder there is no
// downlink inverse at all, and the ZF and MMSE combiners still meet the instantaneous formulas
// above (Ngo, Larsson & Marzetta 2013; Tse & Viswanath 2005, Sec. 8.3.3), with the same
// tolerance; with the precoder whose inverse it would share, the own inverse gives the shared
// combiner's outputs to rounding (both are inverses of the same matrix: LDL^H here, the
// precoder's inversion there; relative 1e-9 is far above the double rounding of K = 8 and far
// below any modelling difference, e.g. a loading off by 1 % moves MMSE outputs by about 1e-3).
TEST(uplink, own_inverse_meets_the_formulas_without_a_downlink_inverse) {
  const double ul_snr_db = 5.0;
  const int num_symbols = 512;
  const double n = num_symbols;
  const double fit = (n - 1.0) / n;
  for (const char* combiner_c : {"zf", "mmse"}) {
    const std::string combiner = combiner_c;
    const scenario scen =
        make_scenario(single_cell_text(64, 8, "kind = \"mf\"", ul_snr_db, "qpsk", num_symbols, combiner, 5151) +
                      "inverse = \"own\"\n");
    ASSERT_TRUE(scen.uplink.own_inverse);
    const sinr_run r = run_sinr(scen, combiner, 300);
    std::cout << fmt::format("own inverse, MF precoder, {:4s}: SINR_formula / SINR_fit = {:.5f} +- {:.5f}\n", combiner,
                             r.ratio.mean, r.ratio.se);
    EXPECT_NEAR(r.ratio.mean, fit, 4.5 * r.ratio.se + 1.0 / n) << combiner;
    EXPECT_LT(4.5 * r.ratio.se, 0.005) << "the conditional check must stay sharp";
    const trial_data td = run_trial(scen, 3);
    EXPECT_EQ(td.inverse.size(), 0) << "an MF precoder has no inverse";
    ASSERT_EQ(td.uplink->inverse.rows(), 8);

    // Against the shared inverse of the matching precoder: same outputs to rounding.
    const std::string shared_precoder = combiner == "mmse" ? rzf_precoder_for(ul_snr_db) : zf_precoder();
    const scenario shared =
        make_scenario(single_cell_text(64, 8, shared_precoder, ul_snr_db, "qpsk", num_symbols, combiner, 5151));
    const scenario own =
        make_scenario(single_cell_text(64, 8, shared_precoder, ul_snr_db, "qpsk", num_symbols, combiner, 5151) +
                      "inverse = \"own\"\n");
    const trial_data a = run_trial(shared, 3), b = run_trial(own, 3);
    const double scale = a.uplink->equalised.norm();
    EXPECT_LT((a.uplink->equalised - b.uplink->equalised).norm(), 1e-9 * scale) << combiner;
    EXPECT_LT((a.inverse - b.uplink->inverse).norm(), 1e-9 * a.inverse.norm()) << combiner;
    EXPECT_TRUE(a.uplink->labels == b.uplink->labels);
    EXPECT_EQ(a.uplink->metrics.total_bit_errors, b.uplink->metrics.total_bit_errors) << combiner;
  }
}

// ---------------------------------------------------------------------------------------------
// 2. Uncoded BER of one user (K = 1) against the exact bit error probability of square Gray QAM.
//
// With K = 1 and ZF (the downlink inverse is 1 / ||h||^2), the combined output is
// sqrt(rho) s + h^H n / ||h||^2: an AWGN channel of gain 1 with Es / N0 = gamma = rho ||h||^2
// (Es = E|s|^2 = 1, N0 = the complex noise variance 1 / (rho ||h||^2)). On the odd-integer grid
// (divide by qam_step = d) the noise per axis has variance sigma^2 = N0 / (2 d^2).
//
// Exact BER of Gray square Q-QAM, L = sqrt(Q) levels per axis, Cho & Yoon, "On the general BER
// expression of one- and two-dimensional amplitude modulations", IEEE Trans. Commun. 50(7), 2002,
// eqs. (14)-(16) (from memory; numbering not certain):
//   P_b(k) = (1 / L) sum_{i=0}^{(1 - 2^-k) L - 1} (-1)^floor(i 2^(k-1) / L)
//            (2^(k-1) - floor(i 2^(k-1) / L + 1/2)) erfc((2i + 1) sqrt(3 gamma / (2 (Q - 1)))),
//   P_b = (1 / log2 L) sum_{k=1}^{log2 L} P_b(k),
// with gamma = log2(Q) Eb / N0 = Es / N0. Written in Q(x) = erfc(x / sqrt 2) / 2 the argument is
// (2i + 1) / sigma: sqrt(3 gamma / (2 (Q - 1))) sqrt 2 = sqrt(3 gamma / (Q - 1)) = 1 / sigma, as
// d^2 = 3 / (2 (Q - 1)). Checks of the form, worked by hand: QPSK (L = 2) gives
// P_b = erfc(sqrt(gamma / 2)) / 2 = Q(sqrt(gamma)) (Proakis & Salehi, Digital Communications,
// 5th ed., Sec. 4.3; from memory); 16-QAM gives (3 Q(x) + 2 Q(3x) - Q(5x)) / 4, x = sqrt(gamma / 5),
// the well-known exact 16-QAM Gray BER.
double cho_yoon_ber(int bits, double gamma) {
  const int half = bits / 2;
  const double l = std::ldexp(1.0, half);
  const double q = l * l;
  const double arg = std::sqrt(3.0 * gamma / (2.0 * (q - 1.0)));
  double total = 0.0;
  for (int kk = 1; kk <= half; ++kk) {
    const double p = std::ldexp(1.0, kk - 1);  // 2^(k-1)
    const int last = static_cast<int>((1.0 - std::ldexp(1.0, -kk)) * l) - 1;
    double pk = 0.0;
    for (int i = 0; i <= last; ++i) {
      const double sign = (static_cast<int>(std::floor(i * p / l)) % 2 == 0) ? 1.0 : -1.0;
      const double weight = p - std::floor(i * p / l + 0.5);
      pk += sign * weight * std::erfc((2.0 * i + 1.0) * arg);
    }
    total += pk / l;
  }
  return total / half;
}

double q_function(double x) { return 0.5 * std::erfc(x / std::sqrt(2.0)); }

// The same probability summed directly over decision regions, per axis (independent of the
// closed form above): levels a_i = 2i - (L - 1), decision region of level j is
// [a_j - 1, a_j + 1] (the outer ones open), binary-reflected Gray label i ^ (i >> 1) per axis
// (common practice; the labelling documented in qam.hpp), noise N(0, sigma^2) per axis.
// P(u < z < v) for z ~ N(0, 1), from tail probabilities only (no 1 - (1 - tiny) cancellation).
double interval_probability(double u, double v) {
  if (u >= 0.0) return q_function(u) - q_function(v);
  if (v <= 0.0) return q_function(-v) - q_function(-u);
  return 1.0 - q_function(-u) - q_function(v);
}

double region_sum_ber(int bits, double gamma) {
  const int half = bits / 2;
  const int l = 1 << half;
  const double d2 = 3.0 / (2.0 * (l * l - 1.0));
  const double sigma = std::sqrt(1.0 / (2.0 * gamma * d2));
  auto bit = [half](int i, int t) { return ((i ^ (i >> 1)) >> (half - 1 - t)) & 1; };
  double errors = 0.0;
  for (int i = 0; i < l; ++i) {
    const double a = 2.0 * i - (l - 1);
    for (int j = 0; j < l; ++j) {
      const double centre = 2.0 * j - (l - 1);
      const double lo = j == 0 ? -HUGE_VAL : centre - 1.0;
      const double hi = j == l - 1 ? HUGE_VAL : centre + 1.0;
      const double p = interval_probability((lo - a) / sigma, (hi - a) / sigma);
      for (int t = 0; t < half; ++t) errors += bit(i, t) != bit(j, t) ? p : 0.0;
    }
  }
  return errors / (l * half);
}

// The two computations agree to rounding (sums of <= 64 terms of size <= 1, each to a few eps:
// 1e-13 absolute on values >= 1e-4, so relative 1e-9 is generous), and reduce to the hand-worked
// QPSK and 16-QAM forms.
TEST(uplink, gray_qam_ber_forms_agree) {
  for (double gamma_db : {0.0, 6.0, 12.0, 18.0}) {
    const double gamma = std::pow(10.0, gamma_db / 10.0);
    for (int bits : {2, 4, 6, 8}) {
      const double a = cho_yoon_ber(bits, gamma), b = region_sum_ber(bits, gamma);
      EXPECT_NEAR(a / b, 1.0, 1e-9) << "bits " << bits << " gamma " << gamma_db << " dB";
    }
    EXPECT_NEAR(cho_yoon_ber(2, gamma) / q_function(std::sqrt(gamma)), 1.0, 1e-12);
    const double x = std::sqrt(gamma / 5.0);
    EXPECT_NEAR(
        cho_yoon_ber(4, gamma) / ((3.0 * q_function(x) + 2.0 * q_function(3.0 * x) - q_function(5.0 * x)) / 4.0), 1.0,
        1e-12);
  }
}

// M = 4 receive antennas, so that ||h||^2 ~ Gamma(4, 1) varies from trial to trial and the
// expected count is an average of the AWGN form over the trials' own gammas (computed here from
// the true channel, so the check is conditional on the channels and has no fading variance).
//
// Tolerance: given the channels, the error counts of different symbols and axes are independent;
// the count X of one axis of one symbol lies in 0..b/2, so Var X <= E[X^2] <= (b / 2) E[X] and the
// total E errors has variance <= (b / 2) E (for QPSK this is the binomial bound E (1 - p) <= E).
// Five such standard deviations (normal tail 6e-7, the counts are in the thousands so the CLT
// holds). The SNRs put the BER near 2e-3..6e-3 (2000 to 12000 errors over the 100 trials).
TEST(uplink, uncoded_ber_matches_gray_qam_closed_form) {
  struct point {
    const char* mod;
    int bits;
    double snr_db;
  };
  const int num_trials = 100, num_symbols = 4096;
  for (const point& p : {point{"qpsk", 2, 5.0}, point{"16qam", 4, 11.5}, point{"64qam", 6, 17.5}}) {
    const scenario scen = make_scenario(single_cell_text(4, 1, zf_precoder(), p.snr_db, p.mod, num_symbols, "zf", 777));
    const double rho = scen.uplink_snr();
    double expected = 0.0;
    std::uint64_t counted = 0, bits = 0;
    for (int t = 0; t < num_trials; ++t) {
      const trial_data td = run_trial(scen, static_cast<std::uint64_t>(t));
      const uplink_metrics& m = td.uplink->metrics;
      const double gamma = rho * td.channel_to_cell0[0].col(0).squaredNorm();
      ASSERT_EQ(m.bits, static_cast<std::uint64_t>(num_symbols * p.bits));
      expected += static_cast<double>(m.bits) * cho_yoon_ber(p.bits, gamma);
      counted += m.total_bit_errors;
      bits += m.bits;
    }
    const double sigma = std::sqrt(0.5 * p.bits * expected);
    std::cout << fmt::format(
        "{:6s} at {:4.1f} dB, M 4: {} errors in {} bits (BER {:.3e}), expected {:.1f} "
        "(BER {:.3e}), ratio {:.4f}, 5 sigma = {:.1f}\n",
        p.mod, p.snr_db, counted, bits, static_cast<double>(counted) / static_cast<double>(bits), expected,
        expected / static_cast<double>(bits), static_cast<double>(counted) / expected, 5.0 * sigma);
    EXPECT_NEAR(static_cast<double>(counted), expected, 5.0 * sigma) << p.mod;
    // Hundreds of errors at least, so the band (5 sigma) is a small part of the count: a 1 dB
    // SNR error moves a fourth-order-diversity BER by far more than 20 %.
    EXPECT_GT(expected, 500.0) << p.mod;
    EXPECT_LT(5.0 * sigma, 0.2 * expected) << p.mod;
  }
}

// ---------------------------------------------------------------------------------------------
// 3. Max-log against exact LLRs.
//
// The exact LLR of bit t given a grid point x, with noise N(0, s^2) per axis on the grid and
// equally likely labels: LLR = ln sum_{p: bit t = 0} exp(-|x - p|^2 / (2 s^2))
//                            - ln sum_{p: bit t = 1} exp(-|x - p|^2 / (2 s^2)),
// over the Q two-dimensional points p = qam_map(label) / qam_step (bits taken from the label, MSB
// first), by log-sum-exp. Max-log keeps the largest term of each sum: D_t / (2 s^2).
// Bounds (common practice): each sum has Q/2 terms, so max <= ln sum <= max + ln(Q/2) and
// |LLR - D_t / (2 s^2)| <= ln(Q/2). Tighter: a bit of the in-phase half depends on the in-phase
// level only, so each 2-D sum is (sum over the L/2 in-phase levels with that bit) x (sum over all
// L quadrature levels); the second factor cancels, and the bound is ln(L/2) (0 for QPSK, where
// max-log is exact).
struct exact_llr {
  std::vector<double> llr;  // per bit
  std::vector<double> d2;   // per bit: min_{bit 1} |x - p|^2 - min_{bit 0} |x - p|^2 in 2-D
};

exact_llr exact_llrs(modulation mod, std::complex<double> x, double s2) {
  const int b = bits_per_symbol(mod);
  const std::uint32_t q = 1U << b;
  exact_llr out;
  for (int t = 0; t < b; ++t) {
    double best[2] = {-HUGE_VAL, -HUGE_VAL};  // max exponent per bit value
    double dmin[2] = {HUGE_VAL, HUGE_VAL};
    for (std::uint32_t label = 0; label < q; ++label) {
      const std::complex<double> p = qam_map(mod, label) / qam_step(mod);
      const int v = static_cast<int>((label >> (b - 1 - t)) & 1U);
      best[v] = std::max(best[v], -std::norm(x - p) / (2.0 * s2));
      dmin[v] = std::min(dmin[v], std::norm(x - p));
    }
    double sum[2] = {0.0, 0.0};
    for (std::uint32_t label = 0; label < q; ++label) {
      const std::complex<double> p = qam_map(mod, label) / qam_step(mod);
      const int v = static_cast<int>((label >> (b - 1 - t)) & 1U);
      sum[v] += std::exp(-std::norm(x - p) / (2.0 * s2) - best[v]);
    }
    out.llr.push_back(best[0] + std::log(sum[0]) - best[1] - std::log(sum[1]));
    out.d2.push_back(dmin[1] - dmin[0]);
  }
  return out;
}

// Random points uniform over the constellation's square widened by one level on each side, at
// four noise levels. Checked per bit: (a) maxlog_distances equals the 2-D max-log distance of the
// exact computation (the other axis's term cancels; rounding of squares of size <= 4 L^2:
// 1e-12 (1 + |x|^2)); (b) |exact - D / (2 s^2)| <= ln(L/2) <= ln(Q/2) (plus 1e-9 for the rounding
// of log-sum-exp of <= 512 terms); (c) for the first bit of each axis (the sign bit of the Gray
// code: levels with bit 1 are the positive ones) the signs agree whenever x is off the axis:
// each level a > 0 with bit 1 pairs with -a with bit 0, and (x - a)^2 < (x + a)^2 iff x a > 0, so
// the exact LLR has the sign of -x, as D does; (d) any bit whose |D| / (2 s^2) exceeds ln(L/2)
// has the exact sign of D (from (b)). Near a decision boundary of the other bits the exact and
// max-log signs may differ (e.g. 16-QAM, second bit at x = 2: D = 0 but the exact LLR < 0), so no
// sign is asserted there.
TEST(uplink, maxlog_distances_bound_exact_llr) {
  random_stream rng(99);
  int sign_checks = 0;
  double largest_gap = 0.0;
  for (modulation mod : {modulation::qpsk, modulation::qam16, modulation::qam64}) {
    const int b = bits_per_symbol(mod);
    const int l = qam_axis_levels(mod);
    const double axis_bound = std::log(l / 2.0);
    const double full_bound = std::log(std::ldexp(1.0, b) / 2.0);
    ASSERT_LE(axis_bound, full_bound);
    for (double s2 : {0.05, 0.4, 1.5, 6.0}) {
      for (int i = 0; i < 300; ++i) {
        const double span = l + 1.0;
        const std::complex<double> x(span * (2.0 * rng.uniform() - 1.0), span * (2.0 * rng.uniform() - 1.0));
        std::vector<double> d(static_cast<std::size_t>(b));
        maxlog_distances(mod, x, d.data());
        const exact_llr e = exact_llrs(mod, x, s2);
        for (int t = 0; t < b; ++t) {
          const auto u = static_cast<std::size_t>(t);
          const double maxlog = d[u] / (2.0 * s2);
          ASSERT_NEAR(d[u], e.d2[u], 1e-12 * (1.0 + std::norm(x))) << "bit " << t << " x " << x;
          const double gap = std::abs(e.llr[u] - maxlog);
          if (l > 2) largest_gap = std::max(largest_gap, gap / axis_bound);
          EXPECT_LE(gap, axis_bound + 1e-9) << modulation_name(mod) << " bit " << t << " x " << x << " s2 " << s2;
          EXPECT_LE(gap, full_bound + 1e-9);
          if (t == 0 || t == b / 2) {
            const double coordinate = t == 0 ? x.real() : x.imag();
            EXPECT_EQ(e.llr[u] > 0, coordinate < 0) << modulation_name(mod) << " bit " << t << " x " << x;
            EXPECT_EQ(d[u] > 0, coordinate < 0);
            ++sign_checks;
          }
          if (std::abs(maxlog) > axis_bound + 1e-9) {
            EXPECT_EQ(e.llr[u] > 0, maxlog > 0) << modulation_name(mod) << " bit " << t << " x " << x;
            ++sign_checks;
          }
        }
      }
    }
  }
  EXPECT_GT(sign_checks, 1000);
  // The bound is not vacuous here: the worst gap reaches a good part of ln(L/2) at large s^2.
  std::cout << fmt::format("largest |exact - max-log| / ln(L/2): {:.3f}\n", largest_gap);
  EXPECT_GT(largest_gap, 0.5);
}

// Hand-worked: 16-QAM, grid point x = 0.5 + 2.2j. Per axis the levels are -3, -1, 1, 3 with Gray
// labels 00, 01, 11, 10 (index i = 0..3, label i ^ (i >> 1)); first bit 1 on {1, 3}, second bit
// 1 on {-1, 1}.
//   in-phase 0.5: squared distances to -3, -1, 1, 3 are 12.25, 2.25, 0.25, 6.25
//     D_0 = min(0.25, 6.25) - min(12.25, 2.25) = -2.0
//     D_1 = min(2.25, 0.25) - min(12.25, 6.25) = -6.0
//   quadrature 2.2: squared distances 27.04, 10.24, 1.44, 0.64
//     D_2 = min(1.44, 0.64) - min(27.04, 10.24) = -9.6
//     D_3 = min(10.24, 1.44) - min(27.04, 0.64) = 0.8
// (the signs give bits 1110, the label of the nearest point 1 + 3j). 0.5 is exact in binary, 2.2
// is not: 1e-12 absolute covers its rounding in squares of size < 30.
TEST(uplink, maxlog_distances_hand_worked_16qam) {
  double d[4];
  maxlog_distances(modulation::qam16, {0.5, 2.2}, d);
  EXPECT_DOUBLE_EQ(d[0], -2.0);
  EXPECT_DOUBLE_EQ(d[1], -6.0);
  EXPECT_NEAR(d[2], -9.6, 1e-12);
  EXPECT_NEAR(d[3], 0.8, 1e-12);
  EXPECT_EQ(qam_demap(modulation::qam16, qam_step(modulation::qam16) * std::complex<double>(0.5, 2.2)), 0b1110U);
}

// The uplink's distance matrix is maxlog_distances of its equalised outputs, column n b + t, and
// each equals the 2-D max-log distance difference computed above (independent of qam.cpp).
TEST(uplink, distances_are_those_of_the_equalised_outputs) {
  const scenario scen = make_scenario(single_cell_text(8, 3, zf_precoder(), 12.0, "16qam", 40, "mrc", 5));
  const trial_data td = run_trial(scen, 2);
  ASSERT_TRUE(td.uplink.has_value());
  const uplink_data& ul = *td.uplink;
  const int b = 4;
  ASSERT_EQ(ul.distances.rows(), 3);
  ASSERT_EQ(ul.distances.cols(), 40 * b);
  for (Eigen::Index k = 0; k < 3; ++k) {
    for (Eigen::Index n = 0; n < 40; ++n) {
      const exact_llr e = exact_llrs(modulation::qam16, ul.equalised(k, n), 1.0);
      for (int t = 0; t < b; ++t) {
        EXPECT_NEAR(ul.distances(k, n * b + t), e.d2[static_cast<std::size_t>(t)],
                    1e-12 * (1.0 + std::norm(ul.equalised(k, n))))
            << "user " << k << " symbol " << n << " bit " << t;
      }
    }
  }
}

// ---------------------------------------------------------------------------------------------
// 4. The uplink draws from its own stream: the downlink of a trial is bit-identical with and
// without [uplink], the uplink itself is reproducible, does not depend on the downlink's data
// length, and differs between trials. Three cells, so that other cells' users reach BS 0.
std::string three_cell_text(int dl_symbols, bool with_uplink) {
  std::string text = fmt::format(R"(seed = 1357
[array]
antennas = 16
[cells]
count = 3
users_per_cell = 3
user_gains_db = [0, -3, -6]
cross_gain_db = -10
[pilots]
snr_db = 5
[estimator]
kind = "mmse"
[precoder]
kind = "zf"
[data]
modulation = "64qam"
symbols = {}
snr_db = 15
)",
                                 dl_symbols);
  if (with_uplink) text += "[uplink]\nsnr_db = 8\nmodulation = \"16qam\"\nsymbols = 300\ncombiner = \"zf\"\n";
  return text;
}

TEST(uplink, own_stream_leaves_the_downlink_untouched) {
  const scenario plain = make_scenario(three_cell_text(70, false));
  const scenario with = make_scenario(three_cell_text(70, true));
  const scenario longer = make_scenario(three_cell_text(90, true));
  for (std::uint64_t index : {0U, 3U}) {
    const trial_data a = run_trial(plain, index);
    const trial_data b = run_trial(with, index);
    EXPECT_FALSE(a.uplink.has_value());
    ASSERT_TRUE(b.uplink.has_value());
    EXPECT_TRUE(a.chan_est == b.chan_est);
    EXPECT_TRUE(a.inverse == b.inverse);
    EXPECT_TRUE(a.weights == b.weights);
    EXPECT_EQ(a.metrics.gain, b.metrics.gain);
    EXPECT_EQ(a.metrics.sinr, b.metrics.sinr);
    EXPECT_EQ(a.metrics.evm_pct, b.metrics.evm_pct);
    EXPECT_EQ(a.metrics.sum_rate, b.metrics.sum_rate);
    const data_block da = whole_data(plain, a), db = whole_data(with, b);
    EXPECT_TRUE(da.labels == db.labels);
    EXPECT_TRUE(da.tx == db.tx);
    EXPECT_TRUE(da.interference == db.interference);

    // Reproducible, and independent of how many downlink labels the trial's stream walked past.
    const trial_data again = run_trial(with, index);
    const trial_data other_dl = run_trial(longer, index);
    for (const trial_data* c : {&again, &other_dl}) {
      EXPECT_TRUE(c->uplink->labels == b.uplink->labels);
      EXPECT_TRUE(c->uplink->adc == b.uplink->adc);
      EXPECT_TRUE(c->uplink->equalised == b.uplink->equalised);
      EXPECT_TRUE(c->uplink->distances == b.uplink->distances);
      EXPECT_EQ(c->uplink->metrics.sinr, b.uplink->metrics.sinr);
      EXPECT_EQ(c->uplink->metrics.total_bit_errors, b.uplink->metrics.total_bit_errors);
    }
  }
  // Different trials draw different uplinks (a fixed stream would pass every check above).
  const trial_data t0 = run_trial(with, 0), t1 = run_trial(with, 1);
  EXPECT_FALSE(t0.uplink->labels == t1.uplink->labels);
  EXPECT_FALSE(t0.uplink->adc == t1.uplink->adc);
}

// ---------------------------------------------------------------------------------------------
// 5. Errors of the [uplink] table.
std::string error_text(const std::string& precoder, const std::string& uplink) {
  return fmt::format(R"(seed = 1
[array]
antennas = 8
[cells]
users_per_cell = 2
[pilots]
snr_db = 5
[precoder]
{}
[data]
snr_db = 10
[uplink]
{}
)",
                     precoder, uplink);
}

std::string error_key(const std::string& text) {
  try {
    make_scenario(text);
  } catch (const scenario_error& e) {
    return e.key;
  }
  return "(no error)";
}

TEST(uplink, scenario_errors_name_the_key) {
  // ZF combining reuses the ZF precoder's inverse.
  EXPECT_EQ(error_key(error_text("kind = \"mf\"", "snr_db = 5\ncombiner = \"zf\"")), "uplink.combiner");
  EXPECT_EQ(error_key(error_text("kind = \"rzf\"", "snr_db = 5\ncombiner = \"zf\"")), "uplink.combiner");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiner = \"zf\"")), "(no error)");
  // MMSE combining needs RZF loaded with 1 / rho_ul = 10^-0.5 = 0.316...
  EXPECT_EQ(error_key(error_text("kind = \"rzf\"\nregularizer = 0.5", "snr_db = 5\ncombiner = \"mmse\"")),
            "uplink.combiner");
  EXPECT_EQ(error_key(error_text("kind = \"rzf\"", "snr_db = 5\ncombiner = \"mmse\"")),
            "uplink.combiner");  // default loading K / rho_d = 0.2
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiner = \"mmse\"")), "uplink.combiner");
  EXPECT_EQ(error_key(error_text(rzf_precoder_for(5.0), "snr_db = 5\ncombiner = \"mmse\"")), "(no error)");
  // An inverse of its own lifts both requirements; MRC has no inverse to own; a bad choice.
  EXPECT_EQ(error_key(error_text("kind = \"mf\"", "snr_db = 5\ncombiner = \"zf\"\ninverse = \"own\"")), "(no error)");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiner = \"mmse\"\ninverse = \"own\"")), "(no error)");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiner = \"mrc\"\ninverse = \"own\"")),
            "uplink.inverse");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiner = \"zf\"\ninverse = \"separate\"")),
            "uplink.inverse");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiner = \"zf\"\ninverse = \"shared\"")),
            "(no error)");
  // Unknown key, and the required snr_db.
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\ncombiners = \"zf\"")), "uplink.combiners");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "combiner = \"mrc\"")), "uplink.snr_db");
  EXPECT_EQ(error_key(error_text("kind = \"zf\"", "snr_db = 5\nsymbols = 4097")), "uplink.symbols");
  // The message names the file and the key too (one line FILE:LINE: KEY: message).
  try {
    make_scenario(error_text("kind = \"mf\"", "snr_db = 5\ncombiner = \"zf\""));
    ADD_FAILURE() << "expected a scenario_error";
  } catch (const scenario_error& e) {
    EXPECT_NE(std::string(e.what()).find("test.toml:"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("uplink.combiner"), std::string::npos) << e.what();
    EXPECT_EQ(e.line, 14) << e.what();
  }
}

}  // namespace
}  // namespace fxmimo::golden
