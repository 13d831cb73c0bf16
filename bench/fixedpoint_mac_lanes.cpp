// Precoding-shaped complex MAC, x[m, n] = sum_k W[m, k] s[k, n], M = 128 antennas (outputs),
// K = 16 users (terms), N = 512 symbols: 2^20 complex MACs per iteration, each through a
// sequential accumulator with requantisation at every step (acc <- Q(acc + Q(w s))).
// dot_accumulate_many on the vector target the dispatcher picks, its scalar twin, and plain
// double doing the same work; items are complex MACs, so the ratios read within one run.
//   exact:   Q0.15 x Q0.15 into Q9.30 (40 bits), half_even, saturate: no bit dropped (the
//            format of fixedpoint_mac_systemc.cpp; the twin runs in 128-bit integers here).
//   rounded: Q0.15 x into Q9.30: one bit dropped per term, so half_even decides every
//            tie (the twin runs dot_kernel.hpp's 64-bit fast form).
#include <benchmark/benchmark.h>

#include <cmath>
#include <random>
#include <vector>

#include "fxmimo/fixedpoint/mac_lanes.hpp"

namespace fp = fxmimo::fixedpoint;
using cw = fp::cword<std::int64_t>;

namespace {

constexpr std::size_t num_ant = 128, num_users = 16, num_sym = 512;
constexpr int acc_w = 40, acc_f = 30;

struct scene {
  std::vector<cw> weights;  // M x K, column-major: column k holds every antenna's weight
  std::vector<cw> symbols;  // K x N, row-major: s[k, n] at k * N + n
  std::vector<double> w_re, w_im, s_re, s_im;
};

const scene& data() {
  static const scene d = [] {
    scene o;
    std::mt19937_64 rng(2024);
    std::uniform_int_distribution<std::int64_t> word(-32768, 32767);
    for (std::size_t i = 0; i < num_ant * num_users; ++i) o.weights.push_back({word(rng), word(rng)});
    for (std::size_t i = 0; i < num_users * num_sym; ++i) o.symbols.push_back({word(rng), word(rng)});
    for (const cw& w : o.weights) {
      o.w_re.push_back(std::ldexp(static_cast<double>(w.re), -15));
      o.w_im.push_back(std::ldexp(static_cast<double>(w.im), -15));
    }
    for (const cw& s : o.symbols) {
      o.s_re.push_back(std::ldexp(static_cast<double>(s.re), -15));
      o.s_im.push_back(std::ldexp(static_cast<double>(s.im), -15));
    }
    return o;
  }();
  return d;
}

template <bool Vector>
void precode_fixed(benchmark::State& state, int symbol_frac) {
  const scene& d = data();
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, acc_w, acc_f}, fp::rounding_mode::half_even, fp::overflow_mode::saturate});
  std::vector<cw> x(num_ant * num_sym);
  for (auto _ : state) {
    fp::counters c;
    for (std::size_t i_sym = 0; i_sym < num_sym; ++i_sym) {
      const fp::lane_operand w{d.weights.data(), num_ant, fp::lane_spread::column, 16, 15};
      const fp::lane_operand s{d.symbols.data() + i_sym, num_sym, fp::lane_spread::shared, 16, symbol_frac};
      cw* out = x.data() + i_sym * num_ant;
      if constexpr (Vector) {
        fp::dot_accumulate_many<fp::product_form::plain>(w, s, num_users, num_ant, q, out, c);
      } else {
        fp::dot_accumulate_many_scalar<fp::product_form::plain>(w, s, num_users, num_ant, q, out, c);
      }
    }
    benchmark::DoNotOptimize(x.data());
    benchmark::DoNotOptimize(c);
  }
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(num_ant * num_users * num_sym));
  state.SetLabel(Vector ? fp::many_kernel_target() : "scalar twin");
}

void precode_double(benchmark::State& state) {
  const scene& d = data();
  std::vector<double> x_re(num_ant), x_im(num_ant);
  for (auto _ : state) {
    for (std::size_t i_sym = 0; i_sym < num_sym; ++i_sym) {
      std::fill(x_re.begin(), x_re.end(), 0.0);
      std::fill(x_im.begin(), x_im.end(), 0.0);
      for (std::size_t i_user = 0; i_user < num_users; ++i_user) {
        const double sr = d.s_re[i_user * num_sym + i_sym], si = d.s_im[i_user * num_sym + i_sym];
        const double* wr = &d.w_re[i_user * num_ant];
        const double* wi = &d.w_im[i_user * num_ant];
        for (std::size_t i_ant = 0; i_ant < num_ant; ++i_ant) {
          x_re[i_ant] += wr[i_ant] * sr - wi[i_ant] * si;
          x_im[i_ant] += wr[i_ant] * si + wi[i_ant] * sr;
        }
      }
      benchmark::DoNotOptimize(x_re.data());
      benchmark::DoNotOptimize(x_im.data());
      benchmark::ClobberMemory();
    }
  }
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(num_ant * num_users * num_sym));
}

void exact_vector(benchmark::State& state) { precode_fixed<true>(state, 15); }
void exact_scalar_twin(benchmark::State& state) { precode_fixed<false>(state, 15); }
void rounded_vector(benchmark::State& state) { precode_fixed<true>(state, 16); }
void rounded_scalar_twin(benchmark::State& state) { precode_fixed<false>(state, 16); }

BENCHMARK(exact_vector)->Unit(benchmark::kMillisecond);
BENCHMARK(exact_scalar_twin)->Unit(benchmark::kMillisecond);
BENCHMARK(rounded_vector)->Unit(benchmark::kMillisecond);
BENCHMARK(rounded_scalar_twin)->Unit(benchmark::kMillisecond);
BENCHMARK(precode_double)->Unit(benchmark::kMillisecond);

}  // namespace

BENCHMARK_MAIN();
