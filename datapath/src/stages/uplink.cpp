// The uplink data path at cell 0's base station (README "The uplink"): the matched filter
// ul_match[k,n] = sum over antennas m (index order, or the node's order) of
// Q(conj(chan_est[m,k]) ul_adc[m,n]); for ZF and MMSE the combiner
// ul_comb[k,n] = sum over users j of Q(inv_out[k,j] ul_match[j,n]) (the downlink's inverse,
// shared, or ul_inv_out, the uplink's own); the equaliser ul_eq[k,n] = Q(ul_scale[k] x[k,n]),
// x the combiner's output, onto the
// odd-integer grid of the constellation; and the max-log distance differences ul_llr, each
// computed exactly from ul_eq's word and requantised once.
#include <algorithm>
#include <array>

#include "../stage_support.hpp"
#include "fxmimo/golden/qam.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

/// out[k,n] = sum_i Q(a-side x b-side), one dot product per output: ul_match (i over antennas,
/// conj(chan_est[i,k]) ul_adc[i,n]) and ul_comb (i over users, inv_out[k,i] ul_match[i,n]).
class uplink_sum_stage final : public stage {
 public:
  /// `matched`: ul_match from {chan_est, ul_adc}; else ul_comb from {inverse, ul_match}, the
  /// inverse inv_out (the downlink's, shared) or ul_inv_out (the uplink's own).
  uplink_sum_stage(bool matched, node_id inverse)
      : stage(matched ? "ul_match" : "ul_comb", {matched ? port{node_id::ul_match, {node_id::chan_est, node_id::ul_adc}}
                                                         : port{node_id::ul_comb, {inverse, node_id::ul_match}}}),
        matched_(matched) {}
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1))}, bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 4 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));  // one complex multiplier
  }
  /// Complex product parts + 2 (see the correlator), log2 of the terms for the sum.
  [[nodiscard]] std::optional<growth_rule> growth(node_id, const datapath_config& c,
                                                  const dimension_sizes& dims) const override {
    const int terms = matched_ ? dims.antenna : dims.user;
    return growth_rule{int_bits_of(c, source(0, 0)) + int_bits_of(c, source(0, 1)) + 2 + ceil_log2(terms),
                       std::string(node_name(source(0, 0))) + " + " + std::string(node_name(source(0, 1))) + " + 2 + " +
                           (matched_ ? "log2(M)" : "log2(K)")};
  }
  void compute(fixed_context& ctx) const override {
    const node_state a = state(ctx, source(0, 0)), b = state(ctx, source(0, 1));
    node_state out = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& aw = *a.words;
      const word_matrix& bw = *b.words;
      const int num_out = matched_ ? aw.cols : aw.rows;  // K
      const int num_sym = bw.cols;
      *out.words = word_matrix(num_out, num_sym, true);
      const fp::requantizer<P> q(out.spec);
      const fp::requantizer<word> q_acc(out.spec);
      fp::complex_accumulator<P> tree(q, out.order);
      const std::vector<cw> as = interleaved(aw), bs = interleaved(bw);
      const auto n = static_cast<std::size_t>(bw.rows);
      const auto b_stride = static_cast<std::size_t>(num_sym);
      const int product_frac = a.frac() + b.frac();
      for (int k = 0; k < num_out; ++k) {
        for (int i_sym = 0; i_sym < num_sym; ++i_sym) {
          const cw* col_b = &bs[bw.at(0, i_sym)];
          const cw v = matched_
                           ? dot_in_order<fp::product_form::conj_second>(col_b, b_stride, &as[aw.at(0, k)],
                                                                         static_cast<std::size_t>(aw.cols), n, b.bits(),
                                                                         a.bits(), product_frac, q_acc, tree, out)
                           : dot_in_order<fp::product_form::plain>(&as[aw.at(k, 0)], 1, col_b, b_stride, n, a.bits(),
                                                                   b.bits(), product_frac, q_acc, tree, out);
          put(*out.words, k, i_sym, v);
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override {
    const golden::uplink_data& ul = *ctx.trial.uplink;
    ctx.set(output(0), matched_ ? ul.match : ul.combined);
    if (matched_ || ctx.extents == nullptr) return;
    // The combiner's terms cancel (inv_out undoes the users' coupling in ul_match), so its
    // register's partial sums over j exceed the result: record their extent for `range`.
    const Eigen::MatrixXcd& inv = ctx.value_of(source(0, 0));
    Eigen::MatrixXcd extent = Eigen::MatrixXcd::Zero(ul.match.rows(), ul.match.cols());
    for (Eigen::Index k = 0; k < inv.rows(); ++k) {
      for (Eigen::Index n = 0; n < ul.match.cols(); ++n) {
        std::complex<double> sum = 0;
        double re = 0, im = 0;
        for (Eigen::Index j = 0; j < inv.cols(); ++j) {
          sum += inv(k, j) * ul.match(j, n);
          re = std::max(re, std::abs(sum.real()));
          im = std::max(im, std::abs(sum.imag()));
        }
        extent(k, n) = {re, im};
      }
    }
    ctx.set_extent(output(0), std::move(extent));
  }

 private:
  bool matched_;
};

/// ul_eq[k,n] = Q(ul_scale[k] x[k,n]), the product exact.
class uplink_equaliser final : public stage {
 public:
  explicit uplink_equaliser(node_id input) : stage("ul_eq", {{node_id::ul_eq, {input, node_id::ul_scale}}}) {}
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1))}, bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 2 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));  // a real gain on both parts
  }
  void compute(fixed_context& ctx) const override {
    const node_state x = state(ctx, source(0, 0)), c = state(ctx, source(0, 1));
    node_state out = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& xw = *x.words;
      *out.words = word_matrix(xw.rows, xw.cols, true);
      const fp::requantizer<P> q(out.spec);
      for (int k = 0; k < xw.rows; ++k) {
        const word gain = c.words->re[static_cast<std::size_t>(k)];
        for (int i_sym = 0; i_sym < xw.cols; ++i_sym)
          put(*out.words, k, i_sym,
              narrow(fp::requantize(scale<P>(get(xw, k, i_sym), gain), x.frac() + c.frac(), q, *out.counters)));
      }
    });
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.trial.uplink->equalised); }
};

/// ul_llr[k, n b + t] = Q(D_t) with D_t = min over levels a with bit t = 1 of (a^2 - 2 a x) minus
/// the same over bit t = 0 (the x^2 of (x - a)^2 cancels), x the axis part of ul_eq[k,n]; each
/// a^2 2^F - 2 a X 2^(F - f) (X the word, f its fraction bits, F = max(f, 0)) is an exact
/// integer at F fraction bits.
class uplink_demapper final : public stage {
 public:
  explicit uplink_demapper(golden::modulation mod)
      : stage("ul_llr", {{node_id::ul_llr, {node_id::ul_eq}}}), mod_(mod) {}
  /// At F = max(f, 0) fraction bits (f = ul_eq's): X 2^(F - f) times 2 a (a < 2^h, h = b/2: h + 1
  /// bits), a^2 2^F (2 h + F + 1 bits), and their difference and the min's difference (+ 2).
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int half = golden::bits_per_symbol(mod_) / 2;
    const int f = c[source(0, 0)].spec.fmt.frac_bits, frac = std::max(f, 0);
    return std::max({bits_of(c, source(0, 0)) + (frac - f) + half + 4, 2 * half + frac + 4, bits_of(c, output(0)) + 1});
  }
  /// Comparisons and shifts only: no multiplier (the levels are constants).
  [[nodiscard]] double multiplier_cost(const datapath_config&, const dimension_sizes&) const override { return 0; }
  void compute(fixed_context& ctx) const override {
    const node_state x = state(ctx, source(0, 0));
    node_state out = state(ctx, output(0));
    const int half = golden::bits_per_symbol(mod_) / 2;
    const int levels = golden::qam_axis_levels(mod_);
    const int frac = std::max(x.frac(), 0);  // the fraction bits D is computed at
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& xw = *x.words;
      *out.words = word_matrix(xw.rows, xw.cols * 2 * half, false);
      const fp::requantizer<P> q(out.spec);
      for (int k = 0; k < xw.rows; ++k) {
        for (int i_sym = 0; i_sym < xw.cols; ++i_sym) {
          const cw v = get(xw, k, i_sym);
          for (int axis = 0; axis < 2; ++axis) {
            const P xp = fp::shift_left(fp::convert_int<P>(axis == 0 ? v.re : v.im), frac - x.frac());
            for (int t = 0; t < half; ++t) {
              std::array<std::optional<P>, 2> best;
              for (int i = 0; i < levels; ++i) {
                const int a = 2 * i - (levels - 1);
                const P d =
                    P(fp::shift_left(fp::convert_int<P>(word{a} * a), frac) - P(fp::convert_int<P>(word{2} * a) * xp));
                std::optional<P>& b = best[static_cast<std::size_t>(golden::qam_axis_bit(mod_, i, t))];
                if (!b || d < *b) b = d;
              }
              const P diff = P(*best[1] - *best[0]);
              out.words->re[out.words->at(k, i_sym * 2 * half + axis * half + t)] =
                  fp::convert_int<word>(q(diff, frac, *out.counters));
            }
          }
        }
      }
    });
  }
  void golden_view(golden_context& ctx) const override {
    ctx.set(output(0), ctx.trial.uplink->distances.cast<std::complex<double>>());
  }

 private:
  golden::modulation mod_;
};

}  // namespace

std::shared_ptr<stage> make_uplink_match() { return std::make_shared<uplink_sum_stage>(true, node_id::ul_match); }
std::shared_ptr<stage> make_uplink_combiner(node_id inverse) {
  return std::make_shared<uplink_sum_stage>(false, inverse);
}
std::shared_ptr<stage> make_uplink_equaliser(bool combined) {
  return std::make_shared<uplink_equaliser>(combined ? node_id::ul_comb : node_id::ul_match);
}
std::shared_ptr<stage> make_uplink_demapper(golden::modulation mod) { return std::make_shared<uplink_demapper>(mod); }

}  // namespace fxmimo::datapath::detail
