#pragma once
// What the stage files share: a node's state while a trial runs, word access, the integer type
// chosen once per stage, conversions of golden values into words and the exact operations the
// stages compose. Private to the datapath room.

#include <algorithm>
#include <initializer_list>
#include <utility>
#include <vector>

#include "fxmimo/datapath/stage.hpp"
#include "fxmimo/fixedpoint/accumulator.hpp"
#include "fxmimo/fixedpoint/conversions.hpp"
#include "fxmimo/fixedpoint/dot_kernel.hpp"
#include "fxmimo/fixedpoint/mac_lanes.hpp"
#include "fxmimo/fixedpoint/width.hpp"

namespace fxmimo::datapath::detail {

namespace fp = fxmimo::fixedpoint;
using word = std::int64_t;
using cw = fp::cword<word>;

/// One node while a trial runs: its target, accumulation order, counters and words.
struct node_state {
  fp::target spec;
  fp::accumulation order;
  fp::counters* counters;
  word_matrix* words;
  [[nodiscard]] int frac() const { return spec.fmt.frac_bits; }
  [[nodiscard]] int bits() const { return spec.fmt.container_bits(); }
  /// The plain sequential MAC, which the dot and vector kernels compute: sequential order and no
  /// term format (every other accumulator goes through fp::accumulator).
  [[nodiscard]] bool sequential() const {
    return order.order == fp::accumulation_order::sequential && !order.term_format;
  }
};

inline node_state state(fixed_context& ctx, node_id id) {
  const node_setting& s = ctx.config[id];
  return {s.spec, s.order, &ctx.counters[index_of(id)], &ctx.words[index_of(id)]};
}

/// Container bits of a node's configured format.
inline int bits_of(const datapath_config& config, node_id id) { return config[id].spec.fmt.container_bits(); }
inline double word_bits_of(const datapath_config& config, node_id id) {
  return static_cast<double>(config[id].spec.fmt.word_bits);
}
inline int int_bits_of(const datapath_config& config, node_id id) { return config[id].spec.fmt.int_bits(); }

inline cw get(const word_matrix& w, int row, int col) {
  const std::size_t i = w.at(row, col);
  return {w.re[i], w.is_complex ? w.im[i] : 0};
}

inline void put(word_matrix& w, int row, int col, const cw& v) {
  const std::size_t i = w.at(row, col);
  w.re[i] = v.re;
  if (w.is_complex) w.im[i] = v.im;
}

/// The words as complex pairs, row-major (the layout the dot kernel reads).
inline std::vector<cw> interleaved(const word_matrix& w) {
  std::vector<cw> out(w.size());
  for (std::size_t i = 0; i < w.size(); ++i) out[i] = {w.re[i], w.is_complex ? w.im[i] : 0};
  return out;
}

/// Calls f with the integer type that holds `bits` bits (chosen once per stage).
template <class F>
void with_width(int bits, F&& f) {
  fp::with_int_type(fp::select_width(bits), std::forward<F>(f));
}

/// Bits an integer type needs for an exact complex product of words of the given widths summed
/// twice (re = ac - bd), and for an accumulator of `acc_bits` with its headroom bit.
inline int product_bits(std::initializer_list<int> operand_bits, int acc_bits) {
  int sum = 1;
  for (int b : operand_bits) sum += b;
  return std::max(sum, acc_bits + 1);
}

/// ceil(log2(n)) for n >= 1: the integer bits a sum of n terms can add (common practice).
inline int ceil_log2(long long n) {
  int b = 0;
  while ((1LL << b) < n) ++b;
  return b;
}

/// A golden double matrix brought into a node: each value converted exactly, then requantised
/// once by the node's mode (the ADC, the ROMs, the symbols, the perfect-CSI estimate).
inline void quantize_values(const Eigen::MatrixXcd& values, bool is_complex, node_state& node) {
  *node.words = word_matrix(static_cast<int>(values.rows()), static_cast<int>(values.cols()), is_complex);
  const fp::requantizer<word> q(node.spec);
  for (int r = 0; r < values.rows(); ++r) {
    for (int c = 0; c < values.cols(); ++c) {
      const std::complex<double> v = values(r, c);
      cw out{fp::from_double(v.real(), q, *node.counters), 0};
      if (is_complex) out.im = fp::from_double(v.imag(), q, *node.counters);
      put(*node.words, r, c, out);
    }
  }
}

template <class P>
fp::cword<P> widen(const cw& v) {
  return {fp::convert_int<P>(v.re), fp::convert_int<P>(v.im)};
}

template <class P>
cw narrow(const fp::cword<P>& v) {
  return {fp::convert_int<word>(v.re), fp::convert_int<word>(v.im)};
}

template <class P>
fp::cword<P> negate(const fp::cword<P>& v) {
  return {P(-v.re), P(-v.im)};
}

/// A complex value times a real word, exactly.
template <class P>
fp::cword<P> scale(const cw& v, word s) {
  const P sp = fp::convert_int<P>(s);
  return {P(fp::convert_int<P>(v.re) * sp), P(fp::convert_int<P>(v.im) * sp)};
}

/// sum over i < n of the exact products a[i sa] (form) b[i sb], accumulated into `node` in its
/// accumulation order: the sequential order runs the specialised dot kernel, the tree orders
/// feed a complex_accumulator<P> (P from the stage's width rule) with the same exact products.
template <fp::product_form Form, class P>
[[gnu::always_inline]] inline cw dot_in_order(const cw* a, std::size_t sa, const cw* b, std::size_t sb, std::size_t n,
                                              int a_bits, int b_bits, int product_frac,
                                              const fp::requantizer<word>& q_seq, fp::complex_accumulator<P>& acc,
                                              const node_state& node) {
  if (node.sequential()) {
    return fp::dot_accumulate<Form>(a, sa, b, sb, n, a_bits, b_bits, product_frac, q_seq, *node.counters);
  }
  acc.reset();
  for (std::size_t i = 0; i < n; ++i)
    acc.add(fp::form_product<Form, P>(a[i * sa], b[i * sb]), product_frac, *node.counters);
  return narrow(acc.result(*node.counters));
}

/// The sequential order, one row of outputs at once: words (row, first_col + j), j < num_outputs,
/// output j the sequential dot product of a's and b's words of lane j over num_terms terms
/// (fp::dot_accumulate_many: vector lanes are outputs, each keeps its own order), through q,
/// counted into the node. The same words and counts as one dot_accumulate per output.
template <fp::product_form Form>
void sequential_row(const fp::lane_operand& a, const fp::lane_operand& b, std::size_t num_terms,
                    const fp::requantizer<word>& q, const node_state& node, int row, int first_col, int num_outputs) {
  std::vector<cw> out(static_cast<std::size_t>(num_outputs));
  fp::dot_accumulate_many<Form>(a, b, num_terms, out.size(), q, out.data(), *node.counters);
  for (int j = 0; j < num_outputs; ++j) put(*node.words, row, first_col + j, out[static_cast<std::size_t>(j)]);
}

}  // namespace fxmimo::datapath::detail
