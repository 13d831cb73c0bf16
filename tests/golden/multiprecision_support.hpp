// 50-digit complex linear algebra (Boost.Multiprecision) used as the outside reference for the
// double-precision kernels: plain textbook algorithms, no Eigen.
#pragma once

#include <Eigen/Dense>
#include <boost/multiprecision/cpp_bin_float.hpp>
#include <boost/multiprecision/cpp_complex.hpp>
#include <cstddef>
#include <vector>

namespace fxmimo::golden::test {

using mp_real = boost::multiprecision::cpp_bin_float_50;
using mp_complex = boost::multiprecision::cpp_complex_50;

/// Dense row-major square matrix of 50-digit complex numbers.
struct mp_matrix {
  std::size_t n = 0;
  std::vector<mp_complex> v;
  explicit mp_matrix(std::size_t size) : n(size), v(size * size, mp_complex(0)) {}
  mp_complex& operator()(std::size_t i, std::size_t j) { return v[i * n + j]; }
  const mp_complex& operator()(std::size_t i, std::size_t j) const { return v[i * n + j]; }
};

inline mp_matrix to_mp(const Eigen::MatrixXcd& a) {
  mp_matrix m(static_cast<std::size_t>(a.rows()));
  for (std::size_t i = 0; i < m.n; ++i) {
    for (std::size_t j = 0; j < m.n; ++j) {
      const auto c = a(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j));
      m(i, j) = mp_complex(c.real(), c.imag());
    }
  }
  return m;
}

inline mp_matrix mp_identity(std::size_t n) {
  mp_matrix m(n);
  for (std::size_t i = 0; i < n; ++i) {
    m(i, i) = mp_complex(1);
  }
  return m;
}

inline mp_matrix mp_multiply(const mp_matrix& a, const mp_matrix& b) {
  mp_matrix c(a.n);
  for (std::size_t i = 0; i < a.n; ++i) {
    for (std::size_t k = 0; k < a.n; ++k) {
      for (std::size_t j = 0; j < a.n; ++j) {
        c(i, j) += a(i, k) * b(k, j);
      }
    }
  }
  return c;
}

inline mp_real mp_abs2(const mp_complex& z) { return real(z) * real(z) + imag(z) * imag(z); }

/// Gauss–Jordan inverse with partial pivoting in 50 digits.
inline mp_matrix mp_inverse(mp_matrix a) {
  const std::size_t n = a.n;
  mp_matrix inv = mp_identity(n);
  for (std::size_t col = 0; col < n; ++col) {
    std::size_t pivot = col;
    for (std::size_t r = col + 1; r < n; ++r) {
      if (mp_abs2(a(r, col)) > mp_abs2(a(pivot, col))) {
        pivot = r;
      }
    }
    for (std::size_t j = 0; j < n; ++j) {
      std::swap(a(col, j), a(pivot, j));
      std::swap(inv(col, j), inv(pivot, j));
    }
    const mp_complex recip = mp_complex(1) / a(col, col);
    for (std::size_t j = 0; j < n; ++j) {
      a(col, j) *= recip;
      inv(col, j) *= recip;
    }
    for (std::size_t r = 0; r < n; ++r) {
      if (r != col) {
        const mp_complex f = a(r, col);
        for (std::size_t j = 0; j < n; ++j) {
          a(r, j) -= f * a(col, j);
          inv(r, j) -= f * inv(col, j);
        }
      }
    }
  }
  return inv;
}

/// ||x - ref||_F / ||ref||_F with the difference taken in 50 digits.
inline double relative_error(const Eigen::MatrixXcd& x, const mp_matrix& ref) {
  mp_real num = 0;
  mp_real den = 0;
  for (std::size_t i = 0; i < ref.n; ++i) {
    for (std::size_t j = 0; j < ref.n; ++j) {
      const auto c = x(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j));
      num += mp_abs2(mp_complex(c.real(), c.imag()) - ref(i, j));
      den += mp_abs2(ref(i, j));
    }
  }
  return static_cast<double>(sqrt(num / den));
}

/// Frobenius norm in double of a 50-digit matrix.
inline double mp_norm(const mp_matrix& a) {
  mp_real s = 0;
  for (const auto& z : a.v) {
    s += mp_abs2(z);
  }
  return static_cast<double>(sqrt(s));
}

}  // namespace fxmimo::golden::test
