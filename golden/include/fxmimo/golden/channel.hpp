// Small-scale fading: i.i.d. Rayleigh, exponentially correlated Rayleigh, Rician with a
// line-of-sight array response. Column k of a channel matrix is h^j_{lk} (M antennas of BS j,
// user k of cell l), scaled by sqrt(beta^j_{lk}) so that E|h_m|^2 = beta.
#pragma once

#include <Eigen/Dense>

#include "fxmimo/golden/large_scale.hpp"
#include "fxmimo/golden/rng.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// Line-of-sight array response (unit-modulus entries, ||a||^2 = M) for a plane wave from
/// azimuth theta and elevation phi: ULA a_m = exp(j 2 pi d m sin theta); UPA element
/// (row i, column c), m = i * columns + c: exp(j 2 pi d (c sin theta cos phi + i sin phi)).
/// d = spacing in wavelengths (standard far-field steering vector).
Eigen::VectorXcd array_response(const array_config& array, double azimuth, double elevation);

/// Applies the exponential correlation model R[m,n] = r^|m-n| (Loyka, IEEE Commun. Lett. 5(9),
/// 2001) to i.i.d. CN(0,1) samples z: returns x with E[x x^H] = R, by the first-order
/// recursion x_0 = z_0, x_m = r x_{m-1} + sqrt(1 - r^2) z_m (the Cholesky factor of R).
/// UPA: separable, R = R_rows (x) R_columns with the same r along each axis.
Eigen::VectorXcd correlate_exponential(const array_config& array, double r, const Eigen::VectorXcd& z);

/// Draws the M x K channel from BS `i_bs` to the users of cell `i_cell`:
/// rayleigh    h = sqrt(beta) z, z ~ CN(0, I);
/// correlated  h = sqrt(beta) R^{1/2} z (correlate_exponential);
/// rician      h = sqrt(beta) (sqrt(kappa/(kappa+1)) e^{j varphi} a(theta, phi) + sqrt(1/(kappa+1)) z),
///             varphi uniform, a from the link's azimuth/elevation, kappa = 10^(k_factor_db/10).
Eigen::MatrixXcd draw_channel(const scenario& scen, const large_scale& gains, int i_bs, int i_cell, random_stream& rng);

}  // namespace fxmimo::golden
