// Quantisation theory as an outside reference for the requantize stage.
//  - Widrow & Kollár, "Quantization Noise" (Cambridge, 2008), ch. 4-5; Bennett (1948): for a
//    busy input (sigma >> Delta, no overload) the rounding error is ~uniform on
//    [-Delta/2, Delta/2): mean 0, variance Delta^2/12; truncation (floor) has mean -Delta/2.
//  - Full-scale sine into N bits: SQNR = 6.02 N + 1.76 dB (common practice; Widrow & Kollár).
//  - Exact enumeration facts (derived by counting the 2^k equally likely patterns of dropped bits,
//    a short sum worked out by hand): re-quantising every value of a
//    fine grid by dropping k bits gives floor mean -(Delta/2)(1 - 2^-k), variance
//    (Delta^2/12)(1 - 2^-2k); half_up mean +(Delta/2) 2^-k; half_even mean 0, variance
//    (Delta^2/12)(1 + 2^(1-2k)).
#include <gtest/gtest.h>

#include <cmath>
#include <numbers>
#include <random>

#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fp = fxmimo::fixedpoint;

namespace {

struct moments {
  double mean = 0;
  double variance = 0;
};

/// Error moments (in output LSBs) of dropping k bits from every value of one full period of
/// the fine grid, 2^k consecutive inputs repeated over several periods.
moments enumerate_drop(fp::rounding_mode mode, int k) {
  const fp::requantizer<std::int64_t> q(fp::target{{true, 40, 0}, mode, fp::overflow_mode::saturate});
  fp::counters c;
  double sum = 0, sum_sq = 0;
  const std::int64_t n = std::int64_t{64} << k;  // 64 periods, both signs
  for (std::int64_t x = -n / 2; x < n / 2; ++x) {
    const double err = static_cast<double>(q(x, k, c)) - std::ldexp(static_cast<double>(x), -k);
    sum += err;
    sum_sq += err * err;
  }
  const double mean = sum / static_cast<double>(n);
  return {mean, sum_sq / static_cast<double>(n) - mean * mean};
}

TEST(quantization_theory, exact_enumeration_of_dropped_bits) {
  for (int k = 1; k <= 8; ++k) {
    const double tk = std::ldexp(1.0, -k);
    const moments fl = enumerate_drop(fp::rounding_mode::floor, k);
    EXPECT_NEAR(fl.mean, -0.5 * (1 - tk), 1e-12) << "floor mean, k=" << k;
    EXPECT_NEAR(fl.variance, (1 - tk * tk) / 12.0, 1e-12) << "floor variance, k=" << k;
    const moments up = enumerate_drop(fp::rounding_mode::half_up, k);
    EXPECT_NEAR(up.mean, 0.5 * tk, 1e-12) << "half_up mean, k=" << k;
    const moments even = enumerate_drop(fp::rounding_mode::half_even, k);
    EXPECT_NEAR(even.mean, 0.0, 1e-12) << "half_even mean, k=" << k;
    EXPECT_NEAR(even.variance, (1 + 2 * tk * tk) / 12.0, 1e-12) << "half_even variance, k=" << k;
  }
}

TEST(quantization_theory, busy_gaussian_rounding_noise_is_delta_squared_over_12) {
  // sigma = 40 Delta, no overload (Q10.8 holds +-1024 >> 6 sigma of 0.156): the error is a
  // sample of n uniform variables. Tolerances are 5 standard errors: the mean of n uniforms on
  // one LSB has sd sqrt(1/12/n); the variance estimate has sd ~ sqrt(1/180/n) (uniform
  // fourth central moment 1/80 minus (1/12)^2 = 1/180).
  const int n = 200000;
  const double sd_mean = std::sqrt(1.0 / 12.0 / n), sd_var = std::sqrt(1.0 / 180.0 / n);
  std::mt19937_64 rng(2024);
  std::normal_distribution<double> gauss(0.0, 40.0 / 256.0);
  for (fp::rounding_mode mode : {fp::rounding_mode::half_even, fp::rounding_mode::half_up, fp::rounding_mode::floor}) {
    const fp::requantizer<std::int64_t> q(fp::target{{true, 19, 8}, mode, fp::overflow_mode::saturate});
    fp::counters c;
    double sum = 0, sum_sq = 0;
    for (int i = 0; i < n; ++i) {
      const double v = gauss(rng);
      const double err = (fp::to_double(fp::from_double(v, q, c), 8) - v) * 256.0;  // in LSBs
      sum += err;
      sum_sq += err * err;
    }
    const double mean = sum / n, var = sum_sq / n - mean * mean;
    const double expected_mean = mode == fp::rounding_mode::floor ? -0.5 : 0.0;
    EXPECT_NEAR(mean, expected_mean, 5 * sd_mean) << fp::to_string(mode);
    EXPECT_NEAR(var, 1.0 / 12.0, 5 * sd_var) << fp::to_string(mode);
    EXPECT_EQ(c.overflowed, 0U);
  }
}

TEST(quantization_theory, full_scale_sine_sqnr_is_6_02_n_plus_1_76_db) {
  // A sine of amplitude just under full scale, at a frequency incommensurate with the sample
  // rate, quantised to N bits (Q0.(N-1), half_even). Within 0.2 dB for N = 8..16.
  const int num_samples = 1 << 16;
  for (int bits = 8; bits <= 16; ++bits) {
    const fp::requantizer<std::int64_t> q(
        fp::target{{true, bits, bits - 1}, fp::rounding_mode::half_even, fp::overflow_mode::saturate});
    fp::counters c;
    const double amplitude = 1.0 - std::ldexp(1.0, -(bits - 1));
    double signal = 0, noise = 0;
    for (int i = 0; i < num_samples; ++i) {
      const double v = amplitude * std::sin(2 * std::numbers::pi * 0.1234567 * i + 0.3);
      const double e = fp::to_double(fp::from_double(v, q, c), bits - 1) - v;
      signal += v * v;
      noise += e * e;
    }
    const double sqnr_db = 10 * std::log10(signal / noise);
    EXPECT_NEAR(sqnr_db, 6.02 * bits + 1.76, 0.2) << "N=" << bits;
    EXPECT_EQ(c.overflowed, 0U) << "N=" << bits;
  }
}

}  // namespace
