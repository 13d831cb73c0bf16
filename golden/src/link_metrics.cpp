#include "fxmimo/golden/link_metrics.hpp"

#include <fmt/format.h>

#include <cmath>
#include <stdexcept>

#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/trial.hpp"

namespace fxmimo::golden {

link_metrics measure_link(const Eigen::MatrixXcd& received, const Eigen::MatrixXcd& symbols, double noise_power) {
  const Eigen::Index num_users = symbols.rows();
  const Eigen::Index num_sym = symbols.cols();
  link_metrics m;
  for (Eigen::Index i_user = 0; i_user < num_users; ++i_user) {
    std::complex<double> cross = 0.0;
    double symbol_power = 0.0;
    for (Eigen::Index i_sym = 0; i_sym < num_sym; ++i_sym) {
      cross += received(i_user, i_sym) * std::conj(symbols(i_user, i_sym));
      symbol_power += std::norm(symbols(i_user, i_sym));
    }
    const std::complex<double> g = cross / symbol_power;
    double error_power = 0.0;
    for (Eigen::Index i_sym = 0; i_sym < num_sym; ++i_sym) {
      error_power += std::norm(received(i_user, i_sym) - g * symbols(i_user, i_sym));
    }
    error_power /= static_cast<double>(num_sym);
    const double signal_power = std::norm(g);  // times E|s|^2 = 1
    const double sinr = signal_power / (error_power + noise_power);
    const double evm = std::sqrt(error_power / signal_power);
    m.gain.push_back(g);
    m.sinr.push_back(sinr);
    m.sinr_db.push_back(10.0 * std::log10(sinr));
    m.evm_pct.push_back(100.0 * evm);
    m.evm_db.push_back(20.0 * std::log10(evm));
    m.rate.push_back(std::log2(1.0 + sinr));
    m.mean_sinr_db += m.sinr_db.back();
    m.mean_evm_pct += m.evm_pct.back();
    m.sum_rate += m.rate.back();
  }
  if (num_users > 0) {
    m.mean_sinr_db /= static_cast<double>(num_users);
    m.mean_evm_pct /= static_cast<double>(num_users);
  }
  return m;
}

Eigen::MatrixXcd received_downlink(const scenario& scen, const trial_data& trial, const Eigen::MatrixXcd& tx_cell0) {
  if (tx_cell0.rows() != trial.tx.rows() || tx_cell0.cols() != trial.tx.cols()) {
    throw std::invalid_argument(fmt::format("evaluate_downlink: the block is {} x {}, the trial's tx is {} x {}",
                                            tx_cell0.rows(), tx_cell0.cols(), trial.tx.rows(), trial.tx.cols()));
  }
  const double amplitude = std::sqrt(scen.downlink_snr() / trial.digital_power);
  Eigen::MatrixXcd r = trial.channel_to_cell0[0].transpose() * tx_cell0;
  if (trial.interference_to_cell0.size() > 0) r += trial.interference_to_cell0;
  return amplitude * r;
}

link_metrics evaluate_downlink(const scenario& scen, const trial_data& trial, const Eigen::MatrixXcd& tx_cell0) {
  return measure_link(received_downlink(scen, trial, tx_cell0), trial.symbols, 1.0);
}

double implementation_evm(const Eigen::MatrixXcd& x_fixed, const Eigen::MatrixXcd& x_golden) {
  const double fixed_power = x_fixed.squaredNorm();
  if (fixed_power == 0.0) return 1.0;  // nothing transmitted: the whole reference is error
  const std::complex<double> a = (x_fixed.array().conjugate() * x_golden.array()).sum() / fixed_power;
  return (a * x_fixed - x_golden).norm() / x_golden.norm();
}

}  // namespace fxmimo::golden
