#include "fxmimo/golden/gauss_seidel.hpp"

#include <cmath>

namespace fxmimo::golden {

std::vector<Eigen::MatrixXcd> gauss_seidel_sweeps(const Eigen::MatrixXcd& a, int num_sweeps) {
  const Eigen::Index n = a.rows();
  Eigen::VectorXd r(n);
  for (Eigen::Index i = 0; i < n; ++i) r(i) = 1.0 / a(i, i).real();
  // B = I - D^-1 A; its diagonal is not used.
  const Eigen::MatrixXcd b = Eigen::MatrixXcd::Identity(n, n) - r.asDiagonal() * a;
  Eigen::MatrixXcd x = r.cast<std::complex<double>>().asDiagonal();
  std::vector<Eigen::MatrixXcd> out;
  for (int s = 0; s < num_sweeps; ++s) {
    for (Eigen::Index c = 0; c < n; ++c) {
      for (Eigen::Index i = 0; i < n; ++i) {
        std::complex<double> v = (i == c) ? std::complex<double>(r(i)) : 0.0;
        for (Eigen::Index j = 0; j < n; ++j) {
          if (j != i) v += b(i, j) * x(j, c);
        }
        x(i, c) = v;
      }
    }
    out.push_back(x);
  }
  return out;
}

Eigen::MatrixXcd gauss_seidel_inverse(const Eigen::MatrixXcd& a, int num_sweeps) {
  return gauss_seidel_sweeps(a, num_sweeps).back();
}

double inverse_residual(const Eigen::MatrixXcd& a, const Eigen::MatrixXcd& x) {
  const Eigen::Index n = a.rows();
  return (Eigen::MatrixXcd::Identity(n, n) - a * x).norm() / std::sqrt(static_cast<double>(n));
}

bool strictly_diagonally_dominant(const Eigen::MatrixXcd& a) {
  for (Eigen::Index i = 0; i < a.rows(); ++i) {
    double off = 0.0;
    for (Eigen::Index j = 0; j < a.cols(); ++j)
      if (j != i) off += std::abs(a(i, j));
    if (!(std::abs(a(i, i)) > off)) return false;
  }
  return true;
}

}  // namespace fxmimo::golden
