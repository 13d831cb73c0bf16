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

/// The distance between neighbouring levels over 2: qam_map's point is qam_step(mod) times a
/// point of the odd-integer grid (levels -(L-1), ..., -1, 1, ..., L-1 per axis, L = 2^(bits/2)).
double qam_step(modulation mod);

/// Levels per axis, L = 2^(bits_per_symbol / 2).
int qam_axis_levels(modulation mod);

/// Bit t (0 = the axis half's MSB) of the Gray label of axis level index i (level 2i - (L-1)):
/// the label qam_map reads for that axis.
int qam_axis_bit(modulation mod, int level_index, int t);

/// Max-log distance differences of one received point on the odd-integer grid, one per bit, in
/// label order (MSB first: the in-phase half, then the quadrature half): for bit t of an axis,
/// D_t = min over levels a whose bit t is 1 of (x - a)^2 - min over levels whose bit is 0 of
/// (x - a)^2, x the point's component on that axis. D_t > 0 favours bit 0. The max-log LLR
/// ln P(b=0|x)/P(b=1|x) of a Gaussian channel with noise variance s^2 per axis on the grid is
/// D_t / (2 s^2) (README "The uplink": the scaling a decoder applies).
void maxlog_distances(modulation mod, std::complex<double> grid_point, double* out);

}  // namespace fxmimo::golden
