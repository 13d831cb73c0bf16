#include "fxmimo/golden/pilots.hpp"

#include <bit>
#include <complex>
#include <numbers>

namespace fxmimo::golden {

Eigen::MatrixXcd pilot_family(pilot_sequence sequence, int length) {
  Eigen::MatrixXcd family(length, length);
  for (int i_pilot = 0; i_pilot < length; ++i_pilot) {
    for (int t = 0; t < length; ++t) {
      if (sequence == pilot_sequence::dft) {
        // Reduce s*t modulo tau_p first so the angle stays small and exact in double.
        const int turns = static_cast<int>((static_cast<long long>(i_pilot) * t) % length);
        family(t, i_pilot) = std::polar(1.0, 2.0 * std::numbers::pi * turns / length);
      } else {
        const int parity = std::popcount(static_cast<unsigned>(i_pilot & t)) & 1;
        family(t, i_pilot) = parity != 0 ? -1.0 : 1.0;
      }
    }
  }
  return family;
}

Eigen::MatrixXcd pilot_matrix(const scenario& scen, int i_cell) {
  const int num_users = scen.cells.num_users;
  const Eigen::MatrixXcd family = pilot_family(scen.pilots.sequence, scen.pilots.length);
  const int first = scen.pilot_group(i_cell) * num_users;
  return family.middleCols(first, num_users);
}

}  // namespace fxmimo::golden
