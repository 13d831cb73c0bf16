// The uplink stages of the fixed datapath (datapath/src/stages/uplink.cpp): ul_match, ul_comb,
// ul_eq and ul_llr, and the ADC they share with the pilot phase. Every expected word comes from
// outside the code under test: cases worked out by hand (the arithmetic is in the comments), or
// a recomputation written here in exact integers (Boost.Multiprecision cpp_int) with rounding,
// overflow and the sequential accumulation order written out from their definitions (README
// "How it computes"). The wide-format checks compare with the golden double model against an
// error bound derived element by element below.
#include <fmt/core.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <boost/multiprecision/cpp_int.hpp>
#include <cmath>
#include <complex>
#include <cstdint>
#include <string>
#include <vector>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/golden/qam.hpp"
#include "fxmimo/golden/scenario.hpp"
#include "fxmimo/golden/trial.hpp"

namespace d = fxmimo::datapath;
namespace fp = fxmimo::fixedpoint;
namespace g = fxmimo::golden;
namespace mp = boost::multiprecision;

namespace {

using big = mp::cpp_int;
using fp::overflow_mode;
using fp::rounding_mode;

// ---------------------------------------------------------------------------------------------
// Scenarios (our own invention) and configuration helpers.

struct loaded {
  g::scenario scen;
  d::datapath_config config;
};

loaded load(const std::string& text) {
  const g::scenario_document doc = g::parse_scenario_document(text, "uplink-stages.toml");
  return {g::parse_scenario(doc), d::parse_datapath_config(doc)};
}

/// One cell, M antennas, K users with fixed gains, a Walsh pilot of length 4, the given
/// estimator, precoder table body and [uplink] table body (empty: no uplink). `extra` is
/// appended (node tables, frontend).
std::string scenario_text(int num_ant, int num_users, const std::string& estimator, const std::string& precoder,
                          const std::string& uplink, const std::string& extra = "") {
  std::string gains = "[0.0";
  for (int k = 1; k < num_users; ++k) gains += fmt::format(", {:.1f}", -1.5 * k);
  gains += "]";
  std::string text = fmt::format(R"(name = "uplink-stages"
seed = 9107
trials = 3
[array]
antennas = {}
[cells]
count = 1
users_per_cell = {}
user_gains_db = {}
[pilots]
length = 4
sequence = "walsh"
snr_db = 8.0
[estimator]
kind = "{}"
[precoder]
{}
[data]
modulation = "qpsk"
symbols = 4
snr_db = 12.0
)",
                                 num_ant, num_users, gains, estimator, precoder);
  if (!uplink.empty()) text += "[uplink]\n" + uplink;
  return text + extra;
}

/// The [uplink] body for a combiner; mmse needs the RZF precoder with regularizer 10^(-snr/10).
std::string uplink_body(const std::string& mod, int symbols, const std::string& combiner) {
  return fmt::format("snr_db = 10.0\nmodulation = \"{}\"\nsymbols = {}\ncombiner = \"{}\"\n", mod, symbols, combiner);
}
std::string precoder_for(const std::string& combiner) {
  if (combiner == "zf") return "kind = \"zf\"\ninversion = \"ldl\"";
  if (combiner == "mmse") return "kind = \"rzf\"\ninversion = \"ldl\"\nregularizer = 0.1";  // 10^(-10/10)
  return "kind = \"mf\"";
}

void set_node(d::datapath_config& c, d::node_id id, const char* q, rounding_mode r, overflow_mode o) {
  c[id] = {{fp::parse_format(q), r, o}, {}, false};
}

const d::word_matrix& words_of(const d::fixed_trial& f, d::node_id id) { return f.words[d::index_of(id)]; }
const fp::counters& counts_of(const d::fixed_trial& f, d::node_id id) { return f.counters[d::index_of(id)]; }
int frac_of(const d::datapath_config& c, d::node_id id) { return c[id].spec.fmt.frac_bits; }

// ---------------------------------------------------------------------------------------------
// Requantisation written out from its definition (README "How it computes", tables of rounding
// and overflow modes), on exact integers. A value is an integer n at `n_frac` fraction bits; the
// destination has F fraction bits, so the value in destination LSBs is n / 2^(n_frac - F).

struct tally {
  std::uint64_t requantized = 0, overflowed = 0, inexact = 0;
};

/// n / 2^s rounded to an integer by `mode` (s <= 0: exact, n 2^-s). Sets `inexact` when a
/// non-zero part was dropped.
big round_to_integer(const big& n, int s, rounding_mode mode, bool& inexact) {
  inexact = false;
  if (s <= 0) return n << -s;
  const big den = big(1) << s;
  big q = n / den;  // truncates toward zero
  big r = n - q * den;
  if (r < 0) {  // make q the floor and 0 <= r < den
    q -= 1;
    r += den;
  }
  inexact = r != 0;
  const big twice = 2 * r;
  const bool above_half = twice > den, tie = twice == den;
  bool up = false;
  switch (mode) {
    case rounding_mode::floor: up = false; break;
    case rounding_mode::ceil: up = r != 0; break;
    case rounding_mode::toward_zero: up = r != 0 && n < 0; break;
    case rounding_mode::half_up: up = above_half || tie; break;
    case rounding_mode::half_down: up = above_half; break;
    case rounding_mode::half_toward_zero: up = above_half || (tie && n < 0); break;
    case rounding_mode::half_away: up = above_half || (tie && n > 0); break;
    case rounding_mode::half_even: up = above_half || (tie && (q % 2) != 0); break;
  }
  return up ? big(q + 1) : q;
}

/// The overflow stage of a signed W-bit destination. Sets `overflowed` as the counters count it
/// (saturate_symmetric also counts the in-range word -2^(W-1)).
big fit_signed(const big& v, int w, overflow_mode mode, bool& overflowed) {
  const big hi = (big(1) << (w - 1)) - 1, lo = -(big(1) << (w - 1));
  overflowed = v > hi || v < lo;
  switch (mode) {
    case overflow_mode::saturate: return v > hi ? hi : (v < lo ? lo : v);
    case overflow_mode::saturate_symmetric:
      overflowed = v > hi || v <= lo;
      return v > hi ? hi : (v <= lo ? big(-hi) : v);
    case overflow_mode::saturate_zero: return overflowed ? big(0) : v;
    case overflow_mode::wrap: {
      const big modulus = big(1) << w;
      big low = v % modulus;  // sign of v
      if (low < 0) low += modulus;
      if (low > hi) low -= modulus;
      return low;
    }
  }
  return v;
}

/// One requantisation point: round, then overflow, counted.
big requantize(const big& n, int n_frac, const fp::target& t, tally& c) {
  bool inexact = false, overflowed = false;
  const big rounded = round_to_integer(n, n_frac - t.fmt.frac_bits, t.rounding, inexact);
  const big out = fit_signed(rounded, t.fmt.word_bits, t.overflow, overflowed);
  ++c.requantized;
  c.inexact += inexact ? 1U : 0U;
  c.overflowed += overflowed ? 1U : 0U;
  return out;
}

/// A double (an exact binary rational m 2^(e-53)) requantised once to target t: what a
/// converter does with a golden value.
big requantize_double(double v, const fp::target& t, tally& c) {
  int e = 0;
  const double mant = std::frexp(v, &e);                           // v = mant 2^e, 0.5 <= |mant| < 1
  const auto m = static_cast<std::int64_t>(std::ldexp(mant, 53));  // exact: 53 significant bits
  // v = m 2^(e - 53), i.e. the integer m at 53 - e fraction bits.
  return requantize(big(m), 53 - e, t, c);
}

struct cbig {
  big re, im;
};

/// The sequential accumulator of README "How it computes": acc = 0; for every term in index
/// order, per part, acc <- OV(acc + Q(p_i)), where Q(p_i) is one requantisation point (round,
/// overflow) and the sum of two words of one format is exact, so only its overflow stage acts
/// (a second requantisation point, counted, never inexact).
cbig sequential_sum(const std::vector<cbig>& terms, int term_frac, const fp::target& t, tally& c) {
  cbig acc{0, 0};
  for (const cbig& p : terms) {
    for (int part = 0; part < 2; ++part) {
      big& a = part == 0 ? acc.re : acc.im;
      const big term = requantize(part == 0 ? p.re : p.im, term_frac, t, c);
      bool overflowed = false;
      a = fit_signed(a + term, t.fmt.word_bits, t.overflow, overflowed);
      ++c.requantized;
      c.overflowed += overflowed ? 1U : 0U;
    }
  }
  return acc;
}

cbig word_at(const d::word_matrix& w, int r, int col) {
  const std::size_t i = w.at(r, col);
  return {big(w.re[i]), w.is_complex ? big(w.im[i]) : big(0)};
}

/// (a.re + j a.im)(b.re + j b.im), exactly; with conj_a, conj(a) b.
cbig product(const cbig& a, const cbig& b, bool conj_a) {
  const big ai = conj_a ? big(-a.im) : a.im;
  return {a.re * b.re - ai * b.im, a.re * b.im + ai * b.re};
}

void expect_counts(const fp::counters& got, const tally& want, const std::string& what) {
  EXPECT_EQ(got.requantized, want.requantized) << what << ": values requantised";
  EXPECT_EQ(got.overflowed, want.overflowed) << what << ": overflows";
  EXPECT_EQ(got.inexact, want.inexact) << what << ": inexact values";
}

// ---------------------------------------------------------------------------------------------
// Max-log distance differences written from the definition: with levels a = 2i - (L - 1),
// i = 0..L-1 per axis, and the binary-reflected Gray label of level index i, gray(i) = i ^ (i >> 1)
// (common practice for Gray-mapped square QAM), bit t of an axis (t = 0 the MSB of that axis'
// half label) of a word X at f fraction bits is
//   D_t = min_{gray bit t = 1} (a^2 2^f - 2 a X) - min_{gray bit t = 0} (a^2 2^f - 2 a X),
// an exact integer at f fraction bits ((x - a)^2 = x^2 - 2 a x + a^2, the x^2 cancels).

int gray_bit(int level_index, int t, int half_bits) {
  const int gray = level_index ^ (level_index >> 1);
  return (gray >> (half_bits - 1 - t)) & 1;
}

big distance_difference(const big& x_word, int frac, int levels, int half_bits, int t) {
  bool have[2] = {false, false};
  big best[2];
  for (int i = 0; i < levels; ++i) {
    const int a = 2 * i - (levels - 1);
    const big metric = big(a * a) * (big(1) << frac) - 2 * a * x_word;
    const int b = gray_bit(i, t, half_bits);
    if (!have[b] || metric < best[b]) best[b] = metric;
    have[b] = true;
  }
  return best[1] - best[0];
}

struct mod_info {
  const char* name;
  g::modulation mod;
  int half_bits;  // bits per axis
};
const mod_info qpsk{"qpsk", g::modulation::qpsk, 1};
const mod_info qam16{"16qam", g::modulation::qam16, 2};
const mod_info qam64{"64qam", g::modulation::qam64, 3};

/// Every ul_llr word of a trial from the ul_eq words: column n b + axis (b/2) + t (the in-phase
/// half first, MSB first, as the node table and qam.hpp give the label order).
std::vector<std::int64_t> expected_llr_words(const d::word_matrix& eq, int eq_frac, const mod_info& m,
                                             const fp::target& t, tally& c) {
  const int levels = 1 << m.half_bits;
  const int b = 2 * m.half_bits;
  std::vector<std::int64_t> out(static_cast<std::size_t>(eq.rows) * static_cast<std::size_t>(eq.cols * b));
  for (int k = 0; k < eq.rows; ++k) {
    for (int n = 0; n < eq.cols; ++n) {
      const cbig x = word_at(eq, k, n);
      // A word with negative fraction bits f is the integer X 2^-f at 0 fraction bits.
      const int frac = std::max(eq_frac, 0);
      for (int axis = 0; axis < 2; ++axis) {
        for (int bit = 0; bit < m.half_bits; ++bit) {
          const big xw = (axis == 0 ? x.re : x.im) << (frac - eq_frac);
          const big diff = distance_difference(xw, frac, levels, m.half_bits, bit);
          const std::size_t col = static_cast<std::size_t>(n * b + axis * m.half_bits + bit);
          out[static_cast<std::size_t>(k) * static_cast<std::size_t>(eq.cols * b) + col] =
              static_cast<std::int64_t>(requantize(diff, frac, t, c));
        }
      }
    }
  }
  return out;
}

// =============================================================================================
// 1. ul_llr

TEST(uplink_stages, gray_labels_of_the_axis_levels) {
  // 16-QAM per axis, by hand: levels -3, -1, 1, 3 (index 0..3) carry the Gray labels 00, 01, 11,
  // 10 (i ^ (i >> 1): 0, 1, 3, 2).
  const int labels16[4][2] = {{0, 0}, {0, 1}, {1, 1}, {1, 0}};
  for (int i = 0; i < 4; ++i)
    for (int t = 0; t < 2; ++t) EXPECT_EQ(g::qam_axis_bit(g::modulation::qam16, i, t), labels16[i][t]) << i << "," << t;
  // 64-QAM: levels -7..7 (index 0..7) carry 000 001 011 010 110 111 101 100.
  const char* labels64[8] = {"000", "001", "011", "010", "110", "111", "101", "100"};
  for (int i = 0; i < 8; ++i)
    for (int t = 0; t < 3; ++t)
      EXPECT_EQ(g::qam_axis_bit(g::modulation::qam64, i, t), labels64[i][t] - '0') << i << "," << t;
  // And the definition this file uses agrees with the golden model for every modulation used.
  for (const mod_info& m : {qpsk, qam16, qam64})
    for (int i = 0; i < (1 << m.half_bits); ++i)
      for (int t = 0; t < m.half_bits; ++t) EXPECT_EQ(gray_bit(i, t, m.half_bits), g::qam_axis_bit(m.mod, i, t));
}

/// M = 2, K = 1, perfect CSI, MRC, 16-QAM, N_ul = 2. The trial's estimate and uplink samples are
/// replaced so that ul_eq holds words chosen by hand: chan_est = [1; 0], ul_scale = 1, and the
/// formats below make every step up to ul_eq exact.
d::fixed_trial run_hand_case(const fp::target& llr_target) {
  const loaded l = load(scenario_text(2, 1, "perfect", "kind = \"mf\"", uplink_body("16qam", 2, "mrc")));
  g::trial_data trial = g::run_trial(l.scen, 0);
  trial.chan_est = Eigen::MatrixXcd(2, 1);
  trial.chan_est << 1.0, 0.0;
  // Antenna 0 carries the points; antenna 1's samples meet chan_est = 0 and drop out.
  trial.uplink->adc = Eigen::MatrixXcd(2, 2);
  trial.uplink->adc << std::complex<double>(0.5, -2.25), std::complex<double>(0.125, 3.5),
      std::complex<double>(-7.0, 6.25), std::complex<double>(3.0, -1.0);
  trial.uplink->scale = Eigen::VectorXd::Constant(1, 1.0);
  d::datapath_config c = l.config;
  const auto he = rounding_mode::half_even;
  const auto sat = overflow_mode::saturate;
  set_node(c, d::node_id::adc, "Q3.4", he, sat);       // x 16: 0.5 -> 8, -2.25 -> -36, 0.125 -> 2, 3.5 -> 56
  set_node(c, d::node_id::chan_est, "Q1.4", he, sat);  // 1 -> 16, 0 -> 0
  set_node(c, d::node_id::ul_match, "Q3.4", he, sat);  // 16 X at 8 fraction bits -> X at 4
  set_node(c, d::node_id::ul_scale, "Q1.4", he, sat);  // 1 -> 16
  set_node(c, d::node_id::ul_eq, "Q3.4", he, sat);     // 16 X at 8 fraction bits -> X at 4
  c[d::node_id::ul_llr] = {llr_target, {}, false};
  return d::run_fixed_datapath(l.scen, c, trial);
}

TEST(uplink_stages, llr_words_worked_out_by_hand) {
  // The two points on the odd-integer grid (ul_eq words X at f = 4 fraction bits):
  //   symbol 0: x = 0.5 - 2.25j (X = 8, -36); symbol 1: x = 0.125 + 3.5j (X = 2, 56).
  // Metrics m(a) = a^2 - 2 a x for a = -3, -1, 1, 3; bit 0 (MSB) is 1 for a = 1, 3; bit 1 is 1
  // for a = -1, 1 (Gray labels 00, 01, 11, 10). D_t = min over bit 1 - min over bit 0.
  //   x = 0.5:   m = 12, 2, 0, 6.        D0 = min(0, 6) - min(12, 2) = -2;  D1 = min(2, 0) - min(12, 6) = -6
  //   x = -2.25: m = -4.5, -3.5, 5.5, 22.5. D0 = 5.5 - (-4.5) = 10;       D1 = -3.5 - (-4.5) = 1
  //   x = 0.125: m = 9.75, 1.25, 0.75, 8.25. D0 = 0.75 - 1.25 = -0.5;     D1 = 0.75 - 8.25 = -7.5
  //   x = 3.5:   m = 30, 8, -6, -12.     D0 = -12 - 8 = -20;               D1 = -6 - (-12) = 6
  // In integers at f = 4 (a^2 16 - 2 a X), e.g. X = 8: 192, 32, 0, 96 -> D0 = 0 - 32 = -32 = -2 x 16,
  // D1 = 0 - 96 = -96 = -6 x 16; X = 2: 156, 20, 12, 132 -> D0 = -8 (-0.5), D1 = -120 (-7.5).
  // Columns n b + t, in-phase bits first: symbol 0: -2, -6, 10, 1; symbol 1: -0.5, -7.5, -20, 6.
  {
    // Q5.0, half_even, saturate ([-32, 31]): -0.5 -> 0 and -7.5 -> -8 (ties to even), the rest exact.
    const d::fixed_trial f =
        run_hand_case({fp::parse_format("Q5.0"), rounding_mode::half_even, overflow_mode::saturate});
    const d::word_matrix& eq = words_of(f, d::node_id::ul_eq);
    EXPECT_EQ(eq.re, (std::vector<std::int64_t>{8, 2}));
    EXPECT_EQ(eq.im, (std::vector<std::int64_t>{-36, 56}));
    EXPECT_EQ(words_of(f, d::node_id::ul_llr).re, (std::vector<std::int64_t>{-2, -6, 10, 1, 0, -8, -20, 6}));
    EXPECT_EQ(counts_of(f, d::node_id::ul_llr).requantized, 8U);
    EXPECT_EQ(counts_of(f, d::node_id::ul_llr).inexact, 2U);  // the two ties
    EXPECT_EQ(counts_of(f, d::node_id::ul_llr).overflowed, 0U);
  }
  {
    // Q2.0, floor, saturate ([-4, 3]): -0.5 -> -1; -7.5 -> -8 -> -4; -6, -20 -> -4; 10, 6 -> 3.
    // Five values overflow (-6, 10, -7.5, -20, 6).
    const d::fixed_trial f = run_hand_case({fp::parse_format("Q2.0"), rounding_mode::floor, overflow_mode::saturate});
    EXPECT_EQ(words_of(f, d::node_id::ul_llr).re, (std::vector<std::int64_t>{-2, -4, 3, 1, -1, -4, -4, 3}));
    EXPECT_EQ(counts_of(f, d::node_id::ul_llr).overflowed, 5U);
    EXPECT_EQ(counts_of(f, d::node_id::ul_llr).inexact, 2U);
    EXPECT_EQ(counts_of(f, d::node_id::ul_llr).requantized, 8U);
  }
}

TEST(uplink_stages, every_llr_word_is_the_exact_distance_difference_requantised_once) {
  // A real trial (8 antennas, 2 users, MMSE estimate, MRC), ul_eq at Q3.4 (16 LSBs per grid
  // unit, saturating at +-8), ul_llr in three formats: one wide enough (Q9.2 holds |D| < 512;
  // |D| <= (L - 1)^2 + 4 (L - 1) |x| = 49 + 28 x 8 = 273 for 64-QAM, L = 8 levels, at |x| <= 8),
  // and two narrow ones that saturate. Expected words and counts from the recomputation above.
  struct llr_case {
    const char* fmt;
    rounding_mode rounding;
    overflow_mode overflow;
    bool must_overflow;
  };
  const llr_case cases[] = {{"Q9.2", rounding_mode::half_away, overflow_mode::saturate, false},
                            {"Q2.1", rounding_mode::floor, overflow_mode::saturate, true},
                            {"Q2.0", rounding_mode::half_even, overflow_mode::saturate_symmetric, true}};
  for (const mod_info& m : {qpsk, qam16, qam64}) {
    const loaded l = load(scenario_text(8, 2, "mmse", "kind = \"mf\"", uplink_body(m.name, 6, "mrc")));
    for (std::uint64_t i_trial = 0; i_trial < 2; ++i_trial) {
      const g::trial_data trial = g::run_trial(l.scen, i_trial);
      for (const llr_case& lc : cases) {
        d::datapath_config c = l.config;
        set_node(c, d::node_id::ul_eq, "Q3.4", rounding_mode::half_even, overflow_mode::saturate);
        set_node(c, d::node_id::ul_llr, lc.fmt, lc.rounding, lc.overflow);
        const d::fixed_trial f = d::run_fixed_datapath(l.scen, c, trial);
        const d::word_matrix& eq = words_of(f, d::node_id::ul_eq);
        const d::word_matrix& llr = words_of(f, d::node_id::ul_llr);
        const std::string what = fmt::format("{} trial {} ul_llr {}", m.name, i_trial, lc.fmt);
        ASSERT_EQ(eq.rows, 2);
        ASSERT_EQ(eq.cols, 6);
        ASSERT_EQ(llr.rows, 2) << what;
        ASSERT_EQ(llr.cols, 6 * 2 * m.half_bits) << what;
        EXPECT_FALSE(llr.is_complex);
        tally want;
        const std::vector<std::int64_t> expected = expected_llr_words(eq, 4, m, c[d::node_id::ul_llr].spec, want);
        EXPECT_EQ(llr.re, expected) << what;
        expect_counts(counts_of(f, d::node_id::ul_llr), want, what);
        EXPECT_EQ(want.requantized, static_cast<std::uint64_t>(2 * 6 * 2 * m.half_bits)) << what;
        if (lc.must_overflow) {
          EXPECT_GT(want.overflowed, 0U) << what << ": the narrow format must saturate somewhere";
        } else {
          EXPECT_EQ(want.overflowed, 0U) << what;
        }
      }
    }
  }
}

TEST(uplink_stages, llr_words_at_unusual_equaliser_formats) {
  // Regression: ul_eq with negative fraction bits (W = 8, F = -2: LSB 4) and with negative
  // integer bits and many fraction bits (Q-50.60: a^2 2^60 needs 2 h + 61 bits, beyond 64 for
  // 64-QAM) once gave wrong words. Expected words from the same recomputation.
  for (const char* eq_fmt : {"8,-2", "Q-50.60"}) {
    for (const mod_info& m : {qam16, qam64}) {
      const loaded l = load(scenario_text(8, 2, "mmse", "kind = \"mf\"", uplink_body(m.name, 6, "mrc")));
      const g::trial_data trial = g::run_trial(l.scen, 0);
      d::datapath_config c = l.config;
      set_node(c, d::node_id::ul_eq, eq_fmt, rounding_mode::half_even, overflow_mode::saturate);
      set_node(c, d::node_id::ul_llr, "Q12.0", rounding_mode::half_even, overflow_mode::saturate);
      const d::fixed_trial f = d::run_fixed_datapath(l.scen, c, trial);
      tally want;
      const std::vector<std::int64_t> expected = expected_llr_words(
          words_of(f, d::node_id::ul_eq), c[d::node_id::ul_eq].spec.fmt.frac_bits, m, c[d::node_id::ul_llr].spec, want);
      EXPECT_EQ(words_of(f, d::node_id::ul_llr).re, expected) << eq_fmt << " " << m.name;
      expect_counts(counts_of(f, d::node_id::ul_llr), want, std::string(eq_fmt) + " " + m.name);
    }
  }
}

// =============================================================================================
// 2. ul_match, ul_comb (and ul_eq) bit-exact against the sequential accumulator's definition.

/// ul_match[k,n] = sequential sum over m = 0..M-1 of conj(chan_est[m,k]) ul_adc[m,n];
/// ul_comb[k,n] = sequential sum over j = 0..K-1 of inv_out[k,j] ul_match[j,n];
/// ul_eq[k,n] = Q(ul_scale[k] x[k,n]) (x = ul_comb or ul_match), one requantisation per part.
void check_uplink_sums(const loaded& l, const d::datapath_config& c, const g::trial_data& trial,
                       const std::string& what, bool combined) {
  const d::fixed_trial f = d::run_fixed_datapath(l.scen, c, trial);
  const d::word_matrix& h = words_of(f, d::node_id::chan_est);
  const d::word_matrix& y = words_of(f, d::node_id::ul_adc);
  const d::word_matrix& match = words_of(f, d::node_id::ul_match);
  const int num_ant = h.rows, num_users = h.cols, num_sym = y.cols;
  ASSERT_EQ(match.rows, num_users) << what;
  ASSERT_EQ(match.cols, num_sym) << what;
  tally want_match;
  for (int k = 0; k < num_users; ++k) {
    for (int n = 0; n < num_sym; ++n) {
      std::vector<cbig> terms;
      for (int m = 0; m < num_ant; ++m) terms.push_back(product(word_at(h, m, k), word_at(y, m, n), true));
      const cbig v = sequential_sum(terms, frac_of(c, d::node_id::chan_est) + frac_of(c, d::node_id::adc),
                                    c[d::node_id::ul_match].spec, want_match);
      const cbig got = word_at(match, k, n);
      EXPECT_TRUE(got.re == v.re && got.im == v.im) << what << ": ul_match[" << k << "," << n << "] = " << got.re << ","
                                                    << got.im << ", expected " << v.re << "," << v.im;
    }
  }
  expect_counts(counts_of(f, d::node_id::ul_match), want_match, what + " ul_match");
  EXPECT_EQ(want_match.requantized, static_cast<std::uint64_t>(4 * num_ant * num_users * num_sym));

  const d::word_matrix* x = &match;
  int x_frac = frac_of(c, d::node_id::ul_match);
  if (combined) {
    const d::word_matrix& inv = words_of(f, d::node_id::inv_out);
    const d::word_matrix& comb = words_of(f, d::node_id::ul_comb);
    ASSERT_EQ(comb.rows, num_users) << what;
    ASSERT_EQ(comb.cols, num_sym) << what;
    tally want_comb;
    for (int k = 0; k < num_users; ++k) {
      for (int n = 0; n < num_sym; ++n) {
        std::vector<cbig> terms;
        for (int j = 0; j < num_users; ++j) terms.push_back(product(word_at(inv, k, j), word_at(match, j, n), false));
        const cbig v = sequential_sum(terms, frac_of(c, d::node_id::inv_out) + frac_of(c, d::node_id::ul_match),
                                      c[d::node_id::ul_comb].spec, want_comb);
        const cbig got = word_at(comb, k, n);
        EXPECT_TRUE(got.re == v.re && got.im == v.im) << what << ": ul_comb[" << k << "," << n << "] = " << got.re
                                                      << "," << got.im << ", expected " << v.re << "," << v.im;
      }
    }
    expect_counts(counts_of(f, d::node_id::ul_comb), want_comb, what + " ul_comb");
    x = &comb;
    x_frac = frac_of(c, d::node_id::ul_comb);
  } else {
    EXPECT_TRUE(words_of(f, d::node_id::ul_comb).empty()) << what << ": no combiner with mrc";
  }

  const d::word_matrix& gain = words_of(f, d::node_id::ul_scale);
  const d::word_matrix& eq = words_of(f, d::node_id::ul_eq);
  tally want_eq;
  for (int k = 0; k < num_users; ++k) {
    const big s(gain.re[static_cast<std::size_t>(k)]);
    for (int n = 0; n < num_sym; ++n) {
      const cbig v = word_at(*x, k, n);
      const int pf = x_frac + frac_of(c, d::node_id::ul_scale);
      const big re = requantize(v.re * s, pf, c[d::node_id::ul_eq].spec, want_eq);
      const big im = requantize(v.im * s, pf, c[d::node_id::ul_eq].spec, want_eq);
      const cbig got = word_at(eq, k, n);
      EXPECT_TRUE(got.re == re && got.im == im) << what << ": ul_eq[" << k << "," << n << "]";
    }
  }
  expect_counts(counts_of(f, d::node_id::ul_eq), want_eq, what + " ul_eq");
}

/// The largest real or imaginary part of a golden matrix, as a power of two exponent e with
/// 2^(e-1) < max <= 2^e.
int top_exponent(const Eigen::MatrixXcd& v) {
  double top = 0;
  for (Eigen::Index i = 0; i < v.size(); ++i) top = std::max({top, std::abs(v(i).real()), std::abs(v(i).imag())});
  return static_cast<int>(std::ceil(std::log2(top)));
}

TEST(uplink_stages, match_and_combiner_words_follow_the_sequential_definition) {
  // M = 8, K = 2, N_ul = 6, one cell, MMSE estimate; MRC, ZF (LDL^H) and MMSE (RZF) combiners.
  // Three configurations per trial:
  //  - "narrow": ul_adc Q2.9, chan_est Q2.11 and inv_out Q3.12 (products at 20 and 12 + F_match
  //    fraction bits), the sums with a few fraction bits and integer bits from the golden range
  //    plus a guard bit (rounding everywhere);
  //  - "tight": the same with two integer bits fewer (one short of the golden range 2^e), so
  //    that the largest values overflow
  //    (ul_match saturates, ul_comb wraps), ties and half-way modes exercised;
  //  - "wide": every node at the default Q20.43 (the products need more than 63 bits: the
  //    stage's 128-bit path rather than its 64-bit fast loop).
  for (const char* combiner : {"mrc", "zf", "mmse"}) {
    const bool combined = std::string(combiner) != "mrc";
    const loaded l = load(scenario_text(8, 2, "mmse", precoder_for(combiner), uplink_body("16qam", 6, combiner)));
    for (std::uint64_t i_trial = 0; i_trial < 3; ++i_trial) {
      const g::trial_data trial = g::run_trial(l.scen, i_trial);
      const int e_match = top_exponent(trial.uplink->match);
      const int e_comb = combined ? top_exponent(trial.uplink->combined) : 0;
      for (int variant = 0; variant < 3; ++variant) {
        d::datapath_config c = l.config;
        const std::string what = fmt::format("{} trial {} variant {}", combiner, i_trial, variant);
        if (variant < 2) {
          const int drop = variant == 1 ? 1 : 0;  // tight: one integer bit short of the range
          set_node(c, d::node_id::adc, "Q2.9", rounding_mode::half_even, overflow_mode::saturate);
          set_node(c, d::node_id::chan_est, "Q2.11", rounding_mode::half_away, overflow_mode::saturate);
          set_node(c, d::node_id::inv_out, "Q3.12", rounding_mode::half_even, overflow_mode::saturate);
          // m integer bits (negative where the values are small: "Q-2.9" spans [-1/4, 1/4)), and
          // 6 or 5 significant bits below the range.
          const int m_match = e_match + 1 - 2 * drop, m_comb = e_comb + 1 - 2 * drop;
          const std::string match_q = fmt::format("Q{}.{}", m_match, 6 - std::min(0, m_match));
          const std::string comb_q = fmt::format("Q{}.{}", m_comb, 5 - std::min(0, m_comb));
          set_node(c, d::node_id::ul_match, match_q.c_str(),
                   variant == 1 ? rounding_mode::half_up : rounding_mode::half_even, overflow_mode::saturate);
          set_node(c, d::node_id::ul_comb, comb_q.c_str(),
                   variant == 1 ? rounding_mode::half_down : rounding_mode::floor,
                   variant == 1 ? overflow_mode::wrap : overflow_mode::saturate);
          set_node(c, d::node_id::ul_scale, "Q6.10", rounding_mode::half_even, overflow_mode::saturate);
          set_node(c, d::node_id::ul_eq, "Q4.8", rounding_mode::toward_zero, overflow_mode::saturate);
        }
        check_uplink_sums(l, c, trial, what, combined);
        if (HasFailure()) return;  // one scenario's report is enough
        if (variant == 1) {
          // The tight format really overflows (so the overflow paths were compared above).
          const d::fixed_trial f = d::run_fixed_datapath(l.scen, c, trial);
          EXPECT_GT(counts_of(f, d::node_id::ul_match).overflowed, 0U) << what;
          if (combined) {
            EXPECT_GT(counts_of(f, d::node_id::ul_comb).overflowed, 0U) << what;
          }
        }
      }
    }
  }
}

// =============================================================================================
// 3. Wide formats converge to the golden model, within a bound derived element by element.
//
// Notation: L = 2^-43, the LSB of the default Q20.43; u = 2^-53, the unit roundoff of double
// (common practice). A complex word whose parts are each rounded once carries |e| <= L / sqrt(2).
// For a fixed value a_f = a_g + e_a (a_g golden) and b_f = b_g + e_b:
//   |a_f b_f - a_g b_g| <= |a_g| |e_b| + |b_g| |e_a| + |e_a| |e_b|   (exact, triangle inequality).
// ul_match (n = M terms) and ul_comb (n = K terms), sequential, no overflow: each term is rounded
// once per part (|e| <= L / sqrt(2)), the sums are exact, so
//   |fixed - golden| <= sum_i (|a_i| |e_b,i| + |b_i| |e_a,i| + |e_a,i| |e_b,i|) + n L / sqrt(2) + g,
// with the input errors e measured on the input nodes (fixed minus golden) and g the golden
// model's own error in forming the sum in double: a complex product and n - 1 additions stay
// within (n + 3) u sum_i |a_i| |b_i| (Higham, Accuracy and Stability of Numerical Algorithms,
// 2002, Sec. 3.1 and 3.6, from memory; we double it: 2 (n + 3) u).
// ul_eq = Q(c x): |e| <= |c| |e_x| + |x| |e_c| + |e_c| |e_x| + L / sqrt(2) + 4 u |c x|.
// ul_llr: D(x) = min_{A1}(a^2 - 2 a x) - min_{A0}(a^2 - 2 a x) is Lipschitz in x with constant
// 2 max|a| + 2 max|a| = 4 (L_axis - 1); computed exactly from the fixed x and rounded once:
//   |e| <= 4 (L_axis - 1) |e_x| + L / 2 + g_D, g_D = 8 u (|x| + L_axis)^2 for the golden
// model's (x - a)^2 in double (two subtractions, a product, a difference).
// The bounds and the errors are themselves evaluated in double (a few roundings of relative
// size u each); every bound is widened by the relative 64 u for that.

struct node_errors {
  Eigen::MatrixXcd golden, fixed;
  [[nodiscard]] double err(Eigen::Index r, Eigen::Index c) const { return std::abs(fixed(r, c) - golden(r, c)); }
};

node_errors compare(const d::fixed_trial& f, const std::vector<Eigen::MatrixXcd>& gv, const d::datapath_config& c,
                    d::node_id id) {
  return {gv[d::index_of(id)], d::to_values(words_of(f, id), frac_of(c, id))};
}

TEST(uplink_stages, wide_formats_follow_the_golden_model_within_the_derived_bound) {
  const double lsb = std::ldexp(1.0, -43), u = std::ldexp(1.0, -53);
  const double part_err = lsb / std::sqrt(2.0);
  for (const char* combiner : {"mrc", "zf", "mmse"}) {
    const bool combined = std::string(combiner) != "mrc";
    const loaded l = load(scenario_text(8, 2, "mmse", precoder_for(combiner), uplink_body("16qam", 6, combiner)));
    const d::datapath_config c;  // every node at the wide default
    ASSERT_EQ(fp::to_q_string(c[d::node_id::ul_llr].spec.fmt), "Q20.43");
    const d::datapath_plan plan = d::stages_for(l.scen);
    for (std::uint64_t i_trial = 0; i_trial < 3; ++i_trial) {
      const g::trial_data trial = g::run_trial(l.scen, i_trial);
      const d::fixed_trial f = d::run_fixed_datapath(plan, l.scen, c, trial);
      const std::vector<Eigen::MatrixXcd> gv = d::golden_node_values(plan, l.scen, trial);
      const std::string what = fmt::format("{} trial {}", combiner, i_trial);
      for (d::node_id id : {d::node_id::ul_adc, d::node_id::ul_match, d::node_id::ul_comb, d::node_id::ul_scale,
                            d::node_id::ul_eq, d::node_id::ul_llr}) {
        if (id == d::node_id::ul_comb && !combined) continue;
        EXPECT_EQ(counts_of(f, id).overflowed, 0U) << what << " " << d::node_name(id);
      }
      const node_errors y = compare(f, gv, c, d::node_id::ul_adc);
      const node_errors h = compare(f, gv, c, d::node_id::chan_est);
      const node_errors match = compare(f, gv, c, d::node_id::ul_match);
      const node_errors scale = compare(f, gv, c, d::node_id::ul_scale);
      const node_errors eq = compare(f, gv, c, d::node_id::ul_eq);
      const node_errors llr = compare(f, gv, c, d::node_id::ul_llr);
      const Eigen::Index num_ant = h.golden.rows(), num_users = h.golden.cols(), num_sym = y.golden.cols();
      ASSERT_EQ(match.golden.rows(), num_users);
      ASSERT_EQ(match.fixed.cols(), num_sym);
      // The converters: one rounding of the golden value.
      for (Eigen::Index i = 0; i < y.golden.size(); ++i)
        EXPECT_LE(std::abs(y.fixed(i) - y.golden(i)), part_err) << what << " ul_adc";
      for (Eigen::Index k = 0; k < num_users; ++k)
        EXPECT_LE(std::abs(scale.fixed(k) - scale.golden(k)), lsb / 2) << what << " ul_scale";

      double worst_ratio = 0;  // largest error / bound, for the message
      auto check = [&](const char* node, double error, double bound) {
        const double evaluated = bound * (1.0 + 64.0 * u);
        worst_ratio = std::max(worst_ratio, error / evaluated);
        EXPECT_LE(error, evaluated) << what << " " << node;
      };
      for (Eigen::Index k = 0; k < num_users; ++k) {
        for (Eigen::Index n = 0; n < num_sym; ++n) {
          double bound = static_cast<double>(num_ant) * part_err, mags = 0;
          for (Eigen::Index m = 0; m < num_ant; ++m) {
            const double ah = std::abs(h.golden(m, k)), ay = std::abs(y.golden(m, n));
            bound += ah * y.err(m, n) + ay * h.err(m, k) + h.err(m, k) * y.err(m, n);
            mags += ah * ay;
          }
          bound += 2.0 * static_cast<double>(num_ant + 3) * u * mags;
          check("ul_match", match.err(k, n), bound);
        }
      }
      const node_errors* x = &match;
      node_errors comb;
      if (combined) {
        const node_errors inv = compare(f, gv, c, d::node_id::inv_out);
        comb = compare(f, gv, c, d::node_id::ul_comb);
        for (Eigen::Index k = 0; k < num_users; ++k) {
          for (Eigen::Index n = 0; n < num_sym; ++n) {
            double bound = static_cast<double>(num_users) * part_err, mags = 0;
            for (Eigen::Index j = 0; j < num_users; ++j) {
              const double ai = std::abs(inv.golden(k, j)), am = std::abs(match.golden(j, n));
              bound += ai * match.err(j, n) + am * inv.err(k, j) + inv.err(k, j) * match.err(j, n);
              mags += ai * am;
            }
            bound += 2.0 * static_cast<double>(num_users + 3) * u * mags;
            check("ul_comb", comb.err(k, n), bound);
          }
        }
        x = &comb;
      }
      const int levels = 4, bits = 4;  // 16-QAM: 4 levels per axis, 4 bits per symbol
      for (Eigen::Index k = 0; k < num_users; ++k) {
        const double cg = std::abs(scale.golden(k)), ec = scale.err(k, 0);
        for (Eigen::Index n = 0; n < num_sym; ++n) {
          const double xg = std::abs(x->golden(k, n)), ex = x->err(k, n);
          check("ul_eq", eq.err(k, n), cg * ex + xg * ec + ec * ex + part_err + 4 * u * cg * xg);
          const double e_grid = eq.err(k, n);
          for (int b = 0; b < bits; ++b) {
            const double part = b < bits / 2 ? eq.golden(k, n).real() : eq.golden(k, n).imag();
            const double g_d = 8 * u * (std::abs(part) + levels) * (std::abs(part) + levels);
            check("ul_llr", llr.err(k, n * bits + b), 4.0 * (levels - 1) * e_grid + lsb / 2 + g_d);
          }
        }
      }
      // The bound is itself of LSB size: every value within 2^-30 relative of the node's
      // largest golden magnitude (a derived bound of a few thousand LSBs would be far below).
      for (const node_errors* n : {&match, &eq, &llr}) {
        const double top = n->golden.cwiseAbs().maxCoeff();
        EXPECT_LE((n->fixed - n->golden).cwiseAbs().maxCoeff(), std::ldexp(top, -30)) << what;
      }
      // Nor is the bound loose: ul_eq's error is essentially its gain times its input's error,
      // the leading term of its bound, so some element comes within a factor 10 of it.
      EXPECT_GT(worst_ratio, 0.1) << what;
    }
  }
}

// =============================================================================================
// 3b. The uplink's own inverter (inverse = "own"): ul_gram .. ul_inv_out are the downlink's Gram
// and LDL^H stages on their own nodes. Its arithmetic is checked where the downlink's is
// (tests/datapath/inverters_test.cpp: every word against an exact recomputation); here: (a) at
// the settings of the shared nodes, every word of every own node equals its downlink twin and
// the uplink's outputs equal those of the shared inverse, bit for bit, at narrow formats where
// rounding and saturation are exercised; (b) its formats are its own: narrowing ul_gram changes
// the uplink's words and none of the downlink's; (c) with an MF precoder (no downlink inverse)
// at wide formats, ul_inv_out is the golden (H^H H + I / rho_ul)^-1 to within 2^-30 of its
// largest entry, checked against Eigen's LU inverse written here (a general-purpose library).

const std::vector<std::pair<d::node_id, d::node_id>>& inverter_twins() {
  static const std::vector<std::pair<d::node_id, d::node_id>> twins{
      {d::node_id::gram, d::node_id::ul_gram},
      {d::node_id::ldl_acc, d::node_id::ul_ldl_acc},
      {d::node_id::inv_diag_recip, d::node_id::ul_inv_recip},
      {d::node_id::inv_factor, d::node_id::ul_inv_factor},
      {d::node_id::inv_fwd, d::node_id::ul_inv_fwd},
      {d::node_id::inv_out, d::node_id::ul_inv_out}};
  return twins;
}

TEST(uplink_stages, own_inverter_at_the_shared_settings_is_the_shared_one_bit_for_bit) {
  for (const char* combiner : {"zf", "mmse"}) {
    const std::string body = uplink_body("16qam", 6, combiner);
    const loaded shared = load(scenario_text(8, 3, "mmse", precoder_for(combiner), body));
    const loaded own = load(scenario_text(8, 3, "mmse", precoder_for(combiner), body + "inverse = \"own\"\n"));
    d::datapath_config c;
    // Narrow enough that rounding is inexact everywhere and the Gram saturates now and then.
    set_node(c, d::node_id::chan_est, "Q1.8", rounding_mode::half_even, overflow_mode::saturate);
    set_node(c, d::node_id::gram, "Q2.9", rounding_mode::half_up, overflow_mode::saturate);
    set_node(c, d::node_id::ldl_acc, "Q3.10", rounding_mode::half_even, overflow_mode::wrap);
    set_node(c, d::node_id::inv_diag_recip, "Q1.10", rounding_mode::floor, overflow_mode::saturate);
    set_node(c, d::node_id::inv_factor, "Q1.9", rounding_mode::half_away, overflow_mode::saturate);
    set_node(c, d::node_id::inv_fwd, "Q2.9", rounding_mode::half_even, overflow_mode::saturate);
    set_node(c, d::node_id::inv_out, "Q1.11", rounding_mode::toward_zero, overflow_mode::saturate);
    set_node(c, d::node_id::ul_comb, "Q3.10", rounding_mode::half_even, overflow_mode::saturate);
    for (const auto& [dl, ul] : inverter_twins()) c[ul] = c[dl];
    const d::datapath_plan plan_shared = d::stages_for(shared.scen), plan_own = d::stages_for(own.scen);
    EXPECT_EQ(plan_own.sources_of(d::node_id::ul_comb),
              (std::vector<d::node_id>{d::node_id::ul_inv_out, d::node_id::ul_match}));
    EXPECT_EQ(plan_own.sources_of(d::node_id::ul_gram), (std::vector<d::node_id>{d::node_id::chan_est}));
    EXPECT_FALSE(plan_shared.has(d::node_id::ul_gram));
    std::uint64_t inexact = 0;
    for (std::uint64_t i_trial = 0; i_trial < 3; ++i_trial) {
      const g::trial_data t_shared = g::run_trial(shared.scen, i_trial), t_own = g::run_trial(own.scen, i_trial);
      const d::fixed_trial a = d::run_fixed_datapath(plan_shared, shared.scen, c, t_shared);
      const d::fixed_trial b = d::run_fixed_datapath(plan_own, own.scen, c, t_own);
      const std::string what = fmt::format("{} trial {}", combiner, i_trial);
      for (const auto& [dl, ul] : inverter_twins()) {
        EXPECT_EQ(words_of(b, ul).re, words_of(b, dl).re) << what << " " << d::node_name(ul);
        EXPECT_EQ(words_of(b, ul).im, words_of(b, dl).im) << what << " " << d::node_name(ul);
        EXPECT_EQ(counts_of(b, ul).overflowed, counts_of(b, dl).overflowed) << what << " " << d::node_name(ul);
        inexact += counts_of(b, ul).inexact;
      }
      for (d::node_id id : {d::node_id::ul_comb, d::node_id::ul_eq, d::node_id::ul_llr, d::node_id::dac}) {
        EXPECT_EQ(words_of(a, id).re, words_of(b, id).re) << what << " " << d::node_name(id);
        EXPECT_EQ(words_of(a, id).im, words_of(b, id).im) << what << " " << d::node_name(id);
      }
    }
    EXPECT_GT(inexact, 0U) << combiner << ": the formats must make the twins round";
  }
}

TEST(uplink_stages, own_inverter_formats_are_its_own) {
  const loaded own =
      load(scenario_text(8, 3, "mmse", precoder_for("zf"), uplink_body("16qam", 6, "zf") + "inverse = \"own\"\n"));
  const d::datapath_plan plan = d::stages_for(own.scen);
  const d::datapath_config wide;
  d::datapath_config narrow = wide;
  set_node(narrow, d::node_id::ul_gram, "Q4.3", rounding_mode::half_even, overflow_mode::saturate);
  const g::trial_data trial = g::run_trial(own.scen, 1);
  const d::fixed_trial a = d::run_fixed_datapath(plan, own.scen, wide, trial);
  const d::fixed_trial b = d::run_fixed_datapath(plan, own.scen, narrow, trial);
  for (d::node_id id : plan.nodes()) {
    const bool uplink_side = d::node_name(id).substr(0, 3) == "ul_";
    const bool same = words_of(a, id).re == words_of(b, id).re && words_of(a, id).im == words_of(b, id).im;
    if (!uplink_side) {
      EXPECT_TRUE(same) << d::node_name(id) << " is the downlink's";
    }
  }
  for (d::node_id id : {d::node_id::ul_gram, d::node_id::ul_inv_out, d::node_id::ul_comb, d::node_id::ul_eq})
    EXPECT_NE(words_of(a, id).re, words_of(b, id).re) << d::node_name(id) << " follows ul_gram";
  for (d::node_id id : {d::node_id::ul_adc, d::node_id::ul_match, d::node_id::ul_scale})
    EXPECT_EQ(words_of(a, id).re, words_of(b, id).re) << d::node_name(id) << " is upstream of ul_gram";
}

TEST(uplink_stages, own_inverter_without_a_downlink_inverse_matches_the_loaded_gram_inverse) {
  const double lsb = std::ldexp(1.0, -43);
  for (const char* combiner : {"zf", "mmse"}) {
    const loaded own =
        load(scenario_text(16, 4, "mmse", "kind = \"mf\"", uplink_body("qpsk", 4, combiner) + "inverse = \"own\"\n"));
    const d::datapath_plan plan = d::stages_for(own.scen);
    EXPECT_FALSE(plan.has(d::node_id::inv_out)) << "an MF precoder inverts nothing";
    const d::datapath_config c;
    const double loading = std::string(combiner) == "mmse" ? 0.1 : 0.0;  // 1 / rho_ul at 10 dB
    for (std::uint64_t i_trial = 0; i_trial < 3; ++i_trial) {
      const g::trial_data trial = g::run_trial(own.scen, i_trial);
      const d::fixed_trial f = d::run_fixed_datapath(plan, own.scen, c, trial);
      Eigen::MatrixXcd h = d::to_values(words_of(f, d::node_id::chan_est), frac_of(c, d::node_id::chan_est));
      Eigen::MatrixXcd gram = h.adjoint() * h;
      gram.diagonal().array() += loading;
      const Eigen::MatrixXcd expected = gram.partialPivLu().inverse();
      const Eigen::MatrixXcd got =
          d::to_values(words_of(f, d::node_id::ul_inv_out), frac_of(c, d::node_id::ul_inv_out));
      const double top = expected.cwiseAbs().maxCoeff();
      EXPECT_LE((got - expected).cwiseAbs().maxCoeff(), std::ldexp(top, -30) + 64 * lsb)
          << combiner << " trial " << i_trial;
      EXPECT_EQ(counts_of(f, d::node_id::ul_inv_out).overflowed, 0U);
    }
  }
}

// =============================================================================================
// 4. One ADC: ul_adc is the adc converter at another time.

TEST(uplink_stages, ul_adc_uses_the_adc_setting) {
  // AGC back-off -6 dB: the samples' parts have an RMS near 1.4 (twice that of 0 dB), so a
  // Q1.7 converter ([-2, 2 - 1/128]) clips some of them.
  for (const char* setting :
       {"rounding = \"half_away\"\noverflow = \"saturate\"", "rounding = \"floor\"\noverflow = \"wrap\""}) {
    const std::string extra =
        fmt::format("[frontend]\nagc_backoff_db = -6.0\n[nodes.adc]\nformat = \"Q1.7\"\n{}\n", setting);
    const loaded l = load(scenario_text(8, 2, "mmse", "kind = \"mf\"", uplink_body("qpsk", 40, "mrc"), extra));
    // One setting, read and written through either name.
    EXPECT_EQ(&l.config[d::node_id::ul_adc], &l.config[d::node_id::adc]);
    EXPECT_EQ(fp::to_q_string(l.config[d::node_id::ul_adc].spec.fmt), "Q1.7");
    const fp::target spec = l.config[d::node_id::adc].spec;
    const g::trial_data trial = g::run_trial(l.scen, 1);
    const d::fixed_trial f = d::run_fixed_datapath(l.scen, l.config, trial);
    for (const bool uplink : {true, false}) {
      const Eigen::MatrixXcd& golden = uplink ? trial.uplink->adc : trial.adc;
      const d::word_matrix& w = words_of(f, uplink ? d::node_id::ul_adc : d::node_id::adc);
      const std::string what = fmt::format("{} {}", setting, uplink ? "ul_adc" : "adc");
      ASSERT_EQ(w.rows, golden.rows()) << what;
      ASSERT_EQ(w.cols, golden.cols()) << what;
      tally want;
      for (int r = 0; r < w.rows; ++r) {
        for (int col = 0; col < w.cols; ++col) {
          const big re = requantize_double(golden(r, col).real(), spec, want);
          const big im = requantize_double(golden(r, col).imag(), spec, want);
          const cbig got = word_at(w, r, col);
          EXPECT_TRUE(got.re == re && got.im == im) << what << " [" << r << "," << col << "]";
          EXPECT_TRUE(got.re >= -256 && got.re <= 255 && got.im >= -256 && got.im <= 255) << what;  // 9 bits
        }
      }
      expect_counts(counts_of(f, uplink ? d::node_id::ul_adc : d::node_id::adc), want, what);
      if (uplink) {
        EXPECT_GT(want.overflowed, 0U) << what << ": the back-off was chosen to clip";
      }
    }
  }
}

TEST(uplink_stages, a_table_for_ul_adc_is_refused) {
  const std::string text = scenario_text(8, 2, "mmse", "kind = \"mf\"", uplink_body("qpsk", 4, "mrc"),
                                         "[nodes.ul_adc]\nformat = \"Q1.7\"\n");
  const g::scenario_document doc = g::parse_scenario_document(text, "ul-adc.toml");
  try {
    (void)d::parse_datapath_config(doc);
    ADD_FAILURE() << "a [nodes.ul_adc] table was accepted";
  } catch (const g::scenario_error& e) {
    const std::string message = e.what();
    EXPECT_NE(message.find("nodes.ul_adc"), std::string::npos) << message;
    EXPECT_NE(message.find("[nodes.adc]"), std::string::npos) << message;
    EXPECT_EQ(e.key, "nodes.ul_adc");
  }
}

// =============================================================================================
// 5. The plan's shape.

std::ptrdiff_t stage_index(const d::datapath_plan& plan, d::node_id id) {
  for (std::size_t i = 0; i < plan.stages.size(); ++i)
    if (plan.stages[i]->outputs(id)) return static_cast<std::ptrdiff_t>(i);
  return -1;
}

TEST(uplink_stages, plan_shape_per_combiner) {
  const std::vector<d::node_id> uplink_nodes{d::node_id::ul_adc,   d::node_id::ul_match, d::node_id::ul_comb,
                                             d::node_id::ul_scale, d::node_id::ul_eq,    d::node_id::ul_llr};
  for (const char* combiner : {"mrc", "zf", "mmse"}) {
    const bool combined = std::string(combiner) != "mrc";
    const loaded l = load(scenario_text(8, 2, "mmse", precoder_for(combiner), uplink_body("64qam", 5, combiner)));
    const d::datapath_plan plan = d::stages_for(l.scen);
    EXPECT_EQ(plan.dims.ul_symbol, 5) << combiner;
    EXPECT_EQ(plan.dims.ul_bit, 30) << combiner;  // 5 symbols x 6 bits
    EXPECT_EQ(plan.has(d::node_id::ul_comb), combined) << combiner;
    const std::ptrdiff_t i_match = stage_index(plan, d::node_id::ul_match);
    const std::ptrdiff_t i_eq = stage_index(plan, d::node_id::ul_eq);
    ASSERT_GE(i_match, 0);
    EXPECT_GT(i_match, stage_index(plan, d::node_id::ul_adc)) << combiner;
    EXPECT_GT(i_match, stage_index(plan, d::node_id::chan_est)) << combiner;
    EXPECT_GT(stage_index(plan, d::node_id::ul_llr), i_eq) << combiner;
    EXPECT_EQ(plan.sources_of(d::node_id::ul_match),
              (std::vector<d::node_id>{d::node_id::chan_est, d::node_id::ul_adc}));
    if (combined) {
      const std::ptrdiff_t i_comb = stage_index(plan, d::node_id::ul_comb);
      EXPECT_GT(i_comb, stage_index(plan, d::node_id::inv_out)) << combiner;
      EXPECT_GT(i_comb, i_match) << combiner;
      EXPECT_GT(i_eq, i_comb) << combiner;
      EXPECT_EQ(plan.sources_of(d::node_id::ul_comb),
                (std::vector<d::node_id>{d::node_id::inv_out, d::node_id::ul_match}));
      EXPECT_EQ(plan.sources_of(d::node_id::ul_eq),
                (std::vector<d::node_id>{d::node_id::ul_comb, d::node_id::ul_scale}));
    } else {
      EXPECT_FALSE(plan.has(d::node_id::inv_out)) << combiner;
      EXPECT_EQ(plan.sources_of(d::node_id::ul_eq),
                (std::vector<d::node_id>{d::node_id::ul_match, d::node_id::ul_scale}));
    }
    // Computed once per trial: no uplink stage is a data-phase stage.
    const std::vector<bool> data = plan.data_stages();
    const std::vector<bool> data_node = plan.data_nodes();
    for (d::node_id id : uplink_nodes) {
      if (!plan.has(id)) continue;
      EXPECT_FALSE(data[static_cast<std::size_t>(stage_index(plan, id))]) << combiner << " " << d::node_name(id);
      EXPECT_FALSE(data_node[d::index_of(id)]) << combiner << " " << d::node_name(id);
    }
    EXPECT_TRUE(data_node[d::index_of(d::node_id::dac)]) << "the downlink's data phase is still there";
  }
  // Without an [uplink] table: no ul_* node at all.
  const loaded none = load(scenario_text(8, 2, "mmse", precoder_for("zf"), ""));
  const d::datapath_plan plan = d::stages_for(none.scen);
  for (d::node_id id : plan.nodes()) EXPECT_NE(d::node_name(id).substr(0, 3), "ul_") << d::node_name(id);
  for (d::node_id id : uplink_nodes) EXPECT_FALSE(plan.has(id)) << d::node_name(id);
  EXPECT_EQ(plan.dims.ul_symbol, 0);
  EXPECT_EQ(plan.dims.ul_bit, 0);
}

}  // namespace
