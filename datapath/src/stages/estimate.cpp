// The LS / MMSE channel estimate: chan_est[m,k] = Q(pilot_acc[m,k] est_scale[k]). With block
// floating point (README "Block floating point") column k shares the exponent e_k = top - u_k:
// chan_est[m,k] = Q(pilot_acc[m,k] est_scale[k] 2^-e_k), est_exp[k] = u_k, e_k the smallest
// exponent in [top - u_max, top] at which every rounded part of the column lies in [-1, 1)
// (u_max: the largest whole number est_exp's format holds).
#include "block_exponent.hpp"
#include "stages.hpp"

namespace fxmimo::datapath::detail {

namespace {

class estimate final : public stage {
 public:
  explicit estimate(std::optional<int> block_top)
      : stage("estimate", ports_for(block_top.has_value())), block_top_(block_top) {}
  [[nodiscard]] int work_bits(const datapath_config& c) const override {
    return product_bits({bits_of(c, source(0, 0)), bits_of(c, source(0, 1))}, bits_of(c, output(0)));
  }
  [[nodiscard]] double multiplier_cost(const datapath_config& c, const dimension_sizes&) const override {
    return 2 * word_bits_of(c, source(0, 0)) * word_bits_of(c, source(0, 1));  // complex times real
  }
  /// Product of a part and a real scale: |a b| < 2^(ma + mb), + 1 for the most negative words.
  [[nodiscard]] std::optional<growth_rule> growth(node_id id, const datapath_config& c,
                                                  const dimension_sizes&) const override {
    if (id != node_id::chan_est) return std::nullopt;
    if (block_top_) return growth_rule{0, "block mantissa in [-1, 1)"};
    return growth_rule{int_bits_of(c, source(0, 0)) + int_bits_of(c, source(0, 1)) + 1,
                       std::string(node_name(source(0, 0))) + " + " + std::string(node_name(source(0, 1))) + " + 1"};
  }
  /// Column k of the estimate is worth its mantissas times 2^e_k.
  [[nodiscard]] std::optional<exponent_law> carried_law(node_id id) const override {
    return id == node_id::chan_est ? exponent_law{0, 1} : exponent_law{};
  }
  void compute(fixed_context& ctx) const override {
    const node_state pacc = state(ctx, source(0, 0)), scale_node = state(ctx, source(0, 1));
    node_state est = state(ctx, output(0));
    with_width(work_bits(ctx.config), [&](auto tag) {
      using P = decltype(tag);
      const word_matrix& a = *pacc.words;
      *est.words = word_matrix(a.rows, a.cols, true);
      const fp::requantizer<P> q(est.spec);
      const int product_frac = pacc.frac() + scale_node.frac();
      const auto product = [&](int i_ant, int i_user) {
        return scale<P>(get(a, i_ant, i_user), scale_node.words->re[static_cast<std::size_t>(i_user)]);
      };
      if (!block_top_) {
        for (int i_ant = 0; i_ant < a.rows; ++i_ant)
          for (int i_user = 0; i_user < a.cols; ++i_user)
            put(*est.words, i_ant, i_user,
                narrow(fp::requantize(product(i_ant, i_user), product_frac, q, *est.counters)));
        return;
      }
      node_state exp = state(ctx, output(1));
      *exp.words = word_matrix(a.cols, 1, false);
      const fp::requantizer<P> q_exp(exp.spec);
      const int lowest = *block_top_ - largest_whole(exp.spec.fmt);
      for (int i_user = 0; i_user < a.cols; ++i_user) {
        // The column's extreme parts: rounding is monotone, so they decide whether it fits.
        P hi = 0, lo = 0;
        for (int i_ant = 0; i_ant < a.rows; ++i_ant) {
          const fp::cword<P> p = product(i_ant, i_user);
          hi = std::max({hi, p.re, p.im});
          lo = std::min({lo, p.re, p.im});
        }
        const int e = block_exponent<P>(hi, lo, product_frac, est, lowest, *block_top_);
        for (int i_ant = 0; i_ant < a.rows; ++i_ant)
          put(*est.words, i_ant, i_user,
              narrow(fp::requantize(product(i_ant, i_user), product_frac + e, q, *est.counters)));
        exp.words->re[static_cast<std::size_t>(i_user)] =
            fp::convert_int<word>(q_exp(P(*block_top_ - e), 0, *exp.counters));
      }
    });
  }
  void golden_view(golden_context& ctx) const override {
    ctx.set(output(0), ctx.trial.chan_est);
    if (!block_top_) return;
    const Eigen::VectorXi e = golden_column_exponents(ctx.trial.chan_est, *block_top_);
    ctx.set(output(1), (*block_top_ - e.array()).cast<double>().cast<std::complex<double>>().matrix());
  }

 private:
  static std::vector<port> ports_for(bool block_float) {
    std::vector<port> p{{node_id::chan_est, {node_id::pilot_acc, node_id::est_scale}}};
    if (block_float) p.push_back({node_id::est_exp, {node_id::pilot_acc, node_id::est_scale}});
    return p;
  }

  std::optional<int> block_top_;
};

}  // namespace

std::shared_ptr<stage> make_estimate(std::optional<int> block_top) { return std::make_shared<estimate>(block_top); }

}  // namespace fxmimo::datapath::detail
