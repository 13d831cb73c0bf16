#include "fxmimo/golden/precoder.hpp"

#include <Eigen/Eigenvalues>
#include <cmath>
#include <limits>

#include "fxmimo/golden/cholesky.hpp"
#include "fxmimo/golden/gauss_seidel.hpp"
#include "fxmimo/golden/neumann.hpp"

namespace fxmimo::golden {

Eigen::MatrixXcd gram_matrix(const Eigen::MatrixXcd& chan_est) {
  const Eigen::Index num_ant = chan_est.rows();
  const Eigen::Index num_users = chan_est.cols();
  Eigen::MatrixXcd g(num_users, num_users);
  for (Eigen::Index i_user = 0; i_user < num_users; ++i_user) {
    for (Eigen::Index j_user = 0; j_user <= i_user; ++j_user) {
      std::complex<double> sum = 0.0;
      for (Eigen::Index i_ant = 0; i_ant < num_ant; ++i_ant) {
        sum += std::conj(chan_est(i_ant, i_user)) * chan_est(i_ant, j_user);
      }
      g(i_user, j_user) = sum;
      g(j_user, i_user) = std::conj(sum);
    }
    g(i_user, i_user) = g(i_user, i_user).real();
  }
  return g;
}

double digital_power(const scenario& scen) {
  return scen.array.num_antennas * std::pow(10.0, -scen.frontend.dac_backoff_db / 10.0);
}

Eigen::VectorXd power_normalization_factors(const Eigen::MatrixXcd& precoder, power_normalization mode, double p_dig) {
  if (mode == power_normalization::total) {
    Eigen::VectorXd norm(1);
    norm(0) = std::sqrt(p_dig) / precoder.norm();
    return norm;
  }
  const Eigen::Index num_ant = precoder.rows();
  Eigen::VectorXd norm(num_ant);
  for (Eigen::Index i_ant = 0; i_ant < num_ant; ++i_ant) {
    norm(i_ant) = std::sqrt(p_dig / static_cast<double>(num_ant)) / precoder.row(i_ant).norm();
  }
  return norm;
}

precoder_output compute_precoder(const scenario& scen, const Eigen::MatrixXcd& chan_est) {
  precoder_output out;
  const precoder_config& cfg = scen.precoder;
  if (cfg.kind == precoder_kind::mf) {
    out.precoder = chan_est.conjugate();
  } else {
    out.gram = gram_matrix(chan_est);
    if (cfg.kind == precoder_kind::rzf) {
      out.gram.diagonal().array() += scen.rzf_regularizer();
    }
    switch (cfg.inversion) {
      case inversion_kind::ldl:
        out.ldl = ldl_decompose(out.gram);
        out.inverse = ldl_inverse(*out.ldl);
        break;
      case inversion_kind::neumann:
        out.inverse = neumann_inverse(out.gram, cfg.neumann_terms);
        out.neumann_radius = neumann_spectral_radius(out.gram);
        break;
      case inversion_kind::cholesky: out.inverse = cholesky_inverse(cholesky_decompose(out.gram)); break;
      case inversion_kind::gauss_seidel:
        out.inverse = gauss_seidel_inverse(out.gram, cfg.gauss_seidel_sweeps);
        out.gauss_seidel_residual = inverse_residual(out.gram, out.inverse);
        break;
      case inversion_kind::reference: {
        const Eigen::Index n = out.gram.rows();
        out.inverse = out.gram.ldlt().solve(Eigen::MatrixXcd::Identity(n, n));
        break;
      }
    }
    out.precoder = (chan_est * out.inverse).conjugate();
  }
  out.norm = power_normalization_factors(out.precoder, cfg.normalization, digital_power(scen));
  if (out.norm.size() == 1) {
    out.weights = out.precoder * out.norm(0);
  } else {
    out.weights = out.norm.asDiagonal() * out.precoder;
  }
  return out;
}

double condition_number(const Eigen::MatrixXcd& hermitian) {
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXcd> eig(hermitian, Eigen::EigenvaluesOnly);
  const Eigen::VectorXd& l = eig.eigenvalues();  // ascending
  if (!(l(0) > 0)) return std::numeric_limits<double>::infinity();
  return l(l.size() - 1) / l(0);
}

}  // namespace fxmimo::golden
