// The accumulating stages in the sequential order (correlator, Gram, precoder, Neumann terms,
// transmit), which run the many-output vector kernel (fixedpoint/mac_lanes.hpp), against the
// sequential order's definition (fixedpoint/accumulator.hpp: acc <- Q(acc + Q(p_i)) per part, in
// index order) computed here through complex_accumulator in 128-bit integers, word for word and
// counter for counter. The stages' input words are drawn over their whole range (the most
// negative and largest words, zero, +-1, every magnitude), the accumulators are narrow enough to
// overflow often, and a shift of 1 makes exact half-LSB ties common. ctest runs these tests again
// with FXMIMO_SIMD=scalar and FXMIMO_SIMD=SSE4 (tests/CMakeLists.txt), so the vector targets and
// the scalar twin all meet the same definition.
#include <gtest/gtest.h>

#include <random>
#include <string>
#include <vector>

#include "fxmimo/datapath/datapath.hpp"
#include "fxmimo/datapath/plan.hpp"
#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/dot_kernel.hpp"
#include "word_checks.hpp"

namespace fp = fxmimo::fixedpoint;
namespace d = fxmimo::datapath;
namespace g = fxmimo::golden;
using fxmimo::test_support::describe;
using fxmimo::test_support::hex;

namespace {

using cw = fp::cword<std::int64_t>;
using wide = fp::cword<fp::int128>;

/// Our own test scenarios: odd user counts so that rows of outputs end in part-filled vectors,
/// a prime antenna count.
std::string scenario_text(const char* precoder) {
  return std::string(R"(
name = "sequential-stages"
seed = 5
trials = 1
[array]
antennas = 13
[cells]
count = 1
users_per_cell = 7
user_gains_db = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0]
[pilots]
length = 8
sequence = "walsh"
snr_db = 10.0
[estimator]
kind = "mmse"
[data]
modulation = "16qam"
symbols = 11
snr_db = 15.0
[precoder]
)") + precoder;
}

struct stage_case {
  const char* name;
  fp::format inputs;  ///< every node a checked stage reads
  fp::format acc;     ///< the checked accumulators
  fp::rounding_mode rounding;
  fp::overflow_mode overflow;
  std::uint64_t seed;
};

std::ostream& operator<<(std::ostream& os, const stage_case& c) { return os << c.name; }

/// The nodes whose words the checked stages accumulate.
const std::vector<d::node_id> accumulators{d::node_id::pilot_acc, d::node_id::gram, d::node_id::precoder,
                                           d::node_id::inv_term, d::node_id::tx_acc};

d::datapath_config config_for(const stage_case& tc) {
  d::datapath_config c;
  for (d::node_setting& s : c.nodes) s = {{tc.inputs, tc.rounding, tc.overflow}, {}, false};
  for (d::node_id id : accumulators) c[id].spec.fmt = tc.acc;
  return c;
}

/// Every word drawn over the format's whole range (test_support::draw_word).
void fill_random(d::word_matrix& w, const fp::format& f, std::mt19937_64& rng) {
  const fp::requantizer<std::int64_t> q({f, fp::rounding_mode::floor, fp::overflow_mode::wrap});
  for (auto& v : w.re) v = fxmimo::test_support::draw_word(rng, q.min_word(), q.max_word());
  for (auto& v : w.im) v = fxmimo::test_support::draw_word(rng, q.min_word(), q.max_word());
}

cw word_at(const d::word_matrix& w, int row, int col) {
  const std::size_t i = w.at(row, col);
  return {w.re[i], w.is_complex ? w.im[i] : 0};
}

void put_word(d::word_matrix& w, int row, int col, const cw& v) {
  w.re[w.at(row, col)] = v.re;
  w.im[w.at(row, col)] = v.im;
}

/// The definition: sum over i < num_terms of term(i) (exact, term_frac fraction bits) in the
/// sequential order through the target t, counted into c.
template <class Term>
cw sequential_sum(int num_terms, Term&& term, int term_frac, const fp::target& t, fp::counters& c) {
  const fp::requantizer<fp::int128> q(t);
  fp::complex_accumulator<fp::int128> acc(q);
  for (int i = 0; i < num_terms; ++i) acc.add(term(i), term_frac, c);
  const wide v = acc.result(c);
  return {fp::convert_int<std::int64_t>(v.re), fp::convert_int<std::int64_t>(v.im)};
}

/// A node's expected words and counters, built here.
struct expected_node {
  d::word_matrix words;
  fp::counters counters;
};

/// A rows x cols node whose word (r, c) is the sequential sum over i < num_terms of term(r, c, i).
template <class Term>
expected_node sums_of_terms(int rows, int cols, int num_terms, Term&& term, int term_frac, const fp::target& t) {
  expected_node want{d::word_matrix(rows, cols, true), {}};
  for (int r = 0; r < rows; ++r) {
    for (int c = 0; c < cols; ++c)
      put_word(want.words, r, c,
               sequential_sum(
                   num_terms, [&](int i) { return term(r, c, i); }, term_frac, t, want.counters));
  }
  return want;
}

/// Every word equal as integers and the counters equal; otherwise the first mismatching word
/// (row, column, expected, got in hex and value).
::testing::AssertionResult expect_bit_exact(const expected_node& want, const d::word_matrix& got,
                                            const fp::counters& got_counters) {
  if (got.rows != want.words.rows || got.cols != want.words.cols)
    return ::testing::AssertionFailure() << "shape " << got.rows << " x " << got.cols;
  for (int r = 0; r < got.rows; ++r) {
    for (int c = 0; c < got.cols; ++c) {
      const cw e = word_at(want.words, r, c), v = word_at(got, r, c);
      if (e != v) {
        return ::testing::AssertionFailure()
               << "first mismatch at (" << r << ", " << c << "): expected re " << hex(e.re) << " im " << hex(e.im)
               << ", got re " << hex(v.re) << " im " << hex(v.im);
      }
    }
  }
  if (!(want.counters == got_counters)) {
    return ::testing::AssertionFailure() << "counters differ: expected " << describe(want.counters) << ", got "
                                         << describe(got_counters);
  }
  return ::testing::AssertionSuccess();
}

wide to_wide(const cw& v) { return {fp::int128(v.re), fp::int128(v.im)}; }

template <fp::product_form Form>
wide product(const cw& a, const cw& b) {
  return fp::form_product<Form, fp::int128>(to_wide(a), to_wide(b));
}

/// Runs the stage that computes `checked` on random words of its inputs; returns the words and
/// counters of every node after the stage.
struct stage_run {
  std::vector<d::word_matrix> words;
  std::vector<fp::counters> counters;
  const d::word_matrix& of(d::node_id id) const { return words[d::index_of(id)]; }
};

stage_run run_stage_on_random_inputs(const g::scenario& scen, const d::datapath_config& config, d::node_id checked,
                                     std::mt19937_64& rng) {
  const d::datapath_plan plan = d::stages_for(scen);
  const g::trial_data trial = g::run_trial(scen, 0);
  d::datapath_config shapes;  // every node at the default target: only the shapes are used
  stage_run run{d::run_fixed_datapath(plan, scen, shapes, trial).words, {}};
  run.counters.assign(run.words.size(), fp::counters{});
  const d::stage* s = plan.producer(checked);
  for (const d::port& p : s->ports()) {
    for (d::node_id id : p.sources) {
      if (!s->outputs(id)) fill_random(run.words[d::index_of(id)], config[id].spec.fmt, rng);
    }
  }
  d::fixed_context ctx{scen, trial, config, run.words, run.counters};
  s->compute(ctx);
  return run;
}

class sequential_stages : public ::testing::TestWithParam<stage_case> {};

TEST_P(sequential_stages, match_the_sequential_definition_word_for_word_and_count_for_count) {
  const stage_case& tc = GetParam();
  const d::datapath_config config = config_for(tc);
  const fp::target acc_target{tc.acc, tc.rounding, tc.overflow};
  const int in_frac = tc.inputs.frac_bits, acc_frac = tc.acc.frac_bits;
  std::mt19937_64 rng(tc.seed);
  SCOPED_TRACE("seed " + std::to_string(tc.seed));
  bool overflowed = false;
  const auto check = [&](d::node_id id, const expected_node& want, const stage_run& run) {
    EXPECT_TRUE(expect_bit_exact(want, run.of(id), run.counters[d::index_of(id)])) << d::node_name(id);
    overflowed = overflowed || want.counters.overflowed > 0;
  };

  const g::scenario zf = g::parse_scenario_text(scenario_text("kind = \"zf\"\ninversion = \"ldl\"\n"), "zf.toml");
  {  // pilot_acc[m,k] = sum_t Q(adc[m,t] conj(pilot_rom[t,k]))
    const stage_run run = run_stage_on_random_inputs(zf, config, d::node_id::pilot_acc, rng);
    const d::word_matrix &y = run.of(d::node_id::adc), &phi = run.of(d::node_id::pilot_rom);
    const auto term = [&](int m, int k, int t) {
      return product<fp::product_form::conj_second>(word_at(y, m, t), word_at(phi, t, k));
    };
    check(d::node_id::pilot_acc, sums_of_terms(y.rows, phi.cols, y.cols, term, 2 * in_frac, acc_target), run);
  }
  {  // gram[i,j] = sum_m Q(H[m,j] conj(H[m,i])), j <= i; G[j,i] = (re, OV(-im)) (ZF: no loading)
    const stage_run run = run_stage_on_random_inputs(zf, config, d::node_id::gram, rng);
    const d::word_matrix& h = run.of(d::node_id::chan_est);
    const int num_users = h.cols;
    expected_node want{d::word_matrix(num_users, num_users, true), {}};
    const fp::requantizer<fp::int128> q(acc_target);
    for (int i = 0; i < num_users; ++i) {
      for (int j = 0; j <= i; ++j) {
        const auto term = [&](int m) {
          return product<fp::product_form::conj_second>(word_at(h, m, j), word_at(h, m, i));
        };
        const cw v = sequential_sum(h.rows, term, 2 * in_frac, acc_target, want.counters);
        put_word(want.words, i, j, v);
        if (j == i) continue;
        put_word(want.words, j, i,
                 {v.re, fp::convert_int<std::int64_t>(q.overflow(fp::int128(-fp::int128(v.im)), want.counters))});
        ++want.counters.requantized;
      }
    }
    check(d::node_id::gram, want, run);
  }
  {  // precoder[m,k] = sum_j Q(conj(H[m,j] A[j,k]))
    const stage_run run = run_stage_on_random_inputs(zf, config, d::node_id::precoder, rng);
    const d::word_matrix &h = run.of(d::node_id::chan_est), &a = run.of(d::node_id::inv_out);
    const auto term = [&](int m, int k, int j) {
      return product<fp::product_form::conj_both>(word_at(h, m, j), word_at(a, j, k));
    };
    check(d::node_id::precoder, sums_of_terms(h.rows, h.cols, h.cols, term, 2 * in_frac, acc_target), run);
  }
  {  // tx_acc[m,n] = sum_k Q(weights[m,k] symbols[k,n])
    const stage_run run = run_stage_on_random_inputs(zf, config, d::node_id::tx_acc, rng);
    const d::word_matrix &w = run.of(d::node_id::weights), &s = run.of(d::node_id::symbols);
    const auto term = [&](int m, int n, int k) {
      return product<fp::product_form::plain>(word_at(w, m, k), word_at(s, k, n));
    };
    check(d::node_id::tx_acc, sums_of_terms(w.rows, s.cols, w.cols, term, 2 * in_frac, acc_target), run);
  }
  {  // Neumann terms: T_1[i,c] = Q(B[i,c] r_c), T_n[i,c] = sum_j Q(B[i,j] T_{n-1}[j,c]), from
     // the stage's own reciprocals r and B (computed from random Gram words).
    const g::scenario neumann = g::parse_scenario_text(
        scenario_text("kind = \"zf\"\ninversion = \"neumann\"\nneumann_terms = 4\n"), "neumann.toml");
    const stage_run run = run_stage_on_random_inputs(neumann, config, d::node_id::inv_term, rng);
    const d::word_matrix &b = run.of(d::node_id::inv_iter), &r = run.of(d::node_id::inv_diag_recip);
    const int num_users = b.rows, num_extra = run.of(d::node_id::inv_term).cols / num_users;
    ASSERT_EQ(num_extra, 3);
    expected_node want{d::word_matrix(num_users, num_users * num_extra, true), {}};
    for (int i = 0; i < num_users; ++i) {
      for (int c = 0; c < num_users; ++c) {
        const wide bic = to_wide(word_at(b, i, c));
        const fp::int128 rc = r.re[static_cast<std::size_t>(c)];
        const auto term = [&](int) { return wide{bic.re * rc, bic.im * rc}; };
        put_word(want.words, i, c, sequential_sum(1, term, 2 * in_frac, acc_target, want.counters));
      }
    }
    for (int n = 2; n <= num_extra; ++n) {
      for (int i = 0; i < num_users; ++i) {
        for (int c = 0; c < num_users; ++c) {
          const auto term = [&](int j) {
            return product<fp::product_form::plain>(word_at(b, i, j), word_at(want.words, j, (n - 2) * num_users + c));
          };
          put_word(want.words, i, (n - 1) * num_users + c,
                   sequential_sum(num_users, term, in_frac + acc_frac, acc_target, want.counters));
        }
      }
    }
    check(d::node_id::inv_term, want, run);
  }
  EXPECT_TRUE(overflowed || tc.acc.word_bits > 40) << "the narrow cases must overflow somewhere";
}

constexpr fp::format q1_14{true, 16, 14};
using rm = fp::rounding_mode;
using om = fp::overflow_mode;

// Inputs Q1.14: products carry 28 fraction bits. acc F = 27 drops one bit (ties at half an LSB
// in every other odd product), F = 28 none (exact terms), F = 10 eighteen; 33-bit inputs need
// products beyond 63 bits (the vector form does not apply: the scalar twin runs).
INSTANTIATE_TEST_SUITE_P(
    stages, sequential_stages,
    ::testing::Values(
        stage_case{"ties_half_even_saturate", q1_14, {true, 22, 27}, rm::half_even, om::saturate, 11},
        stage_case{"ties_half_up_wrap", q1_14, {true, 22, 27}, rm::half_up, om::wrap, 12},
        stage_case{"ties_half_down_symmetric", q1_14, {true, 22, 27}, rm::half_down, om::saturate_symmetric, 13},
        stage_case{"ties_half_away_to_zero", q1_14, {true, 22, 27}, rm::half_away, om::saturate_zero, 14},
        stage_case{"ties_half_toward_zero_saturate", q1_14, {true, 22, 27}, rm::half_toward_zero, om::saturate, 15},
        stage_case{"floor_wrap_unsigned", q1_14, {false, 22, 27}, rm::floor, om::wrap, 16},
        stage_case{"ceil_saturate_unsigned", q1_14, {false, 22, 27}, rm::ceil, om::saturate, 17},
        stage_case{"toward_zero_shift_18", q1_14, {true, 12, 10}, rm::toward_zero, om::saturate, 18},
        stage_case{"exact_terms_saturate", q1_14, {true, 26, 28}, rm::half_even, om::saturate, 19},
        stage_case{"exact_terms_wrap", q1_14, {true, 26, 28}, rm::half_even, om::wrap, 20},
        stage_case{"wide_operands_twin", {true, 33, 31}, {true, 48, 61}, rm::half_even, om::saturate, 21}),
    [](const ::testing::TestParamInfo<stage_case>& param_info) { return std::string(param_info.param.name); });

}  // namespace
