// A program of its own that extends fxmimo's datapath with a per-antenna reciprocity
// calibration before the DAC, then offers every fxmimo command on the extended datapath:
//   cal_rom[m]      complex calibration coefficient of antenna m (a ROM, one word per antenna)
//   tx_cal[m,n]   = Q(tx_acc[m,n] cal_rom[m])     exact complex product, requantised once
//   dac[m,n]      = Q(tx_cal[m,n])                the DAC now reads tx_cal instead of tx_acc
// The coefficients are this example's own invention: unit magnitude, a phase of
// 0.4 degrees x sin(m), so the calibrated beam stays close to the uncalibrated one.
// Built against the installed package: find_package(fxmimo), linking fxmimo::app.
#include <cmath>
#include <fxmimo/app/program.hpp>
#include <fxmimo/datapath/plan.hpp>
#include <fxmimo/datapath/stage_kit.hpp>
#include <fxmimo/fixedpoint/complex.hpp>
#include <fxmimo/fixedpoint/width.hpp>
#include <numbers>

namespace d = fxmimo::datapath;
namespace fp = fxmimo::fixedpoint;

namespace {

/// The calibration coefficients as a column (antennas x 1).
Eigen::MatrixXcd calibration_table(int num_antennas) {
  Eigen::MatrixXcd c(num_antennas, 1);
  for (int m = 0; m < num_antennas; ++m) c(m, 0) = std::polar(1.0, 0.4 * std::numbers::pi / 180.0 * std::sin(m));
  return c;
}

/// tx_cal[m,n] = Q(tx_acc[m,n] cal_rom[m]).
class calibration_stage final : public d::stage {
 public:
  calibration_stage(d::node_id tx_cal, d::node_id cal_rom)
      : stage("calibration", {{tx_cal, {d::node_id::tx_acc, cal_rom}}}) {}

  /// An exact complex product: both operands' bits plus one (re = ac - bd).
  [[nodiscard]] int work_bits(const d::datapath_config& c) const override {
    return c[source(0, 0)].spec.fmt.container_bits() + c[source(0, 1)].spec.fmt.container_bits() + 1;
  }
  /// One complex multiplier (four real ones) per antenna lane.
  [[nodiscard]] double multiplier_cost(const d::datapath_config& c, const d::dimension_sizes& dims) const override {
    return 4.0 * dims.antenna * c[source(0, 0)].spec.fmt.word_bits * c[source(0, 1)].spec.fmt.word_bits;
  }
  void compute(d::fixed_context& ctx) const override {
    const d::word_matrix& x = ctx.words_of(source(0, 0));
    const d::word_matrix& cal = ctx.words_of(source(0, 1));
    const int product_frac = ctx.config[source(0, 0)].spec.fmt.frac_bits + ctx.config[source(0, 1)].spec.fmt.frac_bits;
    d::word_matrix& out = ctx.words[d::index_of(output(0))];
    fp::counters& counters = ctx.counters[d::index_of(output(0))];
    out = d::word_matrix(x.rows, x.cols, true);
    fp::with_int_type(fp::select_width(work_bits(ctx.config)), [&](auto tag) {
      using P = decltype(tag);
      const fp::requantizer<P> q(ctx.config[output(0)].spec);
      for (int m = 0; m < x.rows; ++m) {
        const fp::cword<P> c{fp::convert_int<P>(cal.re[cal.at(m, 0)]), fp::convert_int<P>(cal.im[cal.at(m, 0)])};
        for (int n = 0; n < x.cols; ++n) {
          const std::size_t i = x.at(m, n);
          const fp::cword<P> v{fp::convert_int<P>(x.re[i]), fp::convert_int<P>(x.im[i])};
          const fp::cword<P> r = fp::requantize(fp::cmul<P>(v, c), product_frac, q, counters);
          out.re[i] = fp::convert_int<std::int64_t>(r.re);
          out.im[i] = fp::convert_int<std::int64_t>(r.im);
        }
      }
    });
  }
  void golden_view(d::golden_context& ctx) const override {
    const Eigen::MatrixXcd& x = ctx.value_of(source(0, 0));
    const Eigen::MatrixXcd& cal = ctx.value_of(source(0, 1));
    ctx.set(output(0), cal.col(0).asDiagonal() * x);
  }
};

}  // namespace

int main(int argc, char** argv) {
  // 1. Two rows of the node table.
  const d::node_id cal_rom = d::register_node(
      {"cal_rom", true, {d::dim::antenna, d::dim::one}, d::node_role::rom, "per-antenna calibration coefficient"});
  const d::node_id tx_cal = d::register_node(
      {"tx_cal", true, {d::dim::antenna, d::dim::symbol}, d::node_role::register_, "calibrated transmit sample"});
  // 2. The stages, placed before the DAC, which now reads tx_cal.
  d::register_plan_extension([cal_rom, tx_cal](d::datapath_plan& plan, const fxmimo::golden::scenario& scen) {
    const Eigen::MatrixXcd table = calibration_table(scen.array.num_antennas);
    plan.insert_before(d::node_id::dac, d::make_golden_converter(cal_rom, [table](const auto&) { return table; }));
    plan.insert_before(d::node_id::dac, std::make_shared<calibration_stage>(tx_cal, cal_rom), d::node_id::tx_acc,
                       tx_cal);
  });
  // 3. Every fxmimo command, on the extended datapath.
  return fxmimo::app::run_program(argc, argv);
}
