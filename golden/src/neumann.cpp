#include "fxmimo/golden/neumann.hpp"

#include <cmath>

namespace fxmimo::golden {

Eigen::MatrixXcd neumann_inverse(const Eigen::MatrixXcd& a, int num_terms) {
  const Eigen::Index n = a.rows();
  Eigen::VectorXd diag_recip(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    diag_recip(i) = 1.0 / a(i, i).real();
  }
  // E = I - D^-1 A
  const Eigen::MatrixXcd e = Eigen::MatrixXcd::Identity(n, n) - diag_recip.asDiagonal() * a;
  Eigen::MatrixXcd term = Eigen::MatrixXcd(diag_recip.cast<std::complex<double>>().asDiagonal());
  Eigen::MatrixXcd sum = term;
  for (int i_term = 1; i_term < num_terms; ++i_term) {
    term = (e * term).eval();
    sum += term;
  }
  return sum;
}

double neumann_spectral_radius(const Eigen::MatrixXcd& a) {
  const Eigen::Index n = a.rows();
  Eigen::VectorXd inv_sqrt(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    inv_sqrt(i) = 1.0 / std::sqrt(a(i, i).real());
  }
  const Eigen::MatrixXcd scaled = inv_sqrt.asDiagonal() * a * inv_sqrt.asDiagonal();
  const Eigen::MatrixXcd e = Eigen::MatrixXcd::Identity(n, n) - scaled;
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXcd> solver(e, Eigen::EigenvaluesOnly);
  return solver.eigenvalues().cwiseAbs().maxCoeff();
}

bool neumann_converges(const Eigen::MatrixXcd& a) { return neumann_spectral_radius(a) < 1.0; }

}  // namespace fxmimo::golden
