// Random numbers of the golden model: one generator per trial, seeded by (scenario seed, trial
// index), and Gaussians computed here (never std::normal_distribution, whose algorithm differs
// between standard libraries), so a trial is bit-identical in any order and on any thread.
#pragma once

#include <array>
#include <complex>
#include <cstdint>

namespace fxmimo::golden {

/// SplitMix64 finaliser (Steele, Lea & Flood, "Fast splittable pseudorandom number generators",
/// OOPSLA 2014): a bijective 64-bit mix, used to derive generator seeds.
std::uint64_t splitmix64_mix(std::uint64_t x);

/// Seed of trial `trial_index` of a scenario seeded with `scenario_seed`:
/// mix(mix(scenario_seed) ^ mix(trial_index + golden-ratio constant)).
std::uint64_t trial_seed(std::uint64_t scenario_seed, std::uint64_t trial_index);

/// xoshiro256** 1.0 (Blackman & Vigna, "Scrambled linear pseudorandom number generators",
/// ACM TOMS 2021), state filled from one 64-bit seed by successive SplitMix64 outputs.
class random_stream {
 public:
  explicit random_stream(std::uint64_t seed);
  /// Generator with the given raw xoshiro256** state (not all zero), for checks against the
  /// reference implementation.
  static random_stream from_state(const std::array<std::uint64_t, 4>& state);

  /// Next raw 64-bit output.
  std::uint64_t next_u64();
  /// Uniform on [0, 1): the top 53 bits times 2^-53.
  double uniform();
  /// Uniform on (0, 1]: 1 - uniform(); safe as the argument of a logarithm.
  double uniform_open_zero();
  /// Uniform integer on [0, n) by rejection (no modulo bias); n >= 1.
  std::uint64_t uniform_below(std::uint64_t n);
  /// Circularly-symmetric complex Gaussian CN(0, 1) (E|z|^2 = 1) by the Box–Muller transform
  /// (Box & Muller 1958): z = sqrt(-ln u1) * exp(j 2 pi u2), one pair of uniforms per sample.
  std::complex<double> complex_normal();
  /// Real standard normal N(0, 1): sqrt(2) times the real part of complex_normal().
  double real_normal();

 private:
  random_stream() = default;
  std::array<std::uint64_t, 4> state_{};
};

}  // namespace fxmimo::golden
