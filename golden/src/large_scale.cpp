#include "fxmimo/golden/large_scale.hpp"

#include <array>
#include <cmath>
#include <numbers>

namespace fxmimo::golden {

namespace {

// Centre, first ring counter-clockwise from angle 0, second ring counter-clockwise from angle 0.
constexpr std::array<std::pair<int, int>, 19> hex_layout = {{
    {0, 0},  {1, 0},  {0, 1},  {-1, 1}, {-1, 0},  {0, -1}, {1, -1}, {2, 0},  {1, 1},  {0, 2},
    {-1, 2}, {-2, 2}, {-2, 1}, {-2, 0}, {-1, -1}, {0, -2}, {1, -2}, {2, -2}, {2, -1},
}};

int positive_mod(int value, int modulus) { return ((value % modulus) + modulus) % modulus; }

struct point {
  double x;
  double y;
};

point cell_centre(int i_cell, double radius) {
  const auto [q, r] = hex_cell_axial(i_cell);
  return {std::sqrt(3.0) * radius * (q + 0.5 * r), 1.5 * radius * r};
}

bool inside_hexagon(double x, double y, double radius) {
  // Pointy-top hexagon of circumradius R centred at the origin.
  const double ax = std::abs(x);
  return ax <= 0.5 * std::sqrt(3.0) * radius && std::abs(y) <= radius - ax / std::sqrt(3.0);
}

}  // namespace

std::pair<int, int> hex_cell_axial(int i_cell) { return hex_layout.at(static_cast<std::size_t>(i_cell)); }

int hex_pilot_group(int i_cell, int reuse) {
  const auto [q, r] = hex_cell_axial(i_cell);
  if (reuse == 3) {
    return positive_mod(q - r, 3);
  }
  if (reuse == 7) {
    return positive_mod(q + 3 * r, 7);
  }
  return 0;
}

large_scale draw_large_scale(const scenario& scen, random_stream& rng) {
  const cells_config& cells = scen.cells;
  large_scale ls;
  ls.num_cells = cells.num_cells;
  ls.num_users = cells.num_users;
  const std::size_t num_links = static_cast<std::size_t>(ls.num_cells) * static_cast<std::size_t>(ls.num_cells) *
                                static_cast<std::size_t>(ls.num_users);
  ls.gain.assign(num_links, 0.0);
  ls.azimuth.assign(num_links, 0.0);
  ls.elevation.assign(num_links, 0.0);

  if (cells.source == gain_source::hexagonal) {
    const double radius = cells.radius_m;
    // Drop every user first (cell by cell, user by user), then the links BS by BS.
    std::vector<point> user_pos(static_cast<std::size_t>(ls.num_cells * ls.num_users));
    for (int i_cell = 0; i_cell < ls.num_cells; ++i_cell) {
      const point centre = cell_centre(i_cell, radius);
      for (int i_user = 0; i_user < ls.num_users; ++i_user) {
        double x = 0.0;
        double y = 0.0;
        do {
          x = (2.0 * rng.uniform() - 1.0) * radius;
          y = (2.0 * rng.uniform() - 1.0) * radius;
        } while (!inside_hexagon(x, y, radius) || std::hypot(x, y) < cells.min_distance_m);
        user_pos[static_cast<std::size_t>(i_cell * ls.num_users + i_user)] = {centre.x + x, centre.y + y};
      }
    }
    for (int i_bs = 0; i_bs < ls.num_cells; ++i_bs) {
      const point bs = cell_centre(i_bs, radius);
      for (int i_cell = 0; i_cell < ls.num_cells; ++i_cell) {
        for (int i_user = 0; i_user < ls.num_users; ++i_user) {
          const point u = user_pos[static_cast<std::size_t>(i_cell * ls.num_users + i_user)];
          const double distance = std::hypot(u.x - bs.x, u.y - bs.y);
          const double shadow_db = cells.shadowing_db * rng.real_normal();
          const std::size_t idx = ls.index(i_bs, i_cell, i_user);
          ls.gain[idx] = std::pow(distance / radius, -cells.pathloss_exponent) * std::pow(10.0, shadow_db / 10.0);
          ls.azimuth[idx] = std::atan2(u.y - bs.y, u.x - bs.x);
          ls.elevation[idx] = (2.0 * rng.uniform() - 1.0) * std::numbers::pi / 12.0;
        }
      }
    }
    return ls;
  }

  for (int i_bs = 0; i_bs < ls.num_cells; ++i_bs) {
    for (int i_cell = 0; i_cell < ls.num_cells; ++i_cell) {
      for (int i_user = 0; i_user < ls.num_users; ++i_user) {
        const std::size_t idx = ls.index(i_bs, i_cell, i_user);
        double gain_db = 0.0;
        if (cells.source == gain_source::per_user) {
          gain_db = (i_bs == i_cell) ? cells.user_gains_db[static_cast<std::size_t>(i_user)] : cells.cross_gain_db;
        } else {
          gain_db = cells.gains_db[idx];
        }
        ls.gain[idx] = std::pow(10.0, gain_db / 10.0);
        ls.azimuth[idx] = (2.0 * rng.uniform() - 1.0) * std::numbers::pi;
        ls.elevation[idx] = (2.0 * rng.uniform() - 1.0) * std::numbers::pi / 12.0;
      }
    }
  }
  return ls;
}

}  // namespace fxmimo::golden
