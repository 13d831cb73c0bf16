#include "fxmimo/golden/cholesky.hpp"

#include <cmath>

namespace fxmimo::golden {

cholesky_factors cholesky_decompose(const Eigen::MatrixXcd& a) {
  const Eigen::Index n = a.rows();
  cholesky_factors f{Eigen::MatrixXcd::Zero(n, n), Eigen::VectorXd::Zero(n)};
  for (Eigen::Index j = 0; j < n; ++j) {
    double r = a(j, j).real();
    for (Eigen::Index k = 0; k < j; ++k) r -= std::norm(f.lower(j, k));
    const double rs = 1.0 / std::sqrt(r);
    f.diag_rsqrt(j) = rs;
    f.lower(j, j) = r * rs;
    for (Eigen::Index i = j + 1; i < n; ++i) {
      std::complex<double> v = a(i, j);
      for (Eigen::Index k = 0; k < j; ++k) v -= f.lower(i, k) * std::conj(f.lower(j, k));
      f.lower(i, j) = v * rs;
    }
  }
  return f;
}

namespace {

/// y = L^-1 e_c (zeros above c).
Eigen::VectorXcd forward_column(const cholesky_factors& f, Eigen::Index c) {
  const Eigen::Index n = f.lower.rows();
  Eigen::VectorXcd y = Eigen::VectorXcd::Zero(n);
  for (Eigen::Index i = c; i < n; ++i) {
    std::complex<double> v = (i == c) ? 1.0 : 0.0;
    for (Eigen::Index k = c; k < i; ++k) v -= f.lower(i, k) * y(k);
    y(i) = v * f.diag_rsqrt(i);
  }
  return y;
}

}  // namespace

Eigen::MatrixXcd cholesky_forward(const cholesky_factors& factors) {
  const Eigen::Index n = factors.lower.rows();
  Eigen::MatrixXcd out(n, n);
  for (Eigen::Index c = 0; c < n; ++c) out.col(c) = forward_column(factors, c);
  return out;
}

Eigen::MatrixXcd cholesky_inverse(const cholesky_factors& factors) {
  const Eigen::MatrixXcd& l = factors.lower;
  const Eigen::Index n = l.rows();
  Eigen::MatrixXcd inv(n, n);
  for (Eigen::Index c = 0; c < n; ++c) {
    const Eigen::VectorXcd y = forward_column(factors, c);
    for (Eigen::Index i = n - 1; i >= 0; --i) {
      std::complex<double> v = y(i);
      for (Eigen::Index k = i + 1; k < n; ++k) v -= std::conj(l(k, i)) * inv(k, c);
      inv(i, c) = v * factors.diag_rsqrt(i);
    }
  }
  return inv;
}

}  // namespace fxmimo::golden
