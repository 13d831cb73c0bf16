#include "fxmimo/golden/estimator.hpp"

#include <cmath>

namespace fxmimo::golden {

double agc_gain(const scenario& scen, const large_scale& gains, int i_bs) {
  return agc_gain_at(scen, gains, i_bs, scen.pilot_snr());
}

double agc_gain_at(const scenario& scen, const large_scale& gains, int i_bs, double snr) {
  double total_gain = 0.0;
  for (int i_cell = 0; i_cell < gains.num_cells; ++i_cell) {
    for (int i_user = 0; i_user < gains.num_users; ++i_user) {
      total_gain += gains.at(i_bs, i_cell, i_user);
    }
  }
  return std::pow(10.0, -scen.frontend.agc_backoff_db / 20.0) / std::sqrt(snr * total_gain + 1.0);
}

Eigen::MatrixXcd received_pilots(const scenario& scen, const std::vector<Eigen::MatrixXcd>& channels,
                                 const std::vector<Eigen::MatrixXcd>& pilots, random_stream& rng) {
  const int num_ant = scen.array.num_antennas;
  const int length = scen.pilots.length;
  Eigen::MatrixXcd y = Eigen::MatrixXcd::Zero(num_ant, length);
  const double amplitude = std::sqrt(scen.pilot_snr());
  for (std::size_t i_cell = 0; i_cell < channels.size(); ++i_cell) {
    y.noalias() += amplitude * channels[i_cell] * pilots[i_cell].transpose();
  }
  for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
    for (int t = 0; t < length; ++t) {
      y(i_ant, t) += rng.complex_normal();
    }
  }
  return y;
}

Eigen::MatrixXcd correlate_pilots(const Eigen::MatrixXcd& adc, const Eigen::MatrixXcd& pilots) {
  const Eigen::Index num_ant = adc.rows();
  const Eigen::Index length = adc.cols();
  const Eigen::Index num_users = pilots.cols();
  Eigen::MatrixXcd acc(num_ant, num_users);
  for (Eigen::Index i_user = 0; i_user < num_users; ++i_user) {
    for (Eigen::Index i_ant = 0; i_ant < num_ant; ++i_ant) {
      std::complex<double> sum = 0.0;
      for (Eigen::Index t = 0; t < length; ++t) {
        sum += adc(i_ant, t) * std::conj(pilots(t, i_user));
      }
      acc(i_ant, i_user) = sum;
    }
  }
  return acc;
}

double mmse_psi(const scenario& scen, const large_scale& gains, int i_bs, int i_user) {
  const int group = scen.pilot_group(i_bs);
  double sharing = 0.0;
  for (int i_cell = 0; i_cell < gains.num_cells; ++i_cell) {
    if (scen.pilot_group(i_cell) == group) {
      sharing += gains.at(i_bs, i_cell, i_user);
    }
  }
  return 1.0 / (scen.pilots.length * scen.pilot_snr() * sharing + 1.0);
}

Eigen::VectorXd estimation_scales(const scenario& scen, const large_scale& gains, int i_bs, double agc) {
  const int num_users = scen.cells.num_users;
  const double rho_p = scen.pilot_snr();
  Eigen::VectorXd scale(num_users);
  for (int i_user = 0; i_user < num_users; ++i_user) {
    if (scen.estimator.kind == estimator_kind::mmse) {
      scale(i_user) = std::sqrt(rho_p) * gains.at(i_bs, i_bs, i_user) * mmse_psi(scen, gains, i_bs, i_user) / agc;
    } else {
      scale(i_user) = 1.0 / (agc * scen.pilots.length * std::sqrt(rho_p));
    }
  }
  return scale;
}

}  // namespace fxmimo::golden
