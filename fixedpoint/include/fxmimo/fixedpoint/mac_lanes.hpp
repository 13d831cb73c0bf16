#pragma once
/// Many complex dot products at once, one per output j < num_outputs, each through its own
/// sequential accumulator:
///   acc_j = 0; for i = 0 .. num_terms-1: acc_j <- Q(acc_j + Q(p_ij)),  p_ij = a_ij b_ij,
///   a_ij conj(b_ij) or conj(a_ij b_ij) (product_form)
/// per real and imaginary part, Q = the accumulator's target (rounding mode, then overflow
/// mode). Output j is exactly dot_accumulate over its own terms, and the counters are the
/// same sums (and the same largest excess) as num_outputs calls of dot_accumulate.
///
/// The operands are laid out the way a precoder or a correlator bank holds them: the word of
/// term i for output j sits at data[i * term_stride + j] (a column over the outputs: weights
/// W[m,k] stored column-major, symbols S[k,n] stored row-major) or at data[i * term_stride]
/// (one word shared by every output: the symbol s_k of x[m] = sum_k W[m,k] s_k).
///
/// Two implementations: dot_accumulate_many_scalar (the scalar twin: a loop of dot_accumulate,
/// the definition) and a vector form in mac_lanes_simd.cpp whose SIMD lanes hold independent
/// outputs (so every output keeps its sequential order; "lanes" here are vector lanes, not
/// accumulation_order::lanes). dot_accumulate_many picks the vector form at run time where it
/// applies and the CPU has a vector unit; the environment variable FXMIMO_SIMD=scalar forces
/// the scalar twin, FXMIMO_SIMD=<target> (a Highway target name: SSE4, AVX2, ...) one target.
///
/// Corner cases: the most negative word times itself (exact in 64 bits whenever the vector
/// form applies); exact ties at half an LSB (the rounding mode decides); a term that overflows
/// before it is added; zero outputs or zero terms (outputs are 0, nothing is counted). Every
/// word must lie in its operand's container bits (the kernel trusts `bits`).

#include <cstddef>
#include <cstdint>
#include <string>

#include "fxmimo/fixedpoint/dot_kernel.hpp"

namespace fxmimo::fixedpoint {

/// How one operand's words spread over the outputs.
enum class lane_spread {
  shared,  ///< term i: data[i * term_stride] for every output
  column,  ///< term i, output j: data[i * term_stride + j]
};

/// One operand of dot_accumulate_many: where its words are, how they spread over the outputs,
/// and their format's container bits and fraction bits.
struct lane_operand {
  const cword<std::int64_t>* data = nullptr;
  std::size_t term_stride = 0;
  lane_spread spread = lane_spread::column;
  int bits = 0;  ///< two's complement container bits of every word
  int frac = 0;  ///< fraction bits F of the words
};

/// The word of term i for output j.
inline const cword<std::int64_t>& operand_word(const lane_operand& x, std::size_t i, std::size_t j) {
  return x.data[i * x.term_stride + (x.spread == lane_spread::column ? j : 0)];
}

/// The scalar twin: output j is dot_accumulate over its terms; out[j] for j < num_outputs.
template <product_form Form>
void dot_accumulate_many_scalar(const lane_operand& a, const lane_operand& b, std::size_t num_terms,
                                std::size_t num_outputs, const requantizer<std::int64_t>& q, cword<std::int64_t>* out,
                                counters& c) {
  const std::size_t out_a = a.spread == lane_spread::column ? 1 : 0;
  const std::size_t out_b = b.spread == lane_spread::column ? 1 : 0;
  for (std::size_t j = 0; j < num_outputs; ++j) {
    out[j] = dot_accumulate<Form>(a.data + j * out_a, a.term_stride, b.data + j * out_b, b.term_stride, num_terms,
                                  a.bits, b.bits, a.frac + b.frac, q, c);
  }
}

/// True when the vector form can compute these outputs: both operands' words fit 32 bits (one
/// 32 x 32 -> 64-bit multiply per part product) and a + b + 1 <= 63 bits (dot_kernel.hpp's
/// rule), 0..62 fraction bits are dropped (0: exact terms, which dot_accumulate hands to its
/// 128-bit twin), the accumulator has a headroom bit in 64, and at least one operand is a
/// column. Outputs that do not fill a whole vector go to the twin.
bool many_vector_form_applies(const lane_operand& a, const lane_operand& b, const requantizer<std::int64_t>& q);

namespace detail {
void dot_accumulate_many_dispatch(product_form form, const lane_operand& a, const lane_operand& b,
                                  std::size_t num_terms, std::size_t num_outputs, const requantizer<std::int64_t>& q,
                                  cword<std::int64_t>* out, counters& c);
}  // namespace detail

/// out[j], j < num_outputs: the sequential complex dot product of output j (definition above),
/// bit for bit and counter for counter the scalar twin; vectorised where it applies.
template <product_form Form>
void dot_accumulate_many(const lane_operand& a, const lane_operand& b, std::size_t num_terms, std::size_t num_outputs,
                         const requantizer<std::int64_t>& q, cword<std::int64_t>* out, counters& c) {
  detail::dot_accumulate_many_dispatch(Form, a, b, num_terms, num_outputs, q, out, c);
}

/// Many words of one format requantised at once: out[i] = q(in[i], from_frac, c), i < n (out
/// may be in). The scalar twin is that loop of requantizer calls, the definition.
inline void requantize_many_scalar(const std::int64_t* in, std::size_t n, int from_frac,
                                   const requantizer<std::int64_t>& q, std::int64_t* out, counters& c) {
  for (std::size_t i = 0; i < n; ++i) out[i] = q(in[i], from_frac, c);
}

/// True when requantize_many's vector form applies: words of at most 62 container bits (the
/// rounding's biased shift needs |x| <= 2^61), 0..62 fraction bits dropped (appending bits is
/// the twin's), and a target with a headroom bit in 64.
bool requantize_vector_form_applies(int in_bits, int from_frac, const requantizer<std::int64_t>& q);

/// out[i] = q(in[i], from_frac, c) for i < n; in_bits is the container width of every in[i]
/// (trusted, like lane_operand::bits). Bit for bit and counter for counter the scalar twin,
/// vectorised where it applies and FXMIMO_SIMD allows (the same choice as dot_accumulate_many).
void requantize_many(const std::int64_t* in, std::size_t n, int in_bits, int from_frac,
                     const requantizer<std::int64_t>& q, std::int64_t* out, counters& c);

/// The implementation dot_accumulate_many runs on this machine: "scalar" (the twin, forced by
/// FXMIMO_SIMD=scalar) or the vector target's name ("AVX2", "SSE4", ...; "SCALAR" is Highway's
/// one-lane fallback, which hands every output to the twin).
std::string many_kernel_target();

/// Complex outputs one vector of that target holds (1 for the scalar twin).
std::size_t many_kernel_outputs_per_vector();

}  // namespace fxmimo::fixedpoint
