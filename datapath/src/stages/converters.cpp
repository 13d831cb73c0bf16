// Converters and ROMs: words brought in from golden values (the ADC after the AGC, the pilot
// ROM, the estimator scales, the QAM symbols, the perfect-CSI estimate, the transmit gain), and
// the DAC, a requantiser of the last transmit node.
#include <type_traits>

#include "../stage_support.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

/// word = Q(value), each real and imaginary part converted exactly, then requantised once. The
/// values come from the golden trial (golden_source) or, in the data phase, from the symbol
/// block (block_source).
template <class Source>
class golden_converter final : public stage {
 public:
  golden_converter(node_id node, Source source)
      : stage(std::string(node_name(node)), {{node, {}}}), source_(std::move(source)) {}
  [[nodiscard]] int work_bits(const datapath_config&) const override { return 64; }
  void compute(fixed_context& ctx) const override {
    node_state n = state(ctx, output(0));
    quantize_values(values(ctx), node_is_complex(output(0)), n);
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), values(ctx)); }

 private:
  template <class Context>
  [[nodiscard]] Eigen::MatrixXcd values(const Context& ctx) const {
    if constexpr (std::is_same_v<Source, block_source>) {
      return source_(ctx.data());
    } else {
      return source_(ctx.trial);
    }
  }
  Source source_;
};

/// out[i] = Q_out(in[i]) at in's fraction bits; one output register pair per row (a stream).
class requantizer_stage final : public stage {
 public:
  requantizer_stage(node_id out, node_id in) : stage(std::string(node_name(out)), {{out, {in}}}) {}
  [[nodiscard]] int work_bits(const datapath_config&) const override { return 64; }
  [[nodiscard]] double storage_words(node_id id, const dimension_sizes& dims) const override {
    return (node_is_complex(id) ? 2.0 : 1.0) * dims.size(dims_of(id)[0]);
  }
  void compute(fixed_context& ctx) const override {
    const node_state in = state(ctx, source(0, 0));
    node_state out = state(ctx, output(0));
    const word_matrix& w = *in.words;
    *out.words = word_matrix(w.rows, w.cols, node_is_complex(output(0)));
    const fp::requantizer<word> q(out.spec);
    if (out.words->is_complex) {
      for (std::size_t i = 0; i < w.size(); ++i) {
        const cw v = fp::requantize(cw{w.re[i], w.is_complex ? w.im[i] : 0}, in.frac(), q, *out.counters);
        out.words->re[i] = v.re;
        out.words->im[i] = v.im;
      }
    } else {
      for (std::size_t i = 0; i < w.size(); ++i) out.words->re[i] = q(w.re[i], in.frac(), *out.counters);
    }
  }
  void golden_view(golden_context& ctx) const override { ctx.set(output(0), ctx.value_of(source(0, 0))); }
};

}  // namespace

}  // namespace fxmimo::datapath::detail

namespace fxmimo::datapath {

std::shared_ptr<stage> make_golden_converter(node_id node, golden_source source) {
  return std::make_shared<detail::golden_converter<golden_source>>(node, std::move(source));
}

std::shared_ptr<stage> make_block_converter(node_id node, block_source source) {
  return std::make_shared<detail::golden_converter<block_source>>(node, std::move(source));
}

std::shared_ptr<stage> make_requantizer(node_id out, node_id in) {
  return std::make_shared<detail::requantizer_stage>(out, in);
}

}  // namespace fxmimo::datapath
