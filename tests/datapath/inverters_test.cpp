// The Cholesky (cholesky.cpp, cholesky_solves.cpp) and Gauss-Seidel (gauss_seidel.cpp) inverter
// stages: a K = 2 case worked out by hand word by word; with every format wide (the default
// Q20.43), the Cholesky inverse against the LDL^H datapath's and both against Eigen's inverse of
// the same Gram words; the Gauss-Seidel sweeps against the same sweeps in double; the golden
// views against the golden model.
#include <gtest/gtest.h>

#include <Eigen/Dense>
#include <cmath>
#include <iostream>
#include <string>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/fixedpoint/format.hpp"
#include "fxmimo/golden/cholesky.hpp"
#include "fxmimo/golden/gauss_seidel.hpp"

namespace fp = fxmimo::fixedpoint;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;

namespace {

/// Our own scenario: a 64-antenna rooftop panel serving 8 users with MMSE estimates, no [nodes]
/// tables (every node at the wide default Q20.43), the inversion given.
std::string wide_text(const std::string& inversion) {
  return R"(
name = "wide-inverters"
seed = 17
trials = 2
[array]
antennas = 64
[cells]
count = 1
users_per_cell = 8
user_gains_db = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0]
[pilots]
length = 8
sequence = "walsh"
snr_db = 15.0
[estimator]
kind = "mmse"
[data]
symbols = 4
snr_db = 15.0
[precoder]
kind = "zf"
)" + inversion;
}

struct evaluated {
  g::scenario scen;
  d::datapath_config config;
  g::trial_data trial;
  d::fixed_trial fixed;
};

evaluated evaluate(const std::string& text, std::uint64_t trial) {
  evaluated e{g::parse_scenario_text(text, "wide.toml"), d::parse_datapath_config(text, "wide.toml"), {}, {}};
  e.trial = g::run_trial(e.scen, trial);
  e.fixed = d::run_block_stages(d::stages_for(e.scen), e.scen, e.config, e.trial);
  return e;
}

const d::word_matrix& words(const evaluated& e, d::node_id id) { return e.fixed.words[d::index_of(id)]; }

/// A node's words as double values.
Eigen::MatrixXcd values(const evaluated& e, d::node_id id) {
  const d::word_matrix& w = words(e, id);
  const double lsb = std::ldexp(1.0, -e.config[id].spec.fmt.frac_bits);
  Eigen::MatrixXcd out(w.rows, w.cols);
  for (int r = 0; r < w.rows; ++r) {
    for (int c = 0; c < w.cols; ++c) {
      const std::size_t i = w.at(r, c);
      out(r, c) = {static_cast<double>(w.re[i]) * lsb, w.is_complex ? static_cast<double>(w.im[i]) * lsb : 0.0};
    }
  }
  return out;
}

/// Largest difference of two complex matrices, part by part.
double max_part_diff(const Eigen::MatrixXcd& a, const Eigen::MatrixXcd& b) {
  return std::max((a - b).real().cwiseAbs().maxCoeff(), (a - b).imag().cwiseAbs().maxCoeff());
}

double condition(const Eigen::MatrixXcd& a) {
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXcd> s(a, Eigen::EigenvaluesOnly);
  return s.eigenvalues().maxCoeff() / s.eigenvalues().minCoeff();
}

TEST(inverters, wide_cholesky_equals_the_ldl_datapath_and_the_exact_inverse_of_its_gram_words) {
  for (std::uint64_t trial : {0, 1}) {
    const evaluated chol = evaluate(wide_text("inversion = \"cholesky\""), trial);
    const evaluated ldl = evaluate(wide_text("inversion = \"ldl\""), trial);
    ASSERT_EQ(words(chol, d::node_id::gram).re, words(ldl, d::node_id::gram).re);  // same upstream words
    const Eigen::MatrixXcd gram = values(chol, d::node_id::gram);                  // |words| < 2^53: exact in double
    const double lsb = std::ldexp(1.0, -43);
    const Eigen::MatrixXcd x_chol = values(chol, d::node_id::inv_out), x_ldl = values(ldl, d::node_id::inv_out);
    // Reference: Eigen's LLT solve of the same Gram words in double.
    const auto k = gram.rows();
    const Eigen::MatrixXcd exact = gram.llt().solve(Eigen::MatrixXcd::Identity(k, k));
    // Tolerance, derived: every node holds 43 fraction bits, so each rounding errs by at most
    // 2^-44 absolutely. The factors are O(sqrt(M)) = 8 and the reciprocal roots O(1/sqrt(M)), so
    // those roundings are relative errors below 2^-44 / 2^-3 = 2^-41 of G's entries; an error of
    // relative size u in G moves G^-1 by at most cond(G) u |G^-1| (Higham, Accuracy and
    // Stability, 2nd ed., Thm 7.2, from memory), summed over K terms per entry:
    // K cond 2^-41 |X| with |X| <= 1/lambda_min < 1 here, plus the output's own half LSB. With
    // cond < 10 (M/K = 8) that is below 8 * 10 * 2^-41 = 2^-34.7, i.e. a few hundred LSBs at most
    // in the bound; Eigen's double solve adds K cond eps |X|, far below an LSB.
    const double cond = condition(gram);
    ASSERT_LT(cond, 10.0);
    const double bound = static_cast<double>(k) * cond * std::ldexp(1.0, -41) + 0.5 * lsb;
    EXPECT_LT(max_part_diff(x_chol, exact), bound) << "trial " << trial;
    EXPECT_LT(max_part_diff(x_ldl, exact), bound) << "trial " << trial;
    // Observed far inside that bound: each inverse lies within 2 LSBs of the exact one (its own
    // final rounding plus roundings before it that add below an LSB), so the two datapaths agree
    // to within 4 LSBs; that is what we ask (they differed by 1 and 2 LSBs when this was written).
    EXPECT_LE(max_part_diff(x_chol, x_ldl), 4 * lsb) << "trial " << trial;
    std::cout << "trial " << trial << ": cond " << cond << ", |cholesky - ldl| " << max_part_diff(x_chol, x_ldl) / lsb
              << " LSB, |cholesky - exact| " << max_part_diff(x_chol, exact) / lsb << " LSB, |ldl - exact| "
              << max_part_diff(x_ldl, exact) / lsb << " LSB (bound " << bound / lsb << ")\n";
    // And the golden views: chol_fwd's words are L^-1 of the golden factor to the same order.
    const std::vector<Eigen::MatrixXcd> v = d::golden_node_values(d::stages_for(chol.scen), chol.scen, chol.trial);
    EXPECT_LT(max_part_diff(v[d::index_of(d::node_id::inv_out)], x_chol), 1e-9);
    EXPECT_LT(max_part_diff(v[d::index_of(d::node_id::chol_fwd)], values(chol, d::node_id::chol_fwd)), 1e-9);
    EXPECT_LT(max_part_diff(v[d::index_of(d::node_id::chol_factor)], values(chol, d::node_id::chol_factor)), 1e-9);
  }
}

TEST(inverters, wide_gauss_seidel_equals_its_sweeps_in_double) {
  for (int sweeps : {1, 3}) {
    const evaluated gs =
        evaluate(wide_text("inversion = \"gauss_seidel\"\nsweeps = " + std::to_string(sweeps) + "\n"), 0);
    const Eigen::MatrixXcd gram = values(gs, d::node_id::gram);
    const double lsb = std::ldexp(1.0, -43);
    const std::vector<Eigen::MatrixXcd> ref = g::gauss_seidel_sweeps(gram, sweeps);
    // Tolerance, derived: each sweep's entry is a sum of K terms, each rounded (half an LSB) and
    // summed with rounding (half an LSB), so a sweep adds at most K LSBs; the reciprocals and B
    // (43 fraction bits, B's entries below 1) carry relative errors about 2^-43 into products
    // bounded by |X| < 1. Earlier sweeps' errors are carried on through the iteration matrix, a
    // contraction here (M/K = 8), so S sweeps stay within 2 S K LSBs.
    EXPECT_LT(max_part_diff(values(gs, d::node_id::inv_out), ref.back()), 2.0 * sweeps * 8 * lsb) << sweeps;
    std::cout << "S = " << sweeps << ": |fixed - double sweeps| "
              << max_part_diff(values(gs, d::node_id::inv_out), ref.back()) / lsb << " LSB\n";
    if (sweeps > 1) {
      const Eigen::MatrixXcd side = values(gs, d::node_id::gs_sweep);
      ASSERT_EQ(side.cols(), 8 * (sweeps - 1));
      for (int s = 0; s + 1 < sweeps; ++s)
        EXPECT_LT(max_part_diff(side.middleCols(8 * s, 8), ref[static_cast<std::size_t>(s)]), 2.0 * (s + 1) * 8 * lsb);
    }
    // The golden view of inv_out is the golden trial's Gauss-Seidel inverse.
    const std::vector<Eigen::MatrixXcd> v = d::golden_node_values(d::stages_for(gs.scen), gs.scen, gs.trial);
    EXPECT_EQ(v[d::index_of(d::node_id::inv_out)], gs.trial.inverse);
    EXPECT_EQ(gs.trial.inverse, g::gauss_seidel_inverse(gs.trial.gram, sweeps));
  }
}

/// The plan's stage that computes `id`.
const d::stage& producer(const d::datapath_plan& plan, d::node_id id) {
  const d::stage* s = plan.producer(id);
  if (s == nullptr) throw std::logic_error("no producer");
  return *s;
}

TEST(inverters, hand_computed_cholesky_two_by_two) {
  // G = [[4, 2 - 2i], [2 + 2i, 5]] in Q6.8 (words: value x 256), every node Q6.8 too (chol_fwd
  // and inv_out Q1.8, chol_diag_rsqrt Q1.8), half_even, saturate. Worked out by hand:
  //   r_0 = Q(4) = 1024;  s_0 = Q(1/sqrt(4)) = 0.5 = 128
  //   n_10 = Q(2 + 2i) = (512, 512);  l_10 = Q(n_10 s_0) = (512 x 128, .) / 2^8 = (256, 256) = 1 + i
  //   r_1 = Q(Q(5) - Q(|l_10|^2)) = 1280 - (2 x 256^2) / 2^8 = 1280 - 512 = 768 = 3
  //   s_1 = Q(1/sqrt(3)) = Q(147.80...) = 148 (0.578125), inexact
  // Forward, column 0: y_00 = Q(s_0) = 128; y_10 = Q(-l_10 y_00 s_1) = -(256 x 128 x 148) / 2^16
  //   = -74 per part (exact). Column 1: y_11 = Q(s_1) = 148; y_01 = 0 (above the diagonal).
  // Backward, column 0: x_10 = Q(y_10 s_1) = (-74 x 148) / 2^8 = -42.78 -> -43 per part (inexact);
  //   x_00 = Q(Q(y_00 s_0) - Q(conj(l_10) x_10 s_0)): y_00 s_0 = 128 x 128 / 2^8 = 64;
  //   x_10 conj(l_10) = (-43 - 43i)(256 - 256i) = -22016 (real) at 2^-16, times s_0 = 128 and
  //   negated: +2818048 / 2^16 = 43; x_00 = 64 + 43 = 107 (0.418; exactly 5/12 = 0.417).
  // Column 1: x_11 = Q(y_11 s_1) = 148^2 / 2^8 = 85.56 -> 86 (inexact); x_01 = Q(0 - Q(conj(l_10)
  //   x_11 s_0)): x_11 conj(l_10) = 86 (256 - 256i) = (22016, -22016), times 128, negated, / 2^16
  //   = (-43, 43).  Exactly: G^-1 = [[5, -(2 - 2i)], [-(2 + 2i), 4]] / 12.
  const std::string text = R"(
name = "hand-cholesky"
seed = 1
[array]
antennas = 2
[cells]
count = 1
users_per_cell = 2
[pilots]
snr_db = 10.0
[data]
symbols = 1
snr_db = 10.0
[precoder]
inversion = "cholesky"
)";
  const g::scenario scen = g::parse_scenario_text(text, "hand.toml");
  d::datapath_config config;
  const fp::format q6_8{true, 15, 8}, q1_8{true, 10, 8};
  for (d::node_id id : {d::node_id::gram, d::node_id::chol_acc, d::node_id::chol_factor})
    config[id].spec = {q6_8, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  for (d::node_id id : {d::node_id::chol_diag_rsqrt, d::node_id::chol_fwd, d::node_id::inv_out})
    config[id].spec = {q1_8, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  const d::datapath_plan plan = d::stages_for(scen);
  std::vector<d::word_matrix> w(d::node_count());
  std::vector<fp::counters> counters(d::node_count());
  d::word_matrix& gram = w[d::index_of(d::node_id::gram)];
  gram = d::word_matrix(2, 2, true);
  gram.re = {1024, 512, 512, 1280};  // row-major: G_00, G_01 = 2 - 2i, G_10 = 2 + 2i, G_11
  gram.im = {0, -512, 512, 0};
  const g::trial_data td;
  d::fixed_context ctx{scen, td, config, w, counters};
  producer(plan, d::node_id::chol_factor).compute(ctx);
  producer(plan, d::node_id::chol_fwd).compute(ctx);
  const auto& acc = w[d::index_of(d::node_id::chol_acc)];
  EXPECT_EQ(acc.re, (std::vector<std::int64_t>{1024, 0, 512, 768}));
  EXPECT_EQ(acc.im, (std::vector<std::int64_t>{0, 0, 512, 0}));
  EXPECT_EQ(w[d::index_of(d::node_id::chol_diag_rsqrt)].re, (std::vector<std::int64_t>{128, 148}));
  const auto& l = w[d::index_of(d::node_id::chol_factor)];
  EXPECT_EQ(l.re, (std::vector<std::int64_t>{0, 0, 256, 0}));
  EXPECT_EQ(l.im, (std::vector<std::int64_t>{0, 0, 256, 0}));
  const auto& y = w[d::index_of(d::node_id::chol_fwd)];
  EXPECT_EQ(y.re, (std::vector<std::int64_t>{128, 0, -74, 148}));
  EXPECT_EQ(y.im, (std::vector<std::int64_t>{0, 0, -74, 0}));
  const auto& x = w[d::index_of(d::node_id::inv_out)];
  EXPECT_EQ(x.re, (std::vector<std::int64_t>{107, -43, -43, 86}));
  EXPECT_EQ(x.im, (std::vector<std::int64_t>{0, 43, -43, 0}));
  // Inexact roundings: s_1 alone in chol_diag_rsqrt; x_10 (two parts) and x_11 (its real part;
  // the imaginary part is an exact 0) in inv_out.
  EXPECT_EQ(counters[d::index_of(d::node_id::chol_diag_rsqrt)].inexact, 1U);
  EXPECT_EQ(counters[d::index_of(d::node_id::inv_out)].inexact, 3U);
  EXPECT_EQ(counters[d::index_of(d::node_id::chol_fwd)].inexact, 0U);
}

TEST(inverters, hand_computed_gauss_seidel_two_by_two) {
  // G = [[4, 2 - 2i], [2 + 2i, 8]] in Q6.8, one sweep; inv_diag_recip Q1.8, inv_iter Q1.8,
  // inv_out Q1.8, half_even, saturate. Worked out by hand:
  //   r_0 = Q(1/4) = 64, r_1 = Q(1/8) = 32 (both exact)
  //   B_10 = Q(-r_1 G_10) = -(32 x 512) / 2^8 per part = -64 (-1/4 - i/4); B_01 = Q(-r_0 G_01)
  //     = -(64 x (512, -512)) / 2^8 = (-128, 128) (-1/2 + i/2); B_00 = Q(1 - 64 x 1024 / 2^16)
  //     = 0, B_11 = 0.
  // Sweep 1, column 0: x_00 = Q(r_0) = 64 (the j = 1 term is X_0's zero x_10: no term);
  //   x_10 = Q(B_10 x_00) = (-64 - 64i)(64) / 2^8 = (-16, -16) (-(1 + i)/16).
  // Column 1: x_01 = Q(B_01 x_11^(0)) with x_11^(0) = r_1 = 32: (-128, 128) x 32 / 2^8 = (-16, 16);
  //   x_11 = Q(Q(r_1) + Q(B_10 x_01)): (-64 - 64i)(-16 + 16i) = (1024 + 1024, -1024 + 1024)
  //   = (2048, 0) / 2^8 = 8; x_11 = 32 + 8 = 40 (5/32). The golden first sweep (tests/golden/
  //   inverters_test.cpp) gives the same values: 1/4, -(1 + i)/16, -(1 - i)/16, 5/32.
  const std::string text = R"(
name = "hand-gauss-seidel"
seed = 1
[array]
antennas = 2
[cells]
count = 1
users_per_cell = 2
[pilots]
snr_db = 10.0
[data]
symbols = 1
snr_db = 10.0
[precoder]
inversion = "gauss_seidel"
sweeps = 1
)";
  const g::scenario scen = g::parse_scenario_text(text, "hand.toml");
  d::datapath_config config;
  const fp::format q6_8{true, 15, 8}, q1_8{true, 10, 8};
  config[d::node_id::gram].spec = {q6_8, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  for (d::node_id id : {d::node_id::inv_diag_recip, d::node_id::inv_iter, d::node_id::inv_out})
    config[id].spec = {q1_8, fp::rounding_mode::half_even, fp::overflow_mode::saturate};
  const d::datapath_plan plan = d::stages_for(scen);
  EXPECT_FALSE(plan.has(d::node_id::gs_sweep));  // S = 1: the only sweep is inv_out
  std::vector<d::word_matrix> w(d::node_count());
  std::vector<fp::counters> counters(d::node_count());
  d::word_matrix& gram = w[d::index_of(d::node_id::gram)];
  gram = d::word_matrix(2, 2, true);
  gram.re = {1024, 512, 512, 2048};
  gram.im = {0, -512, 512, 0};
  const g::trial_data td;
  d::fixed_context ctx{scen, td, config, w, counters};
  producer(plan, d::node_id::inv_out).compute(ctx);
  EXPECT_EQ(w[d::index_of(d::node_id::inv_diag_recip)].re, (std::vector<std::int64_t>{64, 32}));
  const auto& b = w[d::index_of(d::node_id::inv_iter)];
  EXPECT_EQ(b.re, (std::vector<std::int64_t>{0, -128, -64, 0}));
  EXPECT_EQ(b.im, (std::vector<std::int64_t>{0, 128, -64, 0}));
  const auto& x = w[d::index_of(d::node_id::inv_out)];
  EXPECT_EQ(x.re, (std::vector<std::int64_t>{64, -16, -16, 40}));
  EXPECT_EQ(x.im, (std::vector<std::int64_t>{0, 16, -16, 0}));
  EXPECT_EQ(counters[d::index_of(d::node_id::inv_out)].inexact, 0U);
}

}  // namespace
