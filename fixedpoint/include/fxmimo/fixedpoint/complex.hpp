#pragma once
/// Complex words: real and imaginary parts share one format. A complex product is the exact
/// a.re b.re - a.im b.im and a.re b.im + a.im b.re in a wider integer type P (at fraction bits
/// Fa + Fb), requantised once per part by the caller.

#include "fxmimo/fixedpoint/counters.hpp"
#include "fxmimo/fixedpoint/integer.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::fixedpoint {

template <class T>
struct cword {
  T re{};
  T im{};
  friend bool operator==(const cword&, const cword&) = default;
};

/// Exact a * b in P. Corner case: (-2^(W-1))^2 needs 2W-1 bits; P must hold 2W+1 bits to
/// hold the sum of two such products (the harness picks P from the operand formats).
template <class P, class T>
cword<P> cmul(const cword<T>& a, const cword<T>& b) {
  const P ar = convert_int<P>(a.re), ai = convert_int<P>(a.im);
  const P br = convert_int<P>(b.re), bi = convert_int<P>(b.im);
  return {P(ar * br - ai * bi), P(ar * bi + ai * br)};
}

/// Exact a * conj(b) in P.
template <class P, class T>
cword<P> cmul_conj(const cword<T>& a, const cword<T>& b) {
  const P ar = convert_int<P>(a.re), ai = convert_int<P>(a.im);
  const P br = convert_int<P>(b.re), bi = convert_int<P>(b.im);
  return {P(ar * br + ai * bi), P(ai * br - ar * bi)};
}

/// Exact conj(a); for wrap formats -(-2^(W-1)) is the caller's overflow to handle.
template <class T>
cword<T> conj(const cword<T>& a) {
  return {a.re, T(-a.im)};
}

/// Both parts requantised by the same target.
template <class T>
cword<T> requantize(const cword<T>& x, int from_frac, const requantizer<T>& q, counters& c) {
  return {q(x.re, from_frac, c), q(x.im, from_frac, c)};
}

}  // namespace fxmimo::fixedpoint
