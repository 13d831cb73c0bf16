// Orthogonal uplink pilot sequences and their assignment to cells and users.
#pragma once

#include <Eigen/Dense>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// All tau_p orthogonal sequences of length tau_p as the columns of a tau_p x tau_p matrix, each
/// with energy tau_p (phi^H phi = tau_p, distinct columns orthogonal):
/// dft    phi_s[t] = exp(j 2 pi s t / tau_p) (unit modulus);
/// walsh  phi_s[t] = (-1)^popcount(s & t), the Sylvester–Hadamard matrix (tau_p a power of two).
Eigen::MatrixXcd pilot_family(pilot_sequence sequence, int length);

/// Pilots of cell `i_cell` (tau_p x K): user k sends sequence g K + k of the family, g the cell's
/// pilot group (scenario::pilot_group), so cells of one group share a set and groups are orthogonal.
Eigen::MatrixXcd pilot_matrix(const scenario& scen, int i_cell);

}  // namespace fxmimo::golden
