// Complex multiply-accumulate over 10^6 elements: Q0.15 x Q0.15 operands, 40-bit accumulator
// (Q9.30), half_even rounding and saturation at every step (acc <- Q(acc + Q(a*b))).
// Our core against SystemC sc_fixed and sc_fixed_fast doing the same work, and plain double.
// The same MACs also as a bank of 128 outputs of 128 terms each (x_j = sum_i a_ij b_i, the shape
// of a precoder or correlator bank; its 256 KiB of operands stay in a 512 KiB L2 cache, as a precoder's
// weights do) through fixedpoint::dot_accumulate_many: its vector form (SIMD lanes are outputs,
// runtime-dispatched) and its scalar twin; compare items per second. Read the ratios of the
// reported times (or items per second) within one run.
#include <benchmark/benchmark.h>

#include <random>
#include <systemc>
#include <vector>

#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/mac_lanes.hpp"

namespace fp = fxmimo::fixedpoint;

namespace {

constexpr int num_elements = 1'000'000;
constexpr int acc_w = 40, acc_f = 30;

struct operands {
  std::vector<fp::cword<std::int64_t>> a, b;
  std::vector<double> ad_re, ad_im, bd_re, bd_im;
};

const operands& data() {
  static const operands d = [] {
    operands o;
    std::mt19937_64 rng(12345);
    std::uniform_int_distribution<std::int64_t> word(-32768, 32767);
    for (int i = 0; i < num_elements; ++i) {
      o.a.push_back({word(rng), word(rng)});
      o.b.push_back({word(rng), word(rng)});
      o.ad_re.push_back(std::ldexp(static_cast<double>(o.a.back().re), -15));
      o.ad_im.push_back(std::ldexp(static_cast<double>(o.a.back().im), -15));
      o.bd_re.push_back(std::ldexp(static_cast<double>(o.b.back().re), -15));
      o.bd_im.push_back(std::ldexp(static_cast<double>(o.b.back().im), -15));
    }
    return o;
  }();
  return d;
}

void mac_fxmimo(benchmark::State& state) {
  const operands& d = data();
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, acc_w, acc_f}, fp::rounding_mode::half_even, fp::overflow_mode::saturate});
  for (auto _ : state) {
    fp::complex_accumulator<std::int64_t> acc(q);
    fp::counters c;
    for (int i = 0; i < num_elements; ++i) {
      acc.add(fp::cmul<std::int64_t>(d.a[static_cast<std::size_t>(i)], d.b[static_cast<std::size_t>(i)]), 30, c);
    }
    benchmark::DoNotOptimize(acc.value());
  }
  state.SetItemsProcessed(state.iterations() * num_elements);
}

/// The first operand pairs as 128 terms x 128 outputs: a_ij = a[i * 128 + j] (a column over the
/// outputs), b_i = b[i * 128] (shared by every output).
constexpr std::size_t bank_outputs = 128, bank_terms = 128;

template <bool Vector>
void mac_bank(benchmark::State& state) {
  const operands& d = data();
  const fp::requantizer<std::int64_t> q(
      fp::target{{true, acc_w, acc_f}, fp::rounding_mode::half_even, fp::overflow_mode::saturate});
  const fp::lane_operand a{d.a.data(), bank_outputs, fp::lane_spread::column, 16, 15};
  const fp::lane_operand b{d.b.data(), bank_outputs, fp::lane_spread::shared, 16, 15};
  std::vector<fp::cword<std::int64_t>> out(bank_outputs);
  for (auto _ : state) {
    fp::counters c;
    if constexpr (Vector) {
      fp::dot_accumulate_many<fp::product_form::plain>(a, b, bank_terms, bank_outputs, q, out.data(), c);
    } else {
      fp::dot_accumulate_many_scalar<fp::product_form::plain>(a, b, bank_terms, bank_outputs, q, out.data(), c);
    }
    benchmark::DoNotOptimize(out.data());
  }
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(bank_outputs * bank_terms));
}

template <class Fixed>
void mac_systemc(benchmark::State& state) {
  using operand = sc_dt::sc_fixed<16, 1, sc_dt::SC_RND_CONV, sc_dt::SC_SAT>;
  const operands& d = data();
  std::vector<operand> ar(num_elements), ai(num_elements), br(num_elements), bi(num_elements);
  for (std::size_t i = 0; i < static_cast<std::size_t>(num_elements); ++i) {
    ar[i] = d.ad_re[i];
    ai[i] = d.ad_im[i];
    br[i] = d.bd_re[i];
    bi[i] = d.bd_im[i];
  }
  for (auto _ : state) {
    Fixed acc_re = 0, acc_im = 0;
    for (std::size_t i = 0; i < static_cast<std::size_t>(num_elements); ++i) {
      const Fixed term_re = ar[i] * br[i] - ai[i] * bi[i];
      const Fixed term_im = ar[i] * bi[i] + ai[i] * br[i];
      acc_re = acc_re + term_re;
      acc_im = acc_im + term_im;
    }
    benchmark::DoNotOptimize(acc_re.to_double() + acc_im.to_double());
  }
  state.SetItemsProcessed(state.iterations() * num_elements);
}

void mac_double(benchmark::State& state) {
  const operands& d = data();
  for (auto _ : state) {
    double acc_re = 0, acc_im = 0;
    for (std::size_t i = 0; i < static_cast<std::size_t>(num_elements); ++i) {
      acc_re += d.ad_re[i] * d.bd_re[i] - d.ad_im[i] * d.bd_im[i];
      acc_im += d.ad_re[i] * d.bd_im[i] + d.ad_im[i] * d.bd_re[i];
    }
    benchmark::DoNotOptimize(acc_re + acc_im);
  }
  state.SetItemsProcessed(state.iterations() * num_elements);
}

using sc_acc = sc_dt::sc_fixed<acc_w, acc_w - acc_f, sc_dt::SC_RND_CONV, sc_dt::SC_SAT>;
using sc_acc_fast = sc_dt::sc_fixed_fast<acc_w, acc_w - acc_f, sc_dt::SC_RND_CONV, sc_dt::SC_SAT>;

BENCHMARK(mac_fxmimo)->Unit(benchmark::kMillisecond);
BENCHMARK(mac_bank<true>)->Name("mac_bank_vector")->Unit(benchmark::kMillisecond);
BENCHMARK(mac_bank<false>)->Name("mac_bank_scalar_twin")->Unit(benchmark::kMillisecond);
BENCHMARK(mac_systemc<sc_acc>)->Name("mac_systemc_sc_fixed")->Unit(benchmark::kMillisecond);
BENCHMARK(mac_systemc<sc_acc_fast>)->Name("mac_systemc_sc_fixed_fast")->Unit(benchmark::kMillisecond);
BENCHMARK(mac_double)->Unit(benchmark::kMillisecond);

}  // namespace

// libsystemc supplies main() and calls sc_main.
int sc_main(int argc, char* argv[]) {
  benchmark::Initialize(&argc, argv);
  benchmark::RunSpecifiedBenchmarks();
  benchmark::Shutdown();
  return 0;
}
