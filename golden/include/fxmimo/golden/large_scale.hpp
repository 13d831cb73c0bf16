// Large-scale fading: the hexagonal cell layout, user drops, path loss and shadowing, or fixed
// gains from the scenario. Gains are linear powers beta^j_{lk} from BS j to user k of cell l.
#pragma once

#include <utility>
#include <vector>

#include "fxmimo/golden/rng.hpp"
#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// Large-scale state of one trial.
struct large_scale {
  int num_cells = 0;
  int num_users = 0;
  std::vector<double> gain;       ///< beta^j_{lk}, linear, flattened [bs][cell][user]
  std::vector<double> azimuth;    ///< angle of arrival of user (l,k) at BS j, radians, same order
  std::vector<double> elevation;  ///< elevation of arrival (UPA line of sight), radians

  /// beta^{i_bs}_{i_cell, i_user}.
  double at(int i_bs, int i_cell, int i_user) const { return gain[index(i_bs, i_cell, i_user)]; }
  /// Flat index of (bs, cell, user).
  std::size_t index(int i_bs, int i_cell, int i_user) const {
    return (static_cast<std::size_t>(i_bs) * static_cast<std::size_t>(num_cells) + static_cast<std::size_t>(i_cell)) *
               static_cast<std::size_t>(num_users) +
           static_cast<std::size_t>(i_user);
  }
};

/// Axial hexagon coordinates (q, r) of cell `i_cell` in the 1/3/7/19-cell layouts: cell 0 at the
/// centre, then the first ring counter-clockwise from angle 0, then the second ring. The centre
/// of (q, r) lies at x = sqrt(3) R (q + r/2), y = 1.5 R r for circumradius R (pointy-top hexagons).
std::pair<int, int> hex_cell_axial(int i_cell);

/// Pilot group of a hexagonal cell under reuse 1, 3 or 7: the classic colourings of the hexagonal
/// lattice, (q - r) mod 3 and (q + 3 r) mod 7, so that no two neighbouring cells share a set.
int hex_pilot_group(int i_cell, int reuse);

/// Draws (hexagonal) or copies (fixed gains) the large-scale state of one trial. Hexagonal: each
/// user uniform in its cell's hexagon at distance >= min_distance_m from its BS;
/// beta = (d / R)^-alpha * 10^(X/10), X ~ N(0, shadowing_db^2) independent per link (common
/// practice model), so a user at distance R without shadowing has gain 1 (0 dB).
/// Azimuths come from the geometry (hexagonal) or are uniform on [-pi, pi) (fixed gains);
/// elevations are uniform on [-pi/12, pi/12].
large_scale draw_large_scale(const scenario& scen, random_stream& rng);

}  // namespace fxmimo::golden
