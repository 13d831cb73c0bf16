#pragma once
/// Complex dot product with a sequential accumulator, specialised for hot loops:
///   acc = 0; for i = 0 .. n-1: acc <- Q(acc + Q(p_i)),  p_i = a[i] b[i], a[i] conj(b[i]) or
///   conj(a[i] b[i]) (product_form)
/// per real and imaginary part, Q = the accumulator's target. It is the same operation as
/// complex_accumulator<std::int64_t> fed with cmul / cmul_conj (its twin, tested against it bit
/// for bit and counter for counter): the modes become template parameters and the shift is
/// fixed for the loop, nothing else changes. Falls back to the twin where the fast form does not
/// apply (products that need more than 63 bits, no fraction bits dropped, or an accumulator with
/// no headroom bit in 64).

#include <cstddef>
#include <cstdint>

#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/complex.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::fixedpoint {

/// Which exact product each term is.
enum class product_form {
  plain,        ///< a b
  conj_second,  ///< a conj(b)
  conj_both,    ///< conj(a b)
};

/// The exact product of one term, in P.
template <product_form Form, class P, class T>
cword<P> form_product(const cword<T>& a, const cword<T>& b) {
  if constexpr (Form == product_form::conj_second) {
    return cmul_conj<P>(a, b);
  } else {
    const cword<P> p = cmul<P>(a, b);
    if constexpr (Form == product_form::conj_both) return {p.re, P(-p.im)};
    return p;
  }
}

namespace detail {

template <rounding_mode R, overflow_mode O, product_form Form>
cword<std::int64_t> dot_fixed_modes(const cword<std::int64_t>* a, std::size_t stride_a, const cword<std::int64_t>* b,
                                    std::size_t stride_b, std::size_t n, int shift, const requantizer<std::int64_t>& q,
                                    counters& c) {
  using U = std::uint64_t;
  const U mask = (U{1} << shift) - 1;
  const U half = U{1} << (shift - 1);
  const std::int64_t lo = q.min_word(), hi = q.max_word();
  counters local;  // touched only on overflow, so the loop keeps its counts in registers
  std::uint64_t num_inexact = 0;
  auto round = [&](std::int64_t x) {
    const std::int64_t fl = x >> shift;
    const U rest = static_cast<U>(x) & mask;
    num_inexact += rest != 0;
    return fl +
           static_cast<std::int64_t>(round_up_by_facts(R, rest != 0, rest >= half, rest == half, x < 0, (fl & 1) != 0));
  };
  auto in_range = [&](std::int64_t v) {
    return v <= hi && v >= lo && !(O == overflow_mode::saturate_symmetric && v == lo);
  };
  std::int64_t acc_re = 0, acc_im = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const cword<std::int64_t> p = form_product<Form, std::int64_t>(a[i * stride_a], b[i * stride_b]);
    std::int64_t t_re = round(p.re), t_im = round(p.im);
    if (!in_range(t_re)) [[unlikely]]
      t_re = q.overflow(t_re, local);
    if (!in_range(t_im)) [[unlikely]]
      t_im = q.overflow(t_im, local);
    acc_re += t_re;
    acc_im += t_im;
    if (!in_range(acc_re)) [[unlikely]]
      acc_re = q.overflow(acc_re, local);
    if (!in_range(acc_im)) [[unlikely]]
      acc_im = q.overflow(acc_im, local);
  }
  local.requantized = 4 * n;  // two requantisations per part per term, as the twin counts
  local.inexact = num_inexact;
  c.merge(local);
  return {acc_re, acc_im};
}

#define FXMIMO_DOT_ARGS a, stride_a, b, stride_b, n, shift, q, c
template <product_form Form, rounding_mode R>
cword<std::int64_t> dot_overflow_dispatch(const cword<std::int64_t>* a, std::size_t stride_a,
                                          const cword<std::int64_t>* b, std::size_t stride_b, std::size_t n, int shift,
                                          const requantizer<std::int64_t>& q, counters& c) {
  switch (q.spec().overflow) {
    case overflow_mode::wrap: return dot_fixed_modes<R, overflow_mode::wrap, Form>(FXMIMO_DOT_ARGS);
    case overflow_mode::saturate: return dot_fixed_modes<R, overflow_mode::saturate, Form>(FXMIMO_DOT_ARGS);
    case overflow_mode::saturate_symmetric:
      return dot_fixed_modes<R, overflow_mode::saturate_symmetric, Form>(FXMIMO_DOT_ARGS);
    case overflow_mode::saturate_zero: return dot_fixed_modes<R, overflow_mode::saturate_zero, Form>(FXMIMO_DOT_ARGS);
  }
  return {};
}

}  // namespace detail

/// True when dot_accumulate can use its fast form: products of words of `a_bits` and `b_bits`
/// (two's complement container bits) summed in pairs fit in 63 bits, bits are dropped
/// (product_frac > target F, by less than 63), and the accumulator has a headroom bit in 64.
inline bool dot_fast_form_applies(int a_bits, int b_bits, int product_frac, const requantizer<std::int64_t>& q) {
  const int shift = product_frac - q.fmt().frac_bits;
  return a_bits + b_bits + 1 <= 63 && shift >= 1 && shift <= 62 && fits_container<std::int64_t>(q.fmt(), 1);
}

/// The dot product sum_i p_i, p_i the product_form of a[i * stride_a] and b[i * stride_b], through
/// the accumulator target of q; products are exact at product_frac fraction bits; a_bits and
/// b_bits are the operands' container bits. Counts into c exactly as the twin does.
template <product_form Form>
cword<std::int64_t> dot_accumulate(const cword<std::int64_t>* a, std::size_t stride_a, const cword<std::int64_t>* b,
                                   std::size_t stride_b, std::size_t n, int a_bits, int b_bits, int product_frac,
                                   const requantizer<std::int64_t>& q, counters& c) {
  if (!dot_fast_form_applies(a_bits, b_bits, product_frac, q)) {
    // The twin, in 128-bit integers.
    const requantizer<int128> wide(q.spec());
    complex_accumulator<int128> acc(wide);
    for (std::size_t i = 0; i < n; ++i) {
      acc.add(form_product<Form, int128>(a[i * stride_a], b[i * stride_b]), product_frac, c);
    }
    return {convert_int<std::int64_t>(acc.value().re), convert_int<std::int64_t>(acc.value().im)};
  }
  const int shift = product_frac - q.fmt().frac_bits;
  using detail::dot_overflow_dispatch;
  switch (q.spec().rounding) {
    case rounding_mode::floor: return dot_overflow_dispatch<Form, rounding_mode::floor>(FXMIMO_DOT_ARGS);
    case rounding_mode::ceil: return dot_overflow_dispatch<Form, rounding_mode::ceil>(FXMIMO_DOT_ARGS);
    case rounding_mode::toward_zero: return dot_overflow_dispatch<Form, rounding_mode::toward_zero>(FXMIMO_DOT_ARGS);
    case rounding_mode::half_up: return dot_overflow_dispatch<Form, rounding_mode::half_up>(FXMIMO_DOT_ARGS);
    case rounding_mode::half_down: return dot_overflow_dispatch<Form, rounding_mode::half_down>(FXMIMO_DOT_ARGS);
    case rounding_mode::half_toward_zero:
      return dot_overflow_dispatch<Form, rounding_mode::half_toward_zero>(FXMIMO_DOT_ARGS);
    case rounding_mode::half_away: return dot_overflow_dispatch<Form, rounding_mode::half_away>(FXMIMO_DOT_ARGS);
    case rounding_mode::half_even: return dot_overflow_dispatch<Form, rounding_mode::half_even>(FXMIMO_DOT_ARGS);
  }
  return {};
}
#undef FXMIMO_DOT_ARGS

}  // namespace fxmimo::fixedpoint
