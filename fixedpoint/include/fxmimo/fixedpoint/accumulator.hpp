#pragma once
/// Stateful accumulator, the sequential MAC of RTL: for each term p in index order,
///   acc <- Q_acc(acc + Q_acc(p))
/// where Q_acc requantises to the accumulator's target (round, then overflow). Saturation
/// therefore happens in the same order as in hardware. Corner cases: a term beyond the range
/// saturates (or wraps) before it is added; acc + term needs one bit more than the accumulator,
/// so T must hold W + 1 bits.

#include "fxmimo/fixedpoint/complex.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

#include <stdexcept>

namespace fxmimo::fixedpoint {

template <class T>
class accumulator {
 public:
  explicit accumulator(const requantizer<T>& q) : q_(&q) {
    if (!fits_container<T>(q.fmt(), 1)) throw std::invalid_argument("accumulator: no headroom bit in T");
  }
  void reset() { value_ = T(0); }
  /// Adds the exact term x * 2^-x_frac.
  void add(const T& x, int x_frac, counters& c) {
    const T term = (*q_)(x, x_frac, c);
    value_ = q_->overflow(T(value_ + term), c);
    ++c.requantized;
  }
  [[nodiscard]] const T& value() const { return value_; }

 private:
  const requantizer<T>* q_;
  T value_{0};
};

/// Complex twin: real and imaginary accumulators side by side.
template <class T>
class complex_accumulator {
 public:
  explicit complex_accumulator(const requantizer<T>& q) : re_(q), im_(q) {}
  void reset() {
    re_.reset();
    im_.reset();
  }
  void add(const cword<T>& x, int x_frac, counters& c) {
    re_.add(x.re, x_frac, c);
    im_.add(x.im, x_frac, c);
  }
  [[nodiscard]] cword<T> value() const { return {re_.value(), im_.value()}; }

 private:
  accumulator<T> re_;
  accumulator<T> im_;
};

}  // namespace fxmimo::fixedpoint
