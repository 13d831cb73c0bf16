// The Gram matrices the inverters' 50-digit checks share (ldl_test.cpp, inverters_test.cpp):
// H^H H (+ loading I) of M x K i.i.d. CN(0,1) channels from fixed seeds, from a single user to a
// nearly square, ill-conditioned channel.
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <ostream>
#include <string>
#include <vector>

#include "fxmimo/golden/rng.hpp"

namespace fxmimo::golden::test {

/// Gram matrix H^H H (+ loading I) of an M x K i.i.d. CN(0,1) channel drawn from `seed`.
inline Eigen::MatrixXcd rayleigh_gram(int num_ant, int num_users, double loading, std::uint64_t seed) {
  random_stream rng(seed);
  Eigen::MatrixXcd h(num_ant, num_users);
  for (int i_user = 0; i_user < num_users; ++i_user) {
    for (int i_ant = 0; i_ant < num_ant; ++i_ant) {
      h(i_ant, i_user) = rng.complex_normal();
    }
  }
  Eigen::MatrixXcd g = h.adjoint() * h;
  g.diagonal().array() += loading;
  // Exactly Hermitian input, as the datapath's Gram node is.
  return (0.5 * (g + g.adjoint())).eval();
}

inline double condition_number(const Eigen::MatrixXcd& a) {
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXcd> solver(a, Eigen::EigenvaluesOnly);
  return solver.eigenvalues().maxCoeff() / solver.eigenvalues().minCoeff();
}

struct gram_case {
  std::string name;
  int num_ant;
  int num_users;
  double loading;
  std::uint64_t seed;
};

inline void PrintTo(const gram_case& c, std::ostream* os) { *os << c.name; }

inline const std::vector<gram_case>& gram_cases() {
  static const std::vector<gram_case> cases{{"k1", 4, 1, 0.0, 1},
                                            {"k2", 8, 2, 0.0, 2},
                                            {"k7", 28, 7, 0.0, 3},
                                            {"k8_m64", 64, 8, 0.0, 4},
                                            {"k16_m128", 128, 16, 0.0, 5},
                                            {"k32_m128", 128, 32, 0.0, 6},
                                            {"k16_m128_rzf", 128, 16, 1.6, 7},
                                            {"k16_m20_ill", 20, 16, 0.0, 8},
                                            {"k16_m16_square", 16, 16, 0.0, 9}};
  return cases;
}

}  // namespace fxmimo::golden::test
