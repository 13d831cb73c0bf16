#include "fxmimo/golden/rng.hpp"

#include <cmath>
#include <numbers>

namespace fxmimo::golden {

namespace {
constexpr std::uint64_t golden_gamma = 0x9e3779b97f4a7c15ULL;

std::uint64_t rotl(std::uint64_t x, int k) { return (x << k) | (x >> (64 - k)); }
}  // namespace

std::uint64_t splitmix64_mix(std::uint64_t x) {
  x ^= x >> 30;
  x *= 0xbf58476d1ce4e5b9ULL;
  x ^= x >> 27;
  x *= 0x94d049bb133111ebULL;
  x ^= x >> 31;
  return x;
}

std::uint64_t trial_seed(std::uint64_t scenario_seed, std::uint64_t trial_index) {
  return splitmix64_mix(splitmix64_mix(scenario_seed + golden_gamma) ^ splitmix64_mix(trial_index + 2 * golden_gamma));
}

random_stream::random_stream(std::uint64_t seed) {
  std::uint64_t s = seed;
  for (auto& word : state_) {
    s += golden_gamma;
    word = splitmix64_mix(s);
  }
}

random_stream random_stream::from_state(const std::array<std::uint64_t, 4>& state) {
  random_stream rng;
  rng.state_ = state;
  return rng;
}

std::uint64_t random_stream::next_u64() {
  const std::uint64_t result = rotl(state_[1] * 5, 7) * 9;
  const std::uint64_t t = state_[1] << 17;
  state_[2] ^= state_[0];
  state_[3] ^= state_[1];
  state_[1] ^= state_[2];
  state_[0] ^= state_[3];
  state_[2] ^= t;
  state_[3] = rotl(state_[3], 45);
  return result;
}

double random_stream::uniform() { return static_cast<double>(next_u64() >> 11) * 0x1.0p-53; }

double random_stream::uniform_open_zero() { return 1.0 - uniform(); }

std::uint64_t random_stream::uniform_below(std::uint64_t n) {
  // Accept only draws below the largest multiple of n, so every residue is equally likely.
  const std::uint64_t limit = ~std::uint64_t{0} - (~std::uint64_t{0} % n);
  std::uint64_t x = next_u64();
  while (x >= limit) {
    x = next_u64();
  }
  return x % n;
}

std::complex<double> random_stream::complex_normal() {
  const double radius = std::sqrt(-std::log(uniform_open_zero()));
  const double angle = 2.0 * std::numbers::pi * uniform();
  return {radius * std::cos(angle), radius * std::sin(angle)};
}

double random_stream::real_normal() { return std::numbers::sqrt2 * complex_normal().real(); }

}  // namespace fxmimo::golden
