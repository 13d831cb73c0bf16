#include "fxmimo/golden/qam.hpp"

#include <algorithm>
#include <cmath>

namespace fxmimo::golden {

namespace {

std::uint32_t gray_to_index(std::uint32_t label) {
  for (std::uint32_t shift = label >> 1; shift != 0; shift >>= 1) {
    label ^= shift;
  }
  return label;
}

double qam_scale(int bits) {
  const double num_points = std::ldexp(1.0, bits);
  return std::sqrt(3.0 / (2.0 * (num_points - 1.0)));
}

}  // namespace

int bits_per_symbol(modulation mod) {
  switch (mod) {
    case modulation::qpsk: return 2;
    case modulation::qam16: return 4;
    case modulation::qam64: return 6;
    case modulation::qam256: return 8;
    case modulation::qam1024: return 10;
  }
  return 2;
}

std::complex<double> qam_map(modulation mod, std::uint32_t label) {
  const int bits = bits_per_symbol(mod);
  const int half = bits / 2;
  const std::uint32_t mask = (1U << half) - 1U;
  const double top = static_cast<double>((1U << half) - 1U);
  const double level_i = 2.0 * gray_to_index((label >> half) & mask) - top;
  const double level_q = 2.0 * gray_to_index(label & mask) - top;
  return qam_scale(bits) * std::complex<double>(level_i, level_q);
}

Eigen::VectorXcd qam_constellation(modulation mod) {
  const std::uint32_t num_points = 1U << bits_per_symbol(mod);
  Eigen::VectorXcd points(num_points);
  for (std::uint32_t label = 0; label < num_points; ++label) {
    points(label) = qam_map(mod, label);
  }
  return points;
}

std::uint32_t qam_demap(modulation mod, std::complex<double> point) {
  const int bits = bits_per_symbol(mod);
  const int half = bits / 2;
  const int num_levels = 1 << half;
  const double scale = qam_scale(bits);
  auto axis_label = [&](double value) {
    // Level index i nearest to value / scale = 2i - (num_levels - 1), clipped to the grid.
    const double position = (value / scale + (num_levels - 1)) / 2.0;
    const int index = std::clamp(static_cast<int>(std::floor(position + 0.5)), 0, num_levels - 1);
    const auto u = static_cast<std::uint32_t>(index);
    return u ^ (u >> 1);
  };
  return (axis_label(point.real()) << half) | axis_label(point.imag());
}

double qam_step(modulation mod) { return qam_scale(bits_per_symbol(mod)); }

int qam_axis_levels(modulation mod) { return 1 << (bits_per_symbol(mod) / 2); }

int qam_axis_bit(modulation mod, int level_index, int t) {
  const int half = bits_per_symbol(mod) / 2;
  const auto i = static_cast<std::uint32_t>(level_index);
  return static_cast<int>(((i ^ (i >> 1)) >> (half - 1 - t)) & 1U);
}

void maxlog_distances(modulation mod, std::complex<double> grid_point, double* out) {
  const int half = bits_per_symbol(mod) / 2;
  const int levels = qam_axis_levels(mod);
  for (int axis = 0; axis < 2; ++axis) {
    const double x = axis == 0 ? grid_point.real() : grid_point.imag();
    for (int t = 0; t < half; ++t) {
      double best[2] = {HUGE_VAL, HUGE_VAL};
      for (int i = 0; i < levels; ++i) {
        const double d = x - (2.0 * i - (levels - 1));
        double& b = best[qam_axis_bit(mod, i, t)];
        b = std::min(b, d * d);
      }
      out[axis * half + t] = best[1] - best[0];
    }
  }
}

}  // namespace fxmimo::golden
