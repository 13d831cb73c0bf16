#include "fxmimo/golden/trial.hpp"

#include "fxmimo/golden/channel.hpp"
#include "fxmimo/golden/estimator.hpp"
#include "fxmimo/golden/pilots.hpp"
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/qam.hpp"
#include "fxmimo/golden/rng.hpp"

namespace fxmimo::golden {

namespace {

// x = weights * symbols. Eigen's blocked product: the summation order over users differs from the
// datapath's sequential MAC only at the level of double rounding (about 1e-16 relative), far below
// any fixed-point effect, and it keeps the golden trial fast.
Eigen::MatrixXcd precode(const Eigen::MatrixXcd& weights, const Eigen::MatrixXcd& symbols) { return weights * symbols; }

}  // namespace

trial_data run_trial(const scenario& scen, std::uint64_t trial_index) {
  trial_data td;
  td.trial_index = trial_index;
  td.seed = trial_seed(scen.seed, trial_index);
  random_stream rng(td.seed);

  const int num_cells = scen.cells.num_cells;
  const int num_users = scen.cells.num_users;
  const int num_sym = scen.data.num_symbols;
  const modulation mod = scen.data.mod;
  const std::uint64_t num_labels = std::uint64_t{1} << bits_per_symbol(mod);

  td.gains = draw_large_scale(scen, rng);
  td.digital_power = digital_power(scen);

  std::vector<Eigen::MatrixXcd> pilots;
  for (int i_cell = 0; i_cell < num_cells; ++i_cell) {
    pilots.push_back(pilot_matrix(scen, i_cell));
  }

  for (int i_bs = 0; i_bs < num_cells; ++i_bs) {
    std::vector<Eigen::MatrixXcd> channels;
    for (int i_cell = 0; i_cell < num_cells; ++i_cell) {
      channels.push_back(draw_channel(scen, td.gains, i_bs, i_cell, rng));
    }
    const Eigen::MatrixXcd y = received_pilots(scen, channels, pilots, rng);
    const double agc = agc_gain(scen, td.gains, i_bs);
    Eigen::MatrixXcd adc = agc * y;
    Eigen::MatrixXcd acc = correlate_pilots(adc, pilots[static_cast<std::size_t>(i_bs)]);
    Eigen::VectorXd scale = estimation_scales(scen, td.gains, i_bs, agc);
    Eigen::MatrixXcd estimate = scen.estimator.kind == estimator_kind::perfect
                                    ? channels[static_cast<std::size_t>(i_bs)]
                                    : Eigen::MatrixXcd(acc * scale.asDiagonal());
    precoder_output prec = compute_precoder(scen, estimate);

    label_matrix labels(num_users, num_sym);
    Eigen::MatrixXcd symbols(num_users, num_sym);
    for (int i_user = 0; i_user < num_users; ++i_user) {
      for (int i_sym = 0; i_sym < num_sym; ++i_sym) {
        labels(i_user, i_sym) = static_cast<std::uint32_t>(rng.uniform_below(num_labels));
        symbols(i_user, i_sym) = qam_map(mod, labels(i_user, i_sym));
      }
    }
    Eigen::MatrixXcd tx = precode(prec.weights, symbols);

    td.channel_to_cell0.push_back(std::move(channels[0]));
    td.cell_precoder.push_back(prec.precoder);
    td.cell_tx.push_back(tx);
    if (i_bs == 0) {
      td.adc = std::move(adc);
      td.pilots = pilots[0];
      td.agc_gain = agc;
      td.pilot_acc = std::move(acc);
      td.est_scale = std::move(scale);
      td.chan_est = std::move(estimate);
      td.gram = std::move(prec.gram);
      td.ldl = std::move(prec.ldl);
      td.inverse = std::move(prec.inverse);
      td.neumann_radius = prec.neumann_radius;
      td.precoder = std::move(prec.precoder);
      td.norm = std::move(prec.norm);
      td.weights = std::move(prec.weights);
      td.symbols = std::move(symbols);
      td.symbol_bits = std::move(labels);
      td.tx = std::move(tx);
    }
  }
  for (std::size_t i_cell = 1; i_cell < td.channel_to_cell0.size(); ++i_cell) {
    if (i_cell == 1) {
      td.interference_to_cell0.noalias() = td.channel_to_cell0[1].transpose() * td.cell_tx[1];
    } else {
      td.interference_to_cell0.noalias() += td.channel_to_cell0[i_cell].transpose() * td.cell_tx[i_cell];
    }
  }
  td.metrics = evaluate_downlink(scen, td, td.tx);
  return td;
}

}  // namespace fxmimo::golden
