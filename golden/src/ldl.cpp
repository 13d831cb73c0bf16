#include "fxmimo/golden/ldl.hpp"

namespace fxmimo::golden {

ldl_factors ldl_decompose(const Eigen::MatrixXcd& a) {
  const Eigen::Index n = a.rows();
  ldl_factors f{Eigen::MatrixXcd::Identity(n, n), Eigen::VectorXd::Zero(n)};
  for (Eigen::Index j = 0; j < n; ++j) {
    double d = a(j, j).real();
    for (Eigen::Index k = 0; k < j; ++k) {
      d -= std::norm(f.unit_lower(j, k)) * f.diag(k);
    }
    f.diag(j) = d;
    const double recip = 1.0 / d;
    for (Eigen::Index i = j + 1; i < n; ++i) {
      std::complex<double> v = a(i, j);
      for (Eigen::Index k = 0; k < j; ++k) {
        v -= f.unit_lower(i, k) * std::conj(f.unit_lower(j, k)) * f.diag(k);
      }
      f.unit_lower(i, j) = v * recip;
    }
  }
  return f;
}

Eigen::MatrixXcd ldl_inverse(const ldl_factors& factors) {
  const Eigen::MatrixXcd& l = factors.unit_lower;
  const Eigen::Index n = l.rows();
  Eigen::VectorXd recip(n);
  for (Eigen::Index i = 0; i < n; ++i) {
    recip(i) = 1.0 / factors.diag(i);
  }
  Eigen::MatrixXcd inv(n, n);
  Eigen::VectorXcd y(n);
  for (Eigen::Index col = 0; col < n; ++col) {
    for (Eigen::Index i = 0; i < n; ++i) {
      std::complex<double> v = (i == col) ? 1.0 : 0.0;
      for (Eigen::Index k = 0; k < i; ++k) {
        v -= l(i, k) * y(k);
      }
      y(i) = v;
    }
    for (Eigen::Index i = 0; i < n; ++i) {
      y(i) *= recip(i);
    }
    for (Eigen::Index i = n - 1; i >= 0; --i) {
      std::complex<double> v = y(i);
      for (Eigen::Index k = i + 1; k < n; ++k) {
        v -= std::conj(l(k, i)) * inv(k, col);
      }
      inv(i, col) = v;
    }
  }
  return inv;
}

}  // namespace fxmimo::golden
