// Converters and ROMs: words brought in from golden values (the ADC after the AGC, the pilot
// ROM, the estimator scales, the QAM symbols, the perfect-CSI estimate, the transmit gain), and
// the DAC, a requantiser of the last transmit node.
#include <type_traits>
#include <vector>

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
    // Part by part through the vector form (the counters are sums and a maximum, so the order
    // of the parts does not matter); a real input gives a complex output zero imaginary parts.
    fp::requantize_many(w.re.data(), w.size(), in.bits(), in.frac(), q, out.words->re.data(), *out.counters);
    if (out.words->is_complex) {
      const std::vector<word> zeros(w.is_complex ? 0 : w.size(), 0);
      const word* im = w.is_complex ? w.im.data() : zeros.data();
      fp::requantize_many(im, w.size(), in.bits(), in.frac(), q, out.words->im.data(), *out.counters);
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
