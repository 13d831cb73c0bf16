// Power normalisation: power_acc = sum (rows m, then users k, index order, or the node's
// accumulation order) of Q(|W[m,k]|^2), one sum (total) or one per antenna; norm = Q(1 / sqrt(power_acc)),
// or the table + Newton unit of [units.norm].
#include "../stage_support.hpp"
#include "fxmimo/fixedpoint/divide.hpp"
#include "stages.hpp"
#include "units.hpp"

namespace fxmimo::datapath::detail {

namespace {

class power_stage final : public stage {
 public:
  power_stage(bool per_antenna, const golden::unit_choice& rsqrt_unit)
      : stage("power", power_ports(divide_root_unit(fp::newton_function::rsqrt, rsqrt_unit, norm_nodes))),
        per_antenna_(per_antenna),
        unit_(fp::newton_function::rsqrt, rsqrt_unit, norm_nodes) {}
  /// For W = 2^f W' (block floating point on the precoder): sum |W'|^2 = 2^-2f sum |W|^2
  /// ({0, 0, 2}), its reciprocal root 2^f / sqrt ({0, 0, -1}); the unit's mantissa, ROM and
  /// iterates are those of the power (an even shift).
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id id) const override {
    if (id == node_id::power_acc) return exponent_law{0, 0, 2};
    if (id == node_id::norm) return exponent_law{0, 0, -1};
    return exponent_law{};
  }
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    const int pre = bits_of(c, source(0, 0));
    return product_bits({pre, pre}, bits_of(c, node_id::power_acc)) + 1;
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 2 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 0)) +
           unit_.multiplier_cost(c, node_id::power_acc);
  }
  /// |W|^2 = re^2 + im^2 < 2^(2m + 1), + 1 for the most negative words; log2(M K) for the sum.
  [[nodiscard]] std::optional<growth_rule> growth(node_id id, const datapath_config& c,
                                                  const dimension_sizes& dims) const override {
    if (id != node_id::power_acc) return std::nullopt;
    return growth_rule{
        2 * int_bits_of(c, source(0, 0)) + 2 + ceil_log2(static_cast<long long>(dims.antenna) * dims.user),
        "2 " + std::string(node_name(source(0, 0))) + " + 2 + log2(M K)"};
  }
  void compute(fixed_context& ctx) const override {
    const node_state pre = state(ctx, source(0, 0));
    node_state power = state(ctx, node_id::power_acc), norm = state(ctx, node_id::norm);
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& w = *pre.words;
      const int num_sums = per_antenna_ ? w.rows : 1;
      *power.words = word_matrix(num_sums, 1, false);
      *norm.words = word_matrix(num_sums, 1, false);
      const fp::requantizer<P> q(power.spec);
      fp::accumulator<P> acc(q, power.order);
      for (int i_ant = 0; i_ant < w.rows; ++i_ant) {
        if (per_antenna_ || i_ant == 0) acc.reset();
        for (int i_user = 0; i_user < w.cols; ++i_user) {
          const cw v = get(w, i_ant, i_user);
          acc.add(P(fp::convert_int<P>(v.re) * v.re + fp::convert_int<P>(v.im) * v.im), 2 * pre.frac(),
                  *power.counters);
        }
        if (per_antenna_)
          power.words->re[static_cast<std::size_t>(i_ant)] = fp::convert_int<word>(acc.result(*power.counters));
      }
      if (!per_antenna_) power.words->re[0] = fp::convert_int<word>(acc.result(*power.counters));
    });
    const int num_sums = power.words->rows;
    divide_root_unit::session session = unit_.start(ctx, num_sums);
    for (int i = 0; i < num_sums; ++i) {
      norm.words->re[static_cast<std::size_t>(i)] =
          unit_.evaluate(session, i, power.words->re[static_cast<std::size_t>(i)], power.frac(), norm);
    }
    unit_.finish(session);
  }
  void golden_view(golden_context& ctx) const override {
    const Eigen::MatrixXcd& w = ctx.trial.precoder;
    const Eigen::VectorXd power =
        per_antenna_ ? Eigen::VectorXd(w.rowwise().squaredNorm()) : Eigen::VectorXd::Constant(1, w.squaredNorm());
    ctx.set(node_id::power_acc, power.cast<std::complex<double>>());
    ctx.set(node_id::norm, power.cwiseSqrt().cwiseInverse().cast<std::complex<double>>());
    unit_.golden_view(ctx, power);
  }

 private:
  static std::vector<port> power_ports(const divide_root_unit& unit) {
    std::vector<port> p{{node_id::power_acc, {node_id::precoder}}};
    for (port& q : unit.ports(node_id::power_acc)) p.push_back(std::move(q));
    return p;
  }

  bool per_antenna_;
  divide_root_unit unit_;
};

}  // namespace

std::shared_ptr<stage> make_power(bool per_antenna, const golden::unit_choice& rsqrt_unit) {
  return std::make_shared<power_stage>(per_antenna, rsqrt_unit);
}

}  // namespace fxmimo::datapath::detail
