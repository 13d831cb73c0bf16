#pragma once
/// Accumulators in the three orders an RTL adder structure can take (README "How it computes",
/// "Accumulation orders"). Q_acc requantises to the accumulator's target (round, then
/// overflow); OV_acc is its overflow stage alone (two words of one format add exactly).
///   sequential (the MAC of RTL):   acc <- Q_acc(acc + Q_acc(p_i)), i in index order, acc = 0
///                                  first; saturation happens in hardware order.
///   pairwise (balanced adder tree): v_i = Q_acc(p_i); each level maps v_0..v_{n-1} to
///                                  u_j = OV_acc(v_2j + v_2j+1), j < floor(n/2), and passes an
///                                  odd last v_{n-1} up unchanged; until one value (0 for n = 0).
///   lanes, P lanes (a cascade of P DSP slices): lane_(i mod P) <- Q_acc(lane + Q_acc(p_i)),
///                                  all P lanes start at 0; then the P lane values are combined
///                                  by the pairwise tree (overflow handled at every adder).
/// Narrow product terms (a DSP slice with a truncated output port): with a term format, every
/// term is first requantised to it, p_i' = Q_term(p_i) (the term format, the term rounding, the
/// accumulator's overflow mode), and Q_acc(p_i') is added in place of Q_acc(p_i).
/// Counting (every requantisation point counts once): a sequential or lane add counts the term
/// and the sum; a tree adder counts one; a term format counts one more per term. Corner cases: a term beyond the range
/// saturates (or wraps) before it is added; a sum of two words needs one bit more than the accumulator, so T must hold
/// W + 1 bits.

#include <algorithm>
#include <array>
#include <optional>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "fxmimo/fixedpoint/complex.hpp"
#include "fxmimo/fixedpoint/requantize.hpp"

namespace fxmimo::fixedpoint {

/// The order in which an accumulator adds its terms (definitions above).
enum class accumulation_order { sequential, pairwise, lanes };

inline constexpr std::array all_accumulation_orders{accumulation_order::sequential, accumulation_order::pairwise,
                                                    accumulation_order::lanes};

/// An accumulator's structure: its order and, for `lanes`, the lane count P (>= 1); optionally
/// the format its product terms are requantised to before they are added (default: none, each
/// term goes straight into the accumulator's format) and that requantisation's rounding.
struct accumulation {
  accumulation() = default;
  accumulation(accumulation_order o, int p) : order(o), lanes(p) {}
  accumulation_order order = accumulation_order::sequential;
  int lanes = 1;
  std::optional<format> term_format;
  rounding_mode term_rounding = rounding_mode::floor;
  friend bool operator==(const accumulation&, const accumulation&) = default;
};

/// Largest lane count a scenario may ask for.
inline constexpr int max_accumulation_lanes = 4096;

/// "sequential", "pairwise", "lanes".
std::string_view to_string(accumulation_order order);
std::optional<accumulation_order> parse_accumulation_order(std::string_view text);
std::string list_accumulation_orders();

/// Reduces v (words of the target, in index order) by the pairwise tree, in place; returns the
/// root (0 for an empty list).
template <class T>
T pairwise_reduce(std::vector<T>& v, const requantizer<T>& q, counters& c) {
  if (v.empty()) return T(0);
  std::size_t n = v.size();
  while (n > 1) {
    const std::size_t half = n / 2;
    for (std::size_t j = 0; j < half; ++j) {
      v[j] = q.overflow(T(v[2 * j] + v[2 * j + 1]), c);
      ++c.requantized;
    }
    if (n % 2 == 1) v[half] = v[n - 1];
    n = half + n % 2;
  }
  return v[0];
}

template <class T>
class accumulator {
 public:
  explicit accumulator(const requantizer<T>& q, accumulation how = {}) : q_(&q), how_(how) {
    if (!fits_container<T>(q.fmt(), 1)) throw std::invalid_argument("accumulator: no headroom bit in T");
    if (how_.term_format) term_q_.emplace(target{*how_.term_format, how_.term_rounding, q.spec().overflow});
    if (how_.order == accumulation_order::lanes) {
      if (how_.lanes < 1) throw std::invalid_argument("accumulator: lanes must be at least 1");
      lanes_.assign(static_cast<std::size_t>(how_.lanes), T(0));
    }
  }
  void reset() {
    value_ = T(0);
    count_ = 0;
    terms_.clear();
    std::fill(lanes_.begin(), lanes_.end(), T(0));
  }
  /// Adds the exact term x * 2^-x_frac.
  [[gnu::always_inline]] void add(const T& x, int x_frac, counters& c) {
    const T term = term_q_ ? (*q_)((*term_q_)(x, x_frac, c), term_q_->fmt().frac_bits, c) : (*q_)(x, x_frac, c);
    if (how_.order == accumulation_order::sequential) [[likely]] {
      value_ = q_->overflow(T(value_ + term), c);
      ++c.requantized;
    } else if (how_.order == accumulation_order::pairwise) {
      terms_.push_back(term);
    } else {
      T& lane = lanes_[count_ % lanes_.size()];
      lane = q_->overflow(T(lane + term), c);
      ++c.requantized;
      ++count_;
    }
  }
  /// The sum of the terms added since reset(); the tree adders (pairwise, lanes) count into c.
  T result(counters& c) {
    switch (how_.order) {
      case accumulation_order::sequential: return value_;
      case accumulation_order::pairwise: return pairwise_reduce(terms_, *q_, c);
      case accumulation_order::lanes: {
        terms_.assign(lanes_.begin(), lanes_.end());
        return pairwise_reduce(terms_, *q_, c);
      }
    }
    return value_;
  }
  /// The running sum of the sequential order.
  [[nodiscard]] const T& value() const { return value_; }

 private:
  const requantizer<T>* q_;
  accumulation how_;
  std::optional<requantizer<T>> term_q_;
  T value_{0};
  std::size_t count_ = 0;
  std::vector<T> terms_;
  std::vector<T> lanes_;
};

/// Complex twin: real and imaginary accumulators side by side.
template <class T>
class complex_accumulator {
 public:
  explicit complex_accumulator(const requantizer<T>& q, accumulation how = {}) : re_(q, how), im_(q, how) {}
  void reset() {
    re_.reset();
    im_.reset();
  }
  void add(const cword<T>& x, int x_frac, counters& c) {
    re_.add(x.re, x_frac, c);
    im_.add(x.im, x_frac, c);
  }
  cword<T> result(counters& c) {
    const T re = re_.result(c);
    return {re, im_.result(c)};
  }
  [[nodiscard]] cword<T> value() const { return {re_.value(), im_.value()}; }

 private:
  accumulator<T> re_;
  accumulator<T> im_;
};

}  // namespace fxmimo::fixedpoint
