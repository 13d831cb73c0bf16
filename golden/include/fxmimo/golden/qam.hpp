// Gray-mapped square QAM with unit mean power.
#pragma once

#include <Eigen/Dense>
#include <complex>
#include <cstdint>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// Bits per symbol: 2, 4, 6, 8, 10.
int bits_per_symbol(modulation mod);

/// Maps a label of bits_per_symbol(mod) bits (MSB first: the upper half selects the in-phase
/// level, the lower half the quadrature level) to a point. Each half is a binary-reflected Gray
/// code of the PAM level index i (label = i ^ (i >> 1)); level 2i - (sqrt(Q) - 1), scaled by
/// sqrt(3 / (2 (Q - 1))) so that the mean power over all Q points is 1 (square Q-QAM mean
/// energy 2 (Q - 1) / 3 for levels +-1, +-3, ...; Proakis, Digital Communications (from memory)).
std::complex<double> qam_map(modulation mod, std::uint32_t label);

/// All points, index = label.
Eigen::VectorXcd qam_constellation(modulation mod);

/// Nearest-point hard decision (inverse of qam_map on the grid).
std::uint32_t qam_demap(modulation mod, std::complex<double> point);

}  // namespace fxmimo::golden
