// The vector form of dot_accumulate_many (mac_lanes.hpp), compiled once per Highway target and
// picked at run time. Each vector holds the interleaved (re, im) accumulators of consecutive
// outputs, so every lane runs one output's sequential MAC; real and imaginary parts then share
// every rounding and overflow step. The arithmetic is dot_kernel.hpp's fast form, lane by lane:
//   term  = round(p >> shift) by the facts of the dropped bits (round_up_by_facts), then overflow
//   acc   = overflow(acc + term)
// with overflow by compare and select (AVX2 has no 64-bit min/max). Three shortcuts change no
// bit: exact terms (no fraction bit dropped) skip the rounding; terms whose bound
// 2^(a + b - 1 - shift) lies inside the accumulator's range skip their overflow step (it cannot
// fire); and one operand shared by every output is signed per lane once per term
// (shared_signs), so that a product is two multiplies and an add. With such a shared operand and
// terms that cannot overflow, the accumulators are tested once per group of G terms against a
// safe zone [lo + G B, hi - G B] (B the term bound): inside it no add of the group can overflow,
// so the group runs without its overflow steps; outside it, the group runs step by step. The range test is one add and
// one compare: lo <= v <= hi exactly when (v - lo) as an unsigned word is <= hi - lo. Counters are kept per lane
// and reduced once: the largest excess is found from the largest and smallest values that
// overflowed (the conversion to double is monotone, so the largest excess is the excess of
// those two), exactly as requantizer::overflow computes it.

// SSSE3 without SSE4 (CPUs before 2008) is not worth its compile time here: the twin covers it.
#ifndef HWY_DISABLED_TARGETS
// A build may skip more targets (CMake FXMIMO_SIMD_SKIPPED_TARGETS: the sanitizer builds).
#ifdef FXMIMO_SIMD_SKIPPED_TARGETS
#define HWY_DISABLED_TARGETS (HWY_SSSE3 | FXMIMO_SIMD_SKIPPED_TARGETS)
#else
#define HWY_DISABLED_TARGETS HWY_SSSE3
#endif
#endif

#undef HWY_TARGET_INCLUDE
#define HWY_TARGET_INCLUDE "mac_lanes_simd.cpp"
#include <hwy/foreach_target.h>  // IWYU pragma: keep
#include <hwy/highway.h>

#include <algorithm>
#include <cctype>
#include <cstdlib>
#include <stdexcept>
#include <string>
#include <string_view>
#include <type_traits>
#include <vector>

#include "fxmimo/fixedpoint/mac_lanes.hpp"

HWY_BEFORE_NAMESPACE();
namespace fxmimo::fixedpoint::HWY_NAMESPACE {
#if HWY_TARGET != HWY_SCALAR  // one-lane vectors cannot hold a (re, im) pair: the twin runs there
namespace {

namespace hn = hwy::HWY_NAMESPACE;
using D = hn::ScalableTag<std::int64_t>;
using V = hn::Vec<D>;
using M = hn::Mask<D>;

static_assert(sizeof(cword<std::int64_t>) == 2 * sizeof(std::int64_t), "cword<int64_t> must be two packed words");

/// The accumulator target, splatted.
struct lane_limits {
  V mask;           // 2^shift - 1: the dropped bits
  V half;           // 2^(shift-1)
  V half_less_one;  // 2^(shift-1) - 1
  V bias;           // 2^62: x + bias >= 0 for every product, so a logical shift floors
  V bias_shifted;   // 2^62 >> shift
  V lo, hi;
  V lo_trigger;    // values below it overflow: lo, or lo + 1 for signed saturate_symmetric
  V low_sat;       // what saturation puts below: lo, or -hi for signed saturate_symmetric
  V range_offset;  // 2^63 - lo_trigger (wrapping): v + range_offset <= range_top in range
  V range_top;     // hi - lo_trigger + 2^63 (wrapping), as a signed word
  int shift;
  int wrap_shift;  // 64 - W
  bool is_signed;
  bool check_terms;         // false when no term can leave the accumulator's range
  bool group_terms;         // no term check, and a nonempty safe zone (run_shared_block)
  V safe_offset, safe_top;  // the range test of the safe zone [lo_trigger + G B, hi - G B]
};

/// Terms per group of run_shared_block's grouped overflow test: G = 2^group_bits.
constexpr int group_bits = 3;
constexpr std::size_t terms_per_group = std::size_t{1} << group_bits;

/// Per-lane counts, reduced once at the end.
struct lane_tally {
  V overflowed;
  V inexact;
  V max_seen;  // largest value that overflowed above (hi when none)
  V min_seen;  // smallest value that overflowed below (lo_trigger when none)
};

/// The bias that makes round(x / 2^shift) by mode R equal floor((x + bias) / 2^shift): with
/// x = q 2^shift + r, 0 <= r < 2^shift, half = 2^(shift-1), floor adds 0, ceil 2^shift - 1,
/// half_up half, half_down half - 1, half_even half - 1 + (q mod 2) (bit `shift` of x),
/// half_away half - [x < 0], half_toward_zero half - 1 + [x < 0], toward_zero
/// (2^shift - 1) [x < 0]. The same decisions as round_up_by_facts (rounding.hpp).
template <rounding_mode R>
HWY_INLINE V rounding_bias(D d, V x, const lane_limits& lim) {
  static_assert(R != rounding_mode::floor);
  const V zero = hn::Zero(d);
  if constexpr (R == rounding_mode::ceil) {
    return lim.mask;
  } else if constexpr (R == rounding_mode::toward_zero) {
    return hn::And(hn::VecFromMask(d, x < zero), lim.mask);
  } else if constexpr (R == rounding_mode::half_up) {
    return lim.half;
  } else if constexpr (R == rounding_mode::half_down) {
    return lim.half_less_one;
  } else if constexpr (R == rounding_mode::half_toward_zero) {
    return hn::Sub(lim.half_less_one, hn::VecFromMask(d, x < zero));  // all ones = -1
  } else if constexpr (R == rounding_mode::half_away) {
    return hn::Add(lim.half, hn::VecFromMask(d, x < zero));
  } else {
    static_assert(R == rounding_mode::half_even);
    const hn::RebindToUnsigned<D> du;
    const V parity = hn::And(hn::BitCast(d, hn::ShiftRightSame(hn::BitCast(du, x), lim.shift)), hn::Set(d, 1));
    return hn::Add(lim.half_less_one, parity);
  }
}

/// round(x / 2^shift) by mode R; counts inexact results. Exact: shift is 0, x is the result.
template <rounding_mode R, bool Exact>
HWY_INLINE V round_lanes(D d, V x, const lane_limits& lim, lane_tally& t) {
  if constexpr (Exact) return x;
  const hn::RebindToUnsigned<D> du;
  t.inexact = hn::Sub(t.inexact, hn::VecFromMask(d, hn::And(x, lim.mask) != hn::Zero(d)));
  // floor((x + bias) / 2^shift): |x| <= 2^61 whenever the vector form applies and
  // 0 <= bias < 2^shift <= 2^62, so x + bias + 2^62 is non-negative below 2^64 and a logical
  // shift of it (cheaper than an arithmetic one on AVX2) is exact.
  V biased = hn::Add(x, lim.bias);
  if constexpr (R != rounding_mode::floor) biased = hn::Add(biased, rounding_bias<R>(d, x, lim));
  return hn::Sub(hn::BitCast(d, hn::ShiftRightSame(hn::BitCast(du, biased), lim.shift)), lim.bias_shifted);
}

/// requantizer::overflow lane by lane.
template <overflow_mode O>
HWY_INLINE V overflow_lanes(D d, V v, const lane_limits& lim, lane_tally& t) {
  if (HWY_LIKELY(hn::AllFalse(d, hn::Add(v, lim.range_offset) > lim.range_top))) return v;
  const M above = v > lim.hi;
  const M below = v < lim.lo_trigger;
  const M out = hn::Or(above, below);
  t.overflowed = hn::Sub(t.overflowed, hn::VecFromMask(d, out));
  t.max_seen = hn::IfThenElse(v > t.max_seen, v, t.max_seen);
  t.min_seen = hn::IfThenElse(v < t.min_seen, v, t.min_seen);
  if constexpr (O == overflow_mode::wrap) {
    // Keep the W low bits, then sign-extend (signed) or zero-extend; in-range lanes are unchanged.
    const hn::RebindToUnsigned<D> du;
    const auto high = hn::ShiftLeftSame(hn::BitCast(du, v), lim.wrap_shift);
    if (lim.is_signed) return hn::ShiftRightSame(hn::BitCast(d, high), lim.wrap_shift);
    return hn::BitCast(d, hn::ShiftRightSame(high, lim.wrap_shift));
  } else if constexpr (O == overflow_mode::saturate || O == overflow_mode::saturate_symmetric) {
    return hn::IfThenElse(above, lim.hi, hn::IfThenElse(below, lim.low_sat, v));
  } else {
    static_assert(O == overflow_mode::saturate_zero);
    return hn::IfThenZeroElse(out, v);
  }
}

/// The exact products of one term for the outputs of one vector, from the operand vector a
/// (interleaved re, im), a with its parts swapped, and b's real and imaginary parts splatted
/// over each output's pair of lanes.
template <product_form Form>
HWY_INLINE V form_product_lanes(V a, V a_swapped, V b_re, V b_im) {
  const hn::Repartition<std::int32_t, D> d32;
  // Words fit 32 bits, so the low halves of the 64-bit lanes are the words: one 32 x 32 -> 64
  // multiply per part product.
  const V t1 = hn::MulEven(hn::BitCast(d32, a), hn::BitCast(d32, b_re));          // (ar br, ai br)
  const V t2 = hn::MulEven(hn::BitCast(d32, a_swapped), hn::BitCast(d32, b_im));  // (ai bi, ar bi)
  const V sum = hn::Add(t1, t2), diff = hn::Sub(t1, t2);
  if constexpr (Form == product_form::plain) return hn::OddEven(sum, diff);        // (ar br - ai bi, ai br + ar bi)
  if constexpr (Form == product_form::conj_second) return hn::OddEven(diff, sum);  // (ar br + ai bi, ai br - ar bi)
  return hn::OddEven(hn::Neg(sum), diff);                                          // conj of plain
}

/// One term's accumulate step for one vector of outputs: round, overflow the term where it can
/// leave the range, add, overflow.
template <rounding_mode R, bool Exact, overflow_mode O>
HWY_INLINE V accumulate_lanes(D d, V acc, V p, const lane_limits& lim, lane_tally& t) {
  V term = round_lanes<R, Exact>(d, p, lim, t);
  if (lim.check_terms) term = overflow_lanes<O>(d, term, lim, t);
  return overflow_lanes<O>(d, hn::Add(acc, term), lim, t);
}

/// Outputs [j, j + U * outputs per vector): all terms, in order, through U independent vectors.
template <rounding_mode R, bool Exact, overflow_mode O, product_form Form, std::size_t U>
HWY_INLINE void run_block(D d, const lane_operand& a, const lane_operand& b, std::size_t num_terms, std::size_t j,
                          const lane_limits& lim, lane_tally& t, cword<std::int64_t>* out) {
  const std::size_t words = hn::Lanes(d);  // two words per output
  V acc[U];
  for (std::size_t u = 0; u < U; ++u) acc[u] = hn::Zero(d);
  const bool a_column = a.spread == lane_spread::column, b_column = b.spread == lane_spread::column;
  for (std::size_t i = 0; i < num_terms; ++i) {
    const auto* pa = reinterpret_cast<const std::int64_t*>(a.data + i * a.term_stride + (a_column ? j : 0));
    const auto* pb = reinterpret_cast<const std::int64_t*>(b.data + i * b.term_stride + (b_column ? j : 0));
    // A shared operand is the same vector for every u.
    V a_shared = hn::OddEven(hn::Set(d, pa[1]), hn::Set(d, pa[0]));
    V a_shared_swapped = hn::OddEven(hn::Set(d, pa[0]), hn::Set(d, pa[1]));
    const V b_shared_re = hn::Set(d, pb[0]), b_shared_im = hn::Set(d, pb[1]);
    for (std::size_t u = 0; u < U; ++u) {
      const std::size_t offset = u * words;
      V av = a_shared, av_swapped = a_shared_swapped, bre = b_shared_re, bim = b_shared_im;
      if (a_column) {
        av = hn::LoadU(d, pa + offset);
        av_swapped = hn::Reverse2(d, av);
      }
      if (b_column) {
        const V bv = hn::LoadU(d, pb + offset);
        const V bv_swapped = hn::Reverse2(d, bv);
        bre = hn::OddEven(bv_swapped, bv);
        bim = hn::OddEven(bv, bv_swapped);
      }
      acc[u] = accumulate_lanes<R, Exact, O>(d, acc[u], form_product_lanes<Form>(av, av_swapped, bre, bim), lim, t);
    }
  }
  auto* dst = reinterpret_cast<std::int64_t*>(out + j);
  for (std::size_t u = 0; u < U; ++u) hn::StoreU(acc[u], d, dst + u * words);
}

/// The shared operand y of every term, signed per lane of an output's (re, im) pair so that the
/// product form of column word x and y is, exactly,
///   p = (x_re Yr[0] + x_im Yi[0],  x_im Yr[1] + x_re Yi[1])
/// i.e. MulEven(x, Yr) + MulEven(swap(x), Yi). Term i's four words are at [4i, 4i + 4): Yr, Yi.
/// With the column operand first (x = a, y = b):
///   plain (br, br), (-bi, bi); conj_second (br, br), (bi, -bi); conj_both (br, -br), (-bi, -bi)
/// and with the column operand second (x = b, y = a):
///   plain (ar, ar), (-ai, ai); conj_second (ar, -ar), (ai, ai); conj_both (ar, -ar), (-ai, -ai).
/// A negated word must fit 32 bits: the shared operand has at most 31 bits.
void shared_signs(product_form form, const lane_operand& y, bool column_first, std::size_t num_terms,
                  std::vector<std::int64_t>& signed_words) {
  signed_words.resize(4 * num_terms);
  std::int64_t* w = signed_words.data();
  for (std::size_t i = 0; i < num_terms; ++i, w += 4) {
    const cword<std::int64_t>& yw = y.data[i * y.term_stride];
    const std::int64_t re = yw.re, im = yw.im;
    if (form == product_form::plain) {
      w[0] = re, w[1] = re, w[2] = -im, w[3] = im;
    } else if (form == product_form::conj_both) {
      w[0] = re, w[1] = -re, w[2] = -im, w[3] = -im;
    } else if (column_first) {  // conj_second, a * conj(b)
      w[0] = re, w[1] = re, w[2] = im, w[3] = -im;
    } else {
      w[0] = re, w[1] = -re, w[2] = im, w[3] = im;
    }
  }
}

/// run_block for a column operand x and a shared operand y already signed by shared_signs.
template <rounding_mode R, bool Exact, overflow_mode O, std::size_t U>
HWY_INLINE void run_shared_block(D d, const lane_operand& x, const std::int64_t* signed_words, std::size_t num_terms,
                                 std::size_t j, const lane_limits& lim, lane_tally& t, cword<std::int64_t>* out) {
  const hn::Repartition<std::int32_t, D> d32;
  const std::size_t words = hn::Lanes(d);
  V acc[U];
  for (std::size_t u = 0; u < U; ++u) acc[u] = hn::Zero(d);
  auto product = [&](std::size_t i, std::size_t u) {
    const auto* px = reinterpret_cast<const std::int64_t*>(x.data + i * x.term_stride + j) + u * words;
    // Words fit 32 bits, so the low halves of the 64-bit lanes are the words (as in
    // form_product_lanes).
    const auto yr = hn::BitCast(d32, hn::LoadDup128(d, signed_words + 4 * i));
    const auto yi = hn::BitCast(d32, hn::LoadDup128(d, signed_words + 4 * i + 2));
    const V xv = hn::LoadU(d, px);
    return hn::Add(hn::MulEven(hn::BitCast(d32, xv), yr), hn::MulEven(hn::BitCast(d32, hn::Reverse2(d, xv)), yi));
  };
  std::size_t i = 0;
  if (lim.group_terms) {
    // Accumulators inside the safe zone cannot leave the range within terms_per_group terms:
    // the group's overflow steps are the identity and are skipped.
    for (; i + terms_per_group <= num_terms; i += terms_per_group) {
      M outside = hn::Add(acc[0], lim.safe_offset) > lim.safe_top;
      for (std::size_t u = 1; u < U; ++u) outside = hn::Or(outside, hn::Add(acc[u], lim.safe_offset) > lim.safe_top);
      if (HWY_LIKELY(hn::AllFalse(d, outside))) {
        for (std::size_t g = 0; g < terms_per_group; ++g) {
          for (std::size_t u = 0; u < U; ++u)
            acc[u] = hn::Add(acc[u], round_lanes<R, Exact>(d, product(i + g, u), lim, t));
        }
      } else {
        for (std::size_t g = 0; g < terms_per_group; ++g) {
          for (std::size_t u = 0; u < U; ++u)
            acc[u] = accumulate_lanes<R, Exact, O>(d, acc[u], product(i + g, u), lim, t);
        }
      }
    }
  }
  for (; i < num_terms; ++i) {
    for (std::size_t u = 0; u < U; ++u) acc[u] = accumulate_lanes<R, Exact, O>(d, acc[u], product(i, u), lim, t);
  }
  auto* dst = reinterpret_cast<std::int64_t*>(out + j);
  for (std::size_t u = 0; u < U; ++u) hn::StoreU(acc[u], d, dst + u * words);
}

/// The target's limits splatted, for words that drop `shift` fraction bits; term_bound_bits
/// bounds |term| <= 2^term_bound_bits (the MAC kernel's check_terms and safe zone; a
/// requantisation passes 63, which asks for neither).
lane_limits make_limits(D d, int shift, const requantizer<std::int64_t>& q, int term_bound_bits) {
  const std::int64_t lo = q.min_word(), hi = q.max_word();
  const bool is_signed = q.fmt().is_signed;
  const bool symmetric = q.spec().overflow == overflow_mode::saturate_symmetric && is_signed;
  const std::int64_t lo_trigger = symmetric ? lo + 1 : lo;
  const bool check_terms = term_bound_bits >= 62 || (std::int64_t{1} << term_bound_bits) > hi ||
                           -(std::int64_t{1} << term_bound_bits) < lo_trigger;
  // The safe zone: an accumulator inside it stays in range for terms_per_group more terms.
  const bool small_terms = term_bound_bits + group_bits <= 60;  // G B fits with room to spare
  const std::int64_t group_bound = small_terms ? std::int64_t{1} << (term_bound_bits + group_bits) : 0;
  const bool group_terms = !check_terms && small_terms && lo_trigger + group_bound <= hi - group_bound;
  const std::int64_t safe_lo = lo_trigger + group_bound, safe_hi = hi - group_bound;
  const auto bias = std::int64_t{1} << 62;
  const std::uint64_t sign_bit = std::uint64_t{1} << 63;
  // v + offset(low) <= top(low, high) as signed words exactly when low <= v <= high.
  auto offset = [&](std::int64_t low) {
    return hn::Set(d, static_cast<std::int64_t>(sign_bit - static_cast<std::uint64_t>(low)));
  };
  auto top = [&](std::int64_t low, std::int64_t high) {
    return hn::Set(
        d, static_cast<std::int64_t>(static_cast<std::uint64_t>(high) - static_cast<std::uint64_t>(low) + sign_bit));
  };
  const std::int64_t half = shift > 0 ? std::int64_t{1} << (shift - 1) : 0;
  return {hn::Set(d, static_cast<std::int64_t>((std::uint64_t{1} << shift) - 1)),
          hn::Set(d, half),
          hn::Set(d, half - 1),
          hn::Set(d, bias),
          hn::Set(d, bias >> shift),
          hn::Set(d, lo),
          hn::Set(d, hi),
          hn::Set(d, lo_trigger),
          hn::Set(d, symmetric ? -hi : lo),
          offset(lo_trigger),
          top(lo_trigger, hi),
          shift,
          64 - q.fmt().word_bits,
          is_signed,
          check_terms,
          group_terms,
          offset(safe_lo),
          top(safe_lo, safe_hi)};
}

/// The lanes' counts added to c as `requantized` requantisations of the scalar definition would
/// add them.
void merge_tally(D d, const lane_tally& t, const requantizer<std::int64_t>& q, std::uint64_t requantized, counters& c) {
  std::vector<std::int64_t> lanes(hn::Lanes(d));
  auto reduce = [&](V v, auto combine) {
    hn::StoreU(v, d, lanes.data());
    std::int64_t r = lanes[0];
    for (std::size_t k = 1; k < lanes.size(); ++k) r = combine(r, lanes[k]);
    return r;
  };
  auto add = [](std::int64_t x, std::int64_t y) { return x + y; };
  const std::int64_t lo = q.min_word(), hi = q.max_word();
  const bool symmetric = q.spec().overflow == overflow_mode::saturate_symmetric && q.fmt().is_signed;
  counters local;
  local.requantized = requantized;
  local.overflowed = static_cast<std::uint64_t>(reduce(t.overflowed, add));
  local.inexact = static_cast<std::uint64_t>(reduce(t.inexact, add));
  const std::int64_t max_seen = reduce(t.max_seen, [](std::int64_t x, std::int64_t y) { return std::max(x, y); });
  const std::int64_t min_seen = reduce(t.min_seen, [](std::int64_t x, std::int64_t y) { return std::min(x, y); });
  // The excess as requantizer::overflow computes it: q - hi above, lo - q (in doubles) below,
  // at least 1 for the most negative word under saturate_symmetric.
  if (max_seen > hi) local.max_excess_lsb = static_cast<double>(max_seen - hi);
  const std::int64_t lo_trigger = symmetric ? lo + 1 : lo;
  if (min_seen < lo_trigger) {
    // The twin of exact terms (shift 0) is dot_accumulate's 128-bit accumulator; its conversion
    // to double (integer.hpp, to_double_approx) equals the 64-bit one on these values.
    double excess = static_cast<double>(lo) - static_cast<double>(min_seen);
    if (symmetric) excess = std::max(excess, 1.0);
    local.max_excess_lsb = std::max(local.max_excess_lsb, excess);
  }
  c.merge(local);
}

/// Every whole vector of outputs; returns how many outputs it computed.
template <rounding_mode R, bool Exact, overflow_mode O>
std::size_t run_modes(product_form form, const lane_operand& a, const lane_operand& b, std::size_t num_terms,
                      std::size_t num_outputs, const requantizer<std::int64_t>& q, cword<std::int64_t>* out,
                      counters& c) {
  const D d;
  const std::size_t per_vector = hn::Lanes(d) / 2;
  const std::size_t done = num_outputs / per_vector * per_vector;
  if (done == 0) return 0;
  // |p| <= 2^(a + b - 1) for words of a and b container bits; rounding by 2^shift keeps the
  // bound a power of two (or 1 once every bit is dropped).
  const int shift = a.frac + b.frac - q.fmt().frac_bits;
  const lane_limits lim = make_limits(d, shift, q, std::max(a.bits + b.bits - 1 - shift, 0));
  lane_tally t{hn::Zero(d), hn::Zero(d), lim.hi, lim.lo_trigger};
  std::size_t j = 0;
  const bool a_column = a.spread == lane_spread::column, b_column = b.spread == lane_spread::column;
  const lane_operand& shared = a_column ? b : a;
  if (a_column != b_column && shared.bits <= 31) {
    thread_local std::vector<std::int64_t> signed_words;
    shared_signs(form, shared, a_column, num_terms, signed_words);
    const lane_operand& x = a_column ? a : b;
    const std::size_t per_block = 4 * per_vector;  // four independent vectors hide the latencies
    for (; j + per_block <= done; j += per_block)
      run_shared_block<R, Exact, O, 4>(d, x, signed_words.data(), num_terms, j, lim, t, out);
    for (; j < done; j += per_vector)
      run_shared_block<R, Exact, O, 1>(d, x, signed_words.data(), num_terms, j, lim, t, out);
  } else {
    auto run_all = [&](auto form_tag) {
      constexpr product_form Form = decltype(form_tag)::value;
      const std::size_t per_block = 2 * per_vector;  // two independent vectors hide the add's latency
      for (; j + per_block <= done; j += per_block) run_block<R, Exact, O, Form, 2>(d, a, b, num_terms, j, lim, t, out);
      for (; j < done; j += per_vector) run_block<R, Exact, O, Form, 1>(d, a, b, num_terms, j, lim, t, out);
    };
    switch (form) {
      case product_form::plain: run_all(std::integral_constant<product_form, product_form::plain>{}); break;
      case product_form::conj_second: run_all(std::integral_constant<product_form, product_form::conj_second>{}); break;
      case product_form::conj_both: run_all(std::integral_constant<product_form, product_form::conj_both>{}); break;
    }
  }
  merge_tally(d, t, q, 4 * num_terms * done, c);  // two requantisations per part per term, as the twin
  return done;
}

/// Whole vectors of words requantised: out[i] = q(in[i]) dropping `shift` fraction bits.
template <rounding_mode R, bool Exact, overflow_mode O>
std::size_t requantize_modes(const std::int64_t* in, std::size_t n, int shift, const requantizer<std::int64_t>& q,
                             std::int64_t* out, counters& c) {
  const D d;
  const std::size_t per_vector = hn::Lanes(d);
  const std::size_t done = n / per_vector * per_vector;
  if (done == 0) return 0;
  const lane_limits lim = make_limits(d, shift, q, 63);
  lane_tally t{hn::Zero(d), hn::Zero(d), lim.hi, lim.lo_trigger};
  for (std::size_t i = 0; i < done; i += per_vector) {
    hn::StoreU(overflow_lanes<O>(d, round_lanes<R, Exact>(d, hn::LoadU(d, in + i), lim, t), lim, t), d, out + i);
  }
  merge_tally(d, t, q, done, c);
  return done;
}

/// job.template operator()<R, Exact, O>() for the target's modes; Exact (no fraction bit
/// dropped, so no rounding mode changes a word) runs one instantiation for every rounding mode.
template <class Job>
std::size_t with_modes(bool exact, const target& spec, const Job& job) {
  auto by_overflow = [&]<rounding_mode R, bool Exact>() -> std::size_t {
    switch (spec.overflow) {
      case overflow_mode::wrap: return job.template operator()<R, Exact, overflow_mode::wrap>();
      case overflow_mode::saturate: return job.template operator()<R, Exact, overflow_mode::saturate>();
      case overflow_mode::saturate_symmetric:
        return job.template operator()<R, Exact, overflow_mode::saturate_symmetric>();
      case overflow_mode::saturate_zero: return job.template operator()<R, Exact, overflow_mode::saturate_zero>();
    }
    return 0;
  };
  if (exact) return by_overflow.template operator()<rounding_mode::floor, true>();
  switch (spec.rounding) {
    case rounding_mode::floor: return by_overflow.template operator()<rounding_mode::floor, false>();
    case rounding_mode::ceil: return by_overflow.template operator()<rounding_mode::ceil, false>();
    case rounding_mode::toward_zero: return by_overflow.template operator()<rounding_mode::toward_zero, false>();
    case rounding_mode::half_up: return by_overflow.template operator()<rounding_mode::half_up, false>();
    case rounding_mode::half_down: return by_overflow.template operator()<rounding_mode::half_down, false>();
    case rounding_mode::half_toward_zero:
      return by_overflow.template operator()<rounding_mode::half_toward_zero, false>();
    case rounding_mode::half_away: return by_overflow.template operator()<rounding_mode::half_away, false>();
    case rounding_mode::half_even: return by_overflow.template operator()<rounding_mode::half_even, false>();
  }
  return 0;
}

}  // namespace
#endif

// The entry points of one target (HWY_EXPORT below needs them outside the anonymous namespace).
std::size_t many_vector_kernel(product_form form, const lane_operand& a, const lane_operand& b, std::size_t num_terms,
                               std::size_t num_outputs, const requantizer<std::int64_t>& q, cword<std::int64_t>* out,
                               counters& c) {
#if HWY_TARGET == HWY_SCALAR
  (void)form, (void)a, (void)b, (void)num_terms, (void)num_outputs, (void)q, (void)out, (void)c;
  return 0;
#else
  return with_modes(a.frac + b.frac == q.fmt().frac_bits, q.spec(),
                    [&]<rounding_mode R, bool Exact, overflow_mode O>() {
                      return run_modes<R, Exact, O>(form, a, b, num_terms, num_outputs, q, out, c);
                    });
#endif
}

std::size_t requantize_vector_kernel(const std::int64_t* in, std::size_t n, int from_frac,
                                     const requantizer<std::int64_t>& q, std::int64_t* out, counters& c) {
#if HWY_TARGET == HWY_SCALAR
  (void)in, (void)n, (void)from_frac, (void)q, (void)out, (void)c;
  return 0;
#else
  const int shift = from_frac - q.fmt().frac_bits;
  return with_modes(shift == 0, q.spec(), [&]<rounding_mode R, bool Exact, overflow_mode O>() {
    return requantize_modes<R, Exact, O>(in, n, shift, q, out, c);
  });
#endif
}

const char* many_vector_target_name() { return hwy::TargetName(HWY_TARGET); }

std::size_t many_vector_outputs() {
#if HWY_TARGET == HWY_SCALAR
  return 1;
#else
  return hwy::HWY_NAMESPACE::Lanes(hwy::HWY_NAMESPACE::ScalableTag<std::int64_t>()) / 2;
#endif
}

}  // namespace fxmimo::fixedpoint::HWY_NAMESPACE
HWY_AFTER_NAMESPACE();

#if HWY_ONCE
namespace fxmimo::fixedpoint {

HWY_EXPORT(many_vector_kernel);
HWY_EXPORT(requantize_vector_kernel);
HWY_EXPORT(many_vector_target_name);
HWY_EXPORT(many_vector_outputs);

namespace {

bool same_name(std::string_view x, std::string_view y) {
  return std::equal(x.begin(), x.end(), y.begin(), y.end(), [](char p, char r) {
    return std::tolower(static_cast<unsigned char>(p)) == std::tolower(static_cast<unsigned char>(r));
  });
}

/// What dot_accumulate_many runs, chosen once from FXMIMO_SIMD and the CPU.
struct kernel_choice {
  bool twin = false;
  std::string name;
  std::size_t outputs_per_vector = 1;
};

kernel_choice choose_kernel() {
  const char* env = std::getenv("FXMIMO_SIMD");
  const std::string wanted = env == nullptr ? "" : env;
  if (same_name(wanted, "scalar")) return {true, "scalar", 1};
  if (!wanted.empty()) {
    // One vector target only: Highway's dispatcher then sees just that one.
    std::string known = "scalar";
    std::int64_t pick = 0;
    for (const std::int64_t target : hwy::SupportedAndGeneratedTargets()) {
      if (target == HWY_SCALAR) continue;  // its name is the twin's: "scalar" means the twin
      known += std::string(", ") + hwy::TargetName(target);
      if (same_name(wanted, hwy::TargetName(target))) pick = target;
    }
    if (pick == 0) {
      throw std::runtime_error("FXMIMO_SIMD=" + wanted + ": not a kernel target of this build on this CPU (" + known +
                               ")");
    }
    hwy::SetSupportedTargetsForTest(pick);
  }
  return {false, HWY_DYNAMIC_DISPATCH(many_vector_target_name)(), HWY_DYNAMIC_DISPATCH(many_vector_outputs)()};
}

const kernel_choice& chosen_kernel() {
  static const kernel_choice choice = choose_kernel();
  return choice;
}

void twin(product_form form, const lane_operand& a, const lane_operand& b, std::size_t num_terms,
          std::size_t num_outputs, const requantizer<std::int64_t>& q, cword<std::int64_t>* out, counters& c) {
  switch (form) {
    case product_form::plain:
      return dot_accumulate_many_scalar<product_form::plain>(a, b, num_terms, num_outputs, q, out, c);
    case product_form::conj_second:
      return dot_accumulate_many_scalar<product_form::conj_second>(a, b, num_terms, num_outputs, q, out, c);
    case product_form::conj_both:
      return dot_accumulate_many_scalar<product_form::conj_both>(a, b, num_terms, num_outputs, q, out, c);
  }
}

lane_operand skip_outputs(lane_operand x, std::size_t num_done) {
  if (x.spread == lane_spread::column) x.data += num_done;
  return x;
}

}  // namespace

bool many_vector_form_applies(const lane_operand& a, const lane_operand& b, const requantizer<std::int64_t>& q) {
  const int shift = a.frac + b.frac - q.fmt().frac_bits;
  return a.bits >= 1 && b.bits >= 1 && a.bits <= 32 && b.bits <= 32 && a.bits + b.bits + 1 <= 63 && shift >= 0 &&
         shift <= 62 && fits_container<std::int64_t>(q.fmt(), 1) &&
         (a.spread == lane_spread::column || b.spread == lane_spread::column);
}

namespace detail {

void dot_accumulate_many_dispatch(product_form form, const lane_operand& a, const lane_operand& b,
                                  std::size_t num_terms, std::size_t num_outputs, const requantizer<std::int64_t>& q,
                                  cword<std::int64_t>* out, counters& c) {
  std::size_t num_done = 0;
  if (!chosen_kernel().twin && many_vector_form_applies(a, b, q)) {
    num_done = HWY_DYNAMIC_DISPATCH(many_vector_kernel)(form, a, b, num_terms, num_outputs, q, out, c);
  }
  // Outputs that do not fill a vector, and every case the vector form does not cover.
  twin(form, skip_outputs(a, num_done), skip_outputs(b, num_done), num_terms, num_outputs - num_done, q, out + num_done,
       c);
}

}  // namespace detail

bool requantize_vector_form_applies(int in_bits, int from_frac, const requantizer<std::int64_t>& q) {
  const int shift = from_frac - q.fmt().frac_bits;
  return in_bits >= 1 && in_bits <= 62 && shift >= 0 && shift <= 62 && fits_container<std::int64_t>(q.fmt(), 1);
}

void requantize_many(const std::int64_t* in, std::size_t n, int in_bits, int from_frac,
                     const requantizer<std::int64_t>& q, std::int64_t* out, counters& c) {
  std::size_t num_done = 0;
  if (!chosen_kernel().twin && requantize_vector_form_applies(in_bits, from_frac, q)) {
    num_done = HWY_DYNAMIC_DISPATCH(requantize_vector_kernel)(in, n, from_frac, q, out, c);
  }
  requantize_many_scalar(in + num_done, n - num_done, from_frac, q, out + num_done, c);
}

std::string many_kernel_target() { return chosen_kernel().name; }

std::size_t many_kernel_outputs_per_vector() { return chosen_kernel().outputs_per_vector; }

}  // namespace fxmimo::fixedpoint
#endif  // HWY_ONCE
