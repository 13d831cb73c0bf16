// The specialised dot kernel against its twin, the generic complex_accumulator (bit for bit and
// counter for counter), for every rounding x overflow mode pair and product form, on full-range
// random words with accumulators narrow enough to overflow (so every overflow path runs).
#include "fxmimo/fixedpoint/dot_kernel.hpp"

#include <gtest/gtest.h>

#include <random>

namespace fp = fxmimo::fixedpoint;
using cw = fp::cword<std::int64_t>;

namespace {

template <fp::product_form Form>
void check_against_twin(int a_bits, int b_bits, const fp::format& acc_fmt, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  const std::int64_t a_half = std::int64_t{1} << (a_bits - 1), b_half = std::int64_t{1} << (b_bits - 1);
  std::uniform_int_distribution<std::int64_t> a_word(-a_half, a_half - 1), b_word(-b_half, b_half - 1);
  for (fp::rounding_mode rnd : fp::all_rounding_modes) {
    for (fp::overflow_mode ovf : fp::all_overflow_modes) {
      const fp::target tgt{acc_fmt, rnd, ovf};
      const fp::requantizer<std::int64_t> q(tgt);
      const fp::requantizer<fp::int128> q_twin(tgt);
      for (std::size_t n : {1UL, 2UL, 15UL, 16UL, 17UL, 61UL}) {
        const std::size_t stride_b = 3;
        std::vector<cw> a(n), b(n * stride_b);
        for (cw& x : a) x = {a_word(rng), a_word(rng)};
        for (cw& x : b) x = {b_word(rng), b_word(rng)};
        a[0] = {-a_half, -a_half};  // the most negative words in the first term
        b[0] = {-b_half, -b_half};
        const int product_frac = a_bits + b_bits - 4;
        fp::counters c_fast, c_twin;
        const cw fast =
            fp::dot_accumulate<Form>(a.data(), 1, b.data(), stride_b, n, a_bits, b_bits, product_frac, q, c_fast);
        fp::complex_accumulator<fp::int128> twin(q_twin);
        for (std::size_t i = 0; i < n; ++i)
          twin.add(fp::form_product<Form, fp::int128>(a[i], b[i * stride_b]), product_frac, c_twin);
        ASSERT_EQ(fast.re, fp::convert_int<std::int64_t>(twin.value().re))
            << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " n=" << n << " seed " << seed;
        ASSERT_EQ(fast.im, fp::convert_int<std::int64_t>(twin.value().im))
            << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " n=" << n << " seed " << seed;
        ASSERT_EQ(c_fast, c_twin) << fp::to_string(rnd) << "/" << fp::to_string(ovf) << " n=" << n;
      }
    }
  }
}

TEST(dot_kernel, plain_products_match_the_twin) {
  check_against_twin<fp::product_form::plain>(16, 14, {true, 20, 18}, 1);  // fast form, overflows often
  check_against_twin<fp::product_form::plain>(16, 14, {true, 40, 20}, 2);  // fast form, no overflow
}

TEST(dot_kernel, conjugate_forms_match_the_twin) {
  check_against_twin<fp::product_form::conj_second>(18, 18, {true, 24, 24}, 3);
  check_against_twin<fp::product_form::conj_both>(18, 18, {true, 24, 24}, 4);
}

TEST(dot_kernel, wide_products_take_the_twin_path_and_agree) {
  check_against_twin<fp::product_form::plain>(40, 30, {true, 50, 40}, 5);  // 71-bit products
  EXPECT_FALSE(fp::dot_fast_form_applies(40, 30, 66, fp::requantizer<std::int64_t>({{true, 50, 40}, {}, {}})));
  EXPECT_TRUE(fp::dot_fast_form_applies(16, 14, 26, fp::requantizer<std::int64_t>({{true, 20, 18}, {}, {}})));
}

}  // namespace
