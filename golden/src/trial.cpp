#include "fxmimo/golden/trial.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>

#include "fxmimo/golden/channel.hpp"
#include "fxmimo/golden/estimator.hpp"
#include "fxmimo/golden/pilots.hpp"
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/qam.hpp"
#include "fxmimo/golden/rng.hpp"
#include "fxmimo/golden/uplink.hpp"

namespace fxmimo::golden {

namespace {

std::uint64_t label_count(const scenario& scen) { return std::uint64_t{1} << bits_per_symbol(scen.data.mod); }

/// The next `count` labels of every user of one base station, advancing its rows.
label_matrix draw_labels(label_rows& cell, std::uint64_t num_labels, int count) {
  label_matrix labels(static_cast<Eigen::Index>(cell.rows.size()), count);
  for (std::size_t k = 0; k < cell.rows.size(); ++k) {
    for (int n = 0; n < count; ++n)
      labels(static_cast<Eigen::Index>(k), n) = static_cast<std::uint32_t>(cell.rows[k].uniform_below(num_labels));
  }
  return labels;
}

Eigen::MatrixXcd map_labels(modulation mod, const label_matrix& labels) {
  Eigen::MatrixXcd symbols(labels.rows(), labels.cols());
  for (Eigen::Index n = 0; n < labels.cols(); ++n)
    for (Eigen::Index k = 0; k < labels.rows(); ++k) symbols(k, n) = qam_map(mod, labels(k, n));
  return symbols;
}

}  // namespace

trial_data run_trial(const scenario& scen, std::uint64_t trial_index) {
  trial_data td;
  td.trial_index = trial_index;
  td.seed = trial_seed(scen.seed, trial_index);
  random_stream rng(td.seed);

  const int num_cells = scen.cells.num_cells;
  const int num_users = scen.cells.num_users;
  const int num_sym = scen.data.num_symbols;
  const std::uint64_t num_labels = label_count(scen);

  td.gains = draw_large_scale(scen, rng);
  td.digital_power = digital_power(scen);
  td.amplitude = std::sqrt(scen.downlink_snr() / td.digital_power);

  std::vector<Eigen::MatrixXcd> pilots;
  std::vector<Eigen::MatrixXcd> uplink_channels;  // H^0_l, kept for the uplink
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

    // The labels: user by user, N each. Only where each user's row starts is kept; the stream
    // walks past the row so that the next base station's draws follow as they always have.
    label_rows cell;
    for (int i_user = 0; i_user < num_users; ++i_user) {
      cell.rows.push_back(rng);
      for (int i_sym = 0; i_sym < num_sym; ++i_sym) rng.uniform_below(num_labels);
    }
    td.cell_labels.push_back(std::move(cell));
    if (i_bs == 0 && scen.uplink.on) uplink_channels = channels;
    td.cross_gain.push_back(i_bs == 0 ? Eigen::MatrixXcd() : Eigen::MatrixXcd(channels[0].transpose() * prec.weights));
    td.channel_to_cell0.push_back(std::move(channels[0]));
    td.cell_precoder.push_back(prec.precoder);
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
      td.gauss_seidel_residual = prec.gauss_seidel_residual;
      td.precoder = std::move(prec.precoder);
      td.norm = std::move(prec.norm);
      td.weights = std::move(prec.weights);
    }
  }

  link_sums sums(num_users);
  data_stream stream(scen, td);
  data_block block;
  while (stream.next(block)) sums.add(own_received(td, block, block.tx), block.interference, block.symbols);
  td.metrics = sums.metrics(td.amplitude, 1.0, 1.0);
  if (scen.uplink.on) td.uplink = run_uplink(scen, td, uplink_channels);
  return td;
}

data_stream::data_stream(const scenario& scen, const trial_data& trial, bool golden_products)
    : scen_(scen),
      trial_(trial),
      cells_(golden_products ? trial.cell_labels
                             : std::vector<label_rows>(trial.cell_labels.begin(), trial.cell_labels.begin() + 1)),
      golden_products_(golden_products) {}

bool data_stream::next(data_block& out) {
  const int num_sym = scen_.data.num_symbols;
  if (next_first_ >= num_sym) return false;
  const int count = std::min(symbol_block_size, num_sym - next_first_);
  const std::uint64_t num_labels = label_count(scen_);
  out.first = next_first_;
  next_first_ += count;
  for (std::size_t l = 0; l < cells_.size(); ++l) {
    label_matrix labels = draw_labels(cells_[l], num_labels, count);
    Eigen::MatrixXcd symbols = map_labels(scen_.data.mod, labels);
    if (l == 0) {
      if (golden_products_) {
        out.tx.noalias() = trial_.weights * symbols;
      } else {
        out.tx.resize(0, 0);
      }
      out.labels = std::move(labels);
      out.symbols = std::move(symbols);
      out.interference.resize(0, 0);
    } else if (l == 1) {
      out.interference.noalias() = trial_.cross_gain[l] * symbols;
    } else {
      out.interference.noalias() += trial_.cross_gain[l] * symbols;
    }
  }
  return true;
}

data_block whole_data(const scenario& scen, const trial_data& trial, bool golden_products) {
  const int num_sym = scen.data.num_symbols;
  const auto num_users = static_cast<Eigen::Index>(scen.cells.num_users);
  data_block all;
  all.labels.resize(num_users, num_sym);
  all.symbols.resize(num_users, num_sym);
  if (golden_products) {
    all.tx.resize(trial.weights.rows(), num_sym);
    if (trial.cell_labels.size() > 1) all.interference.resize(num_users, num_sym);
  }
  data_stream stream(scen, trial, golden_products);
  data_block block;
  while (stream.next(block)) {
    all.labels.middleCols(block.first, block.size()) = block.labels;
    all.symbols.middleCols(block.first, block.size()) = block.symbols;
    if (all.tx.size() > 0) all.tx.middleCols(block.first, block.size()) = block.tx;
    if (all.interference.size() > 0) all.interference.middleCols(block.first, block.size()) = block.interference;
  }
  return all;
}

Eigen::MatrixXcd own_received(const trial_data& trial, const data_block& block, const Eigen::MatrixXcd& tx_cell0) {
  if (tx_cell0.rows() != trial.weights.rows() || tx_cell0.cols() != block.size()) {
    throw std::invalid_argument(fmt::format("own_received: the transmitted block is {} x {}, expected {} x {}",
                                            tx_cell0.rows(), tx_cell0.cols(), trial.weights.rows(), block.size()));
  }
  return trial.channel_to_cell0[0].transpose() * tx_cell0;
}

}  // namespace fxmimo::golden
