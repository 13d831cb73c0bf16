// The vector form of dot_accumulate_many (mac_lanes.hpp), compiled once per Highway target and
// picked at run time. Each vector holds the interleaved (re, im) accumulators of consecutive
// outputs, so every lane runs one output's sequential MAC; real and imaginary parts then share
// every rounding and overflow step. The arithmetic is dot_kernel.hpp's fast form, lane by lane:
//   term  = round(p >> shift) by the facts of the dropped bits (round_up_by_facts), then overflow
//   acc   = overflow(acc + term)
// with overflow by compare and select (AVX2 has no 64-bit min/max). Counters are kept per lane
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
  V mask;          // 2^shift - 1: the dropped bits
  V half;          // 2^(shift-1)
  V bias;          // 2^62: x + bias >= 0 for every product, so a logical shift floors
  V bias_shifted;  // 2^62 >> shift
  V lo, hi;
  V lo_trigger;  // values below it overflow: lo, or lo + 1 for signed saturate_symmetric
  V low_sat;     // what saturation puts below: lo, or -hi for signed saturate_symmetric
  int shift;
  int wrap_shift;  // 64 - W
  bool is_signed;
};

/// Per-lane counts, reduced once at the end.
struct lane_tally {
  V overflowed;
  V inexact;
  V max_seen;  // largest value that overflowed above (hi when none)
  V min_seen;  // smallest value that overflowed below (lo_trigger when none)
};

/// The lanes that round_up_by_facts rounds up, from the facts of the dropped part as masks:
/// nonzero, above half, exactly half, sign of the exact value, parity of the floor.
template <rounding_mode R>
HWY_INLINE M round_up_lanes(D d, V x, V fl, V rest, M nonzero, const lane_limits& lim) {
  const V zero = hn::Zero(d);
  if constexpr (R == rounding_mode::ceil) {
    return nonzero;
  } else if constexpr (R == rounding_mode::toward_zero) {
    return hn::And(x < zero, nonzero);
  } else if constexpr (R == rounding_mode::half_up) {
    return hn::Or(rest > lim.half, rest == lim.half);
  } else if constexpr (R == rounding_mode::half_down) {
    return rest > lim.half;
  } else if constexpr (R == rounding_mode::half_toward_zero) {
    return hn::Or(rest > lim.half, hn::And(rest == lim.half, x < zero));
  } else if constexpr (R == rounding_mode::half_away) {
    return hn::Or(rest > lim.half, hn::AndNot(x < zero, rest == lim.half));
  } else {
    static_assert(R == rounding_mode::half_even);
    const M odd = hn::And(fl, hn::Set(d, 1)) != zero;
    return hn::Or(rest > lim.half, hn::And(rest == lim.half, odd));
  }
}

/// round(x / 2^shift) by mode R; counts inexact results.
template <rounding_mode R>
HWY_INLINE V round_lanes(D d, V x, const lane_limits& lim, lane_tally& t) {
  const hn::RebindToUnsigned<D> du;
  const V rest = hn::And(x, lim.mask);
  // floor(x / 2^shift): |x| <= 2^61 whenever the vector form applies, so x + 2^62 is
  // non-negative and a logical shift of it (cheaper than an arithmetic one on AVX2) is exact.
  const V fl =
      hn::Sub(hn::BitCast(d, hn::ShiftRightSame(hn::Add(hn::BitCast(du, x), hn::BitCast(du, lim.bias)), lim.shift)),
              lim.bias_shifted);
  const M nonzero = rest != hn::Zero(d);
  t.inexact = hn::Sub(t.inexact, hn::VecFromMask(d, nonzero));
  if constexpr (R == rounding_mode::floor) {
    return fl;
  } else {
    return hn::Sub(fl, hn::VecFromMask(d, round_up_lanes<R>(d, x, fl, rest, nonzero, lim)));  // all ones = -1
  }
}

/// requantizer::overflow lane by lane.
template <overflow_mode O>
HWY_INLINE V overflow_lanes(D d, V v, const lane_limits& lim, lane_tally& t) {
  const M above = v > lim.hi;
  const M below = v < lim.lo_trigger;
  const M out = hn::Or(above, below);
  if (HWY_LIKELY(hn::AllFalse(d, out))) return v;
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

/// Outputs [j, j + U * outputs per vector): all terms, in order, through U independent vectors.
template <rounding_mode R, overflow_mode O, product_form Form, std::size_t U>
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
      const V p = form_product_lanes<Form>(av, av_swapped, bre, bim);
      const V term = overflow_lanes<O>(d, round_lanes<R>(d, p, lim, t), lim, t);
      acc[u] = overflow_lanes<O>(d, hn::Add(acc[u], term), lim, t);
    }
  }
  auto* dst = reinterpret_cast<std::int64_t*>(out + j);
  for (std::size_t u = 0; u < U; ++u) hn::StoreU(acc[u], d, dst + u * words);
}

/// Every whole vector of outputs; returns how many outputs it computed.
template <rounding_mode R, overflow_mode O, product_form Form>
std::size_t run_modes(const lane_operand& a, const lane_operand& b, std::size_t num_terms, std::size_t num_outputs,
                      const requantizer<std::int64_t>& q, cword<std::int64_t>* out, counters& c) {
  const D d;
  const std::size_t per_vector = hn::Lanes(d) / 2;
  const std::size_t done = num_outputs / per_vector * per_vector;
  if (done == 0) return 0;
  const int shift = a.frac + b.frac - q.fmt().frac_bits;
  const std::int64_t lo = q.min_word(), hi = q.max_word();
  const bool is_signed = q.fmt().is_signed;
  const bool symmetric = O == overflow_mode::saturate_symmetric && is_signed;
  const auto bias = std::int64_t{1} << 62;
  const lane_limits lim{hn::Set(d, static_cast<std::int64_t>((std::uint64_t{1} << shift) - 1)),
                        hn::Set(d, shift > 0 ? std::int64_t{1} << (shift - 1) : 0),
                        hn::Set(d, bias),
                        hn::Set(d, bias >> shift),
                        hn::Set(d, lo),
                        hn::Set(d, hi),
                        hn::Set(d, symmetric ? lo + 1 : lo),
                        hn::Set(d, symmetric ? -hi : lo),
                        shift,
                        64 - q.fmt().word_bits,
                        is_signed};
  lane_tally t{hn::Zero(d), hn::Zero(d), lim.hi, lim.lo_trigger};
  std::size_t j = 0;
  const std::size_t per_block = 2 * per_vector;  // two independent vectors hide the add's latency
  for (; j + per_block <= done; j += per_block) run_block<R, O, Form, 2>(d, a, b, num_terms, j, lim, t, out);
  for (; j < done; j += per_vector) run_block<R, O, Form, 1>(d, a, b, num_terms, j, lim, t, out);

  std::vector<std::int64_t> lanes(hn::Lanes(d));
  auto reduce = [&](V v, auto combine) {
    hn::StoreU(v, d, lanes.data());
    std::int64_t r = lanes[0];
    for (std::size_t k = 1; k < lanes.size(); ++k) r = combine(r, lanes[k]);
    return r;
  };
  auto add = [](std::int64_t x, std::int64_t y) { return x + y; };
  counters local;
  local.requantized = 4 * num_terms * done;  // two requantisations per part per term, as the twin
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
  return done;
}

template <rounding_mode R, overflow_mode O>
std::size_t run_form(product_form form, const lane_operand& a, const lane_operand& b, std::size_t num_terms,
                     std::size_t num_outputs, const requantizer<std::int64_t>& q, cword<std::int64_t>* out,
                     counters& c) {
  switch (form) {
    case product_form::plain: return run_modes<R, O, product_form::plain>(a, b, num_terms, num_outputs, q, out, c);
    case product_form::conj_second:
      return run_modes<R, O, product_form::conj_second>(a, b, num_terms, num_outputs, q, out, c);
    case product_form::conj_both:
      return run_modes<R, O, product_form::conj_both>(a, b, num_terms, num_outputs, q, out, c);
  }
  return 0;
}

template <rounding_mode R>
std::size_t run_overflow(product_form form, const lane_operand& a, const lane_operand& b, std::size_t num_terms,
                         std::size_t num_outputs, const requantizer<std::int64_t>& q, cword<std::int64_t>* out,
                         counters& c) {
  switch (q.spec().overflow) {
    case overflow_mode::wrap: return run_form<R, overflow_mode::wrap>(form, a, b, num_terms, num_outputs, q, out, c);
    case overflow_mode::saturate:
      return run_form<R, overflow_mode::saturate>(form, a, b, num_terms, num_outputs, q, out, c);
    case overflow_mode::saturate_symmetric:
      return run_form<R, overflow_mode::saturate_symmetric>(form, a, b, num_terms, num_outputs, q, out, c);
    case overflow_mode::saturate_zero:
      return run_form<R, overflow_mode::saturate_zero>(form, a, b, num_terms, num_outputs, q, out, c);
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
#define FXMIMO_MANY_ARGS form, a, b, num_terms, num_outputs, q, out, c
  // With no fraction bits dropped every term is exact and no mode changes it: the floor
  // instantiation (whose shift by 0 is the identity and whose rest is 0) serves them all.
  const bool exact = a.frac + b.frac == q.fmt().frac_bits;
  switch (exact ? rounding_mode::floor : q.spec().rounding) {
    case rounding_mode::floor: return run_overflow<rounding_mode::floor>(FXMIMO_MANY_ARGS);
    case rounding_mode::ceil: return run_overflow<rounding_mode::ceil>(FXMIMO_MANY_ARGS);
    case rounding_mode::toward_zero: return run_overflow<rounding_mode::toward_zero>(FXMIMO_MANY_ARGS);
    case rounding_mode::half_up: return run_overflow<rounding_mode::half_up>(FXMIMO_MANY_ARGS);
    case rounding_mode::half_down: return run_overflow<rounding_mode::half_down>(FXMIMO_MANY_ARGS);
    case rounding_mode::half_toward_zero: return run_overflow<rounding_mode::half_toward_zero>(FXMIMO_MANY_ARGS);
    case rounding_mode::half_away: return run_overflow<rounding_mode::half_away>(FXMIMO_MANY_ARGS);
    case rounding_mode::half_even: return run_overflow<rounding_mode::half_even>(FXMIMO_MANY_ARGS);
  }
#undef FXMIMO_MANY_ARGS
  return 0;
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

std::string many_kernel_target() { return chosen_kernel().name; }

std::size_t many_kernel_outputs_per_vector() { return chosen_kernel().outputs_per_vector; }

}  // namespace fxmimo::fixedpoint
#endif  // HWY_ONCE
