#include "fxmimo/golden/channel.hpp"

#include <cmath>
#include <numbers>

namespace fxmimo::golden {

Eigen::VectorXcd array_response(const array_config& array, double azimuth, double elevation) {
  const int num_ant = array.num_antennas;
  const int num_columns = array.layout == array_layout::upa ? array.num_columns : num_ant;
  const double two_pi_d = 2.0 * std::numbers::pi * array.spacing;
  const double column_phase =
      two_pi_d * std::sin(azimuth) * (array.layout == array_layout::upa ? std::cos(elevation) : 1.0);
  const double row_phase = two_pi_d * std::sin(elevation);
  Eigen::VectorXcd a(num_ant);
  for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
    const int i_row = i_ant / num_columns;
    const int i_col = i_ant % num_columns;
    a(i_ant) = std::polar(1.0, column_phase * i_col + row_phase * i_row);
  }
  return a;
}

Eigen::VectorXcd correlate_exponential(const array_config& array, double r, const Eigen::VectorXcd& z) {
  const int num_ant = static_cast<int>(z.size());
  const int num_columns = array.layout == array_layout::upa ? array.num_columns : num_ant;
  const int num_rows = num_ant / num_columns;
  const double innovation = std::sqrt(1.0 - r * r);
  Eigen::VectorXcd x = z;
  for (int i_row = 0; i_row < num_rows; ++i_row) {
    for (int i_col = 1; i_col < num_columns; ++i_col) {
      const int m = i_row * num_columns + i_col;
      x(m) = r * x(m - 1) + innovation * x(m);
    }
  }
  for (int i_col = 0; i_col < num_columns; ++i_col) {
    for (int i_row = 1; i_row < num_rows; ++i_row) {
      const int m = i_row * num_columns + i_col;
      x(m) = r * x(m - num_columns) + innovation * x(m);
    }
  }
  return x;
}

Eigen::MatrixXcd draw_channel(const scenario& scen, const large_scale& gains, int i_bs, int i_cell,
                              random_stream& rng) {
  const int num_ant = scen.array.num_antennas;
  const int num_users = scen.cells.num_users;
  Eigen::MatrixXcd h(num_ant, num_users);
  const double kappa = std::pow(10.0, scen.channel.k_factor_db / 10.0);
  for (int i_user = 0; i_user < num_users; ++i_user) {
    const std::size_t idx = gains.index(i_bs, i_cell, i_user);
    const double amplitude = std::sqrt(gains.gain[idx]);
    double los_phase = 0.0;
    if (scen.channel.model == channel_model::rician) {
      los_phase = 2.0 * std::numbers::pi * rng.uniform();
    }
    Eigen::VectorXcd z(num_ant);
    for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
      z(i_ant) = rng.complex_normal();
    }
    switch (scen.channel.model) {
      case channel_model::rayleigh: h.col(i_user) = amplitude * z; break;
      case channel_model::correlated:
        h.col(i_user) = amplitude * correlate_exponential(scen.array, scen.channel.correlation, z);
        break;
      case channel_model::rician: {
        const Eigen::VectorXcd a = array_response(scen.array, gains.azimuth[idx], gains.elevation[idx]);
        h.col(i_user) = amplitude * (std::sqrt(kappa / (kappa + 1.0)) * std::polar(1.0, los_phase) * a +
                                     std::sqrt(1.0 / (kappa + 1.0)) * z);
        break;
      }
    }
  }
  return h;
}

}  // namespace fxmimo::golden
