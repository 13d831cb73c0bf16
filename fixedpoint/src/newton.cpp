#include "fxmimo/fixedpoint/newton.hpp"

#include <stdexcept>
#include <string>

#include "fxmimo/fixedpoint/divide.hpp"

namespace fxmimo::fixedpoint {

namespace {

void check_unit(const newton_unit& u) {
  if (u.seed_bits < 1 || u.seed_bits > max_newton_seed_bits)
    throw std::invalid_argument("newton unit: seed_bits must lie in [1, " + std::to_string(max_newton_seed_bits) + "]");
  if (u.steps < 0 || u.steps > max_newton_steps)
    throw std::invalid_argument("newton unit: steps must lie in [0, " + std::to_string(max_newton_steps) + "]");
}

/// floor(v 2^(k - f)): the integer part of the value v 2^-f scaled by 2^k.
big_int scaled_floor(const big_int& v, int f, int k) { return f > k ? floor_shift(v, f - k) : shift_left(v, k - f); }

std::int64_t requantize_to(const big_int& v, int from_frac, const target& tgt, counters& c) {
  return convert_int<std::int64_t>(requantize<big_int>(v, from_frac, tgt, c));
}

big_int clamp(const big_int& v, long long lo, long long hi) {
  if (v < lo) return big_int(lo);
  if (v > hi) return big_int(hi);
  return v;
}

int bit_length(const big_int& a) { return static_cast<int>(boost::multiprecision::msb(a)) + 1; }

}  // namespace

std::vector<std::int64_t> newton_rom(const newton_unit& unit, counters& c) {
  check_unit(unit);
  const int a = unit.seed_bits;
  const long long entries = 1LL << a;
  std::vector<std::int64_t> rom(static_cast<std::size_t>(entries));
  for (long long i = 0; i < entries; ++i) {
    if (unit.function == newton_function::reciprocal) {
      // 1 / c_i with c_i = (2^(a+1) + 2 i + 1) 2^-(a+2), the midpoint of [1/2 + i 2^-(a+1), ... + 2^-(a+1)).
      rom[static_cast<std::size_t>(i)] =
          divide<std::int64_t>(1, 0, (std::int64_t{1} << (a + 1)) + 2 * i + 1, a + 2, unit.rom, c);
    } else {
      // Lower half of the ROM: [1/4, 1/2) in steps of 2^-(a+1); upper half: [1/2, 1) in steps of 2^-a.
      const long long half = entries / 2;
      const int h = i >= half ? 1 : 0;
      const long long j = i - h * half;
      rom[static_cast<std::size_t>(i)] =
          rsqrt<std::int64_t>((std::int64_t{1} << a) + 2 * j + 1, a + 2 - h, unit.rom, c);
    }
  }
  return rom;
}

std::int64_t newton_evaluate(const newton_unit& unit, const std::vector<std::int64_t>& rom, std::int64_t x, int x_frac,
                             const target& out, counters& out_counters, newton_counters& c, newton_trace& trace) {
  check_unit(unit);
  const int a = unit.seed_bits, n = unit.steps;
  if (rom.size() != (std::size_t{1} << a)) throw std::invalid_argument("newton unit: the ROM has the wrong size");
  trace = newton_trace{};
  trace.square.assign(unit.function == newton_function::rsqrt ? static_cast<std::size_t>(n) : 0, 0);
  trace.prod.assign(static_cast<std::size_t>(n), 0);
  trace.iter.assign(static_cast<std::size_t>(n), 0);
  const bool reciprocal = unit.function == newton_function::reciprocal;
  if (x == 0 || (!reciprocal && x < 0)) {
    // The corner cases of the exact units: the same words and counts.
    return reciprocal ? divide<std::int64_t>(1, 0, 0, 0, out, out_counters)
                      : rsqrt<std::int64_t>(x, x_frac, out, out_counters);
  }
  const bool negative = x < 0;
  const big_int magnitude = negative ? big_int(-big_int(x)) : big_int(x);
  int length = bit_length(magnitude);
  int exponent = length - x_frac;  // |x| 2^-f_x = (|x| 2^-length) 2^exponent
  if (!reciprocal && exponent % 2 != 0) {
    ++length;
    ++exponent;
  }
  const big_int m = requantize<big_int>(magnitude, length, unit.mant, c.mant);
  trace.mant = convert_int<std::int64_t>(m);
  const int f_m = unit.mant.fmt.frac_bits;

  long long index = 0;
  if (reciprocal) {
    index = static_cast<long long>(clamp(scaled_floor(m, f_m, a + 1) - (big_int(1) << a), 0, (1LL << a) - 1));
  } else {
    const long long half = 1LL << (a - 1);
    const int h = scaled_floor(m, f_m, 1) >= 1 ? 1 : 0;
    const big_int j = clamp(scaled_floor(m, f_m, a + 1 - h) - half, 0, half - 1);
    index = h * half + static_cast<long long>(j);
  }
  trace.index = static_cast<int>(index);

  big_int xk = rom[static_cast<std::size_t>(index)];
  int f_x = unit.rom.fmt.frac_bits;
  const int f_p = unit.prod.fmt.frac_bits;
  for (int k = 0; k < n; ++k) {
    const auto ks = static_cast<std::size_t>(k);
    big_int next;
    if (reciprocal) {
      const big_int p = requantize<big_int>(m * xk, f_m + f_x, unit.prod, c.prod);
      trace.prod[ks] = convert_int<std::int64_t>(p);
      const big_int t = shift_left(big_int(2), f_p) - p;  // 2 - p_k, exact
      next = requantize<big_int>(xk * t, f_x + f_p, unit.iter, c.iter);
    } else {
      const big_int s = requantize<big_int>(xk * xk, 2 * f_x, unit.square, c.square);
      trace.square[ks] = convert_int<std::int64_t>(s);
      const big_int p = requantize<big_int>(m * s, f_m + unit.square.fmt.frac_bits, unit.prod, c.prod);
      trace.prod[ks] = convert_int<std::int64_t>(p);
      const big_int t = shift_left(big_int(3), f_p) - p;  // 3 - p_k, exact; the / 2 is one fraction bit more
      next = requantize<big_int>(xk * t, f_x + f_p + 1, unit.iter, c.iter);
    }
    trace.iter[ks] = convert_int<std::int64_t>(next);
    xk = next;
    f_x = unit.iter.fmt.frac_bits;
  }
  // Denormalise: x_n (f_x fraction bits) times 2^-exponent (reciprocal) or 2^(-exponent/2) (rsqrt).
  const int shift = reciprocal ? exponent : exponent / 2;
  return requantize_to(negative ? big_int(-xk) : xk, f_x + shift, out, out_counters);
}

}  // namespace fxmimo::fixedpoint
