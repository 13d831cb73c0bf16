#pragma once
// The HTML report's chart axes: round linear ticks, whole-number axes and decades of log axes.

#include <string>
#include <vector>

namespace fxmimo::report::html {

struct tick {
  double value = 0.0;  ///< in the axis's domain (log10 of the value on log axes)
  std::string label;   ///< empty: an unlabelled minor tick
};

/// An axis domain [lo, hi] and its ticks.
struct axis {
  double lo = 0.0, hi = 1.0;
  std::vector<tick> ticks;
};

/// Maps a domain value to pixels: p0 + (v - d0) (p1 - p0) / (d1 - d0).
struct linear_map {
  double d0, d1, p0, p1;
  double operator()(double v) const { return p0 + (v - d0) * (p1 - p0) / (d1 - d0); }
};

/// Ticks at multiples of a round step (1, 2 or 5 times a power of ten), about `target` of them,
/// the domain widened to the outer ticks so the data never touch an unlabelled edge.
axis round_axis(double lo, double hi, int target);

/// An axis of whole numbers (bit counts, exponents) from lo to hi with `pad` beside the outer
/// values; labelled every 1, 2, 5, 10, ... so that at most `max_labels` labels show.
axis integer_axis(int lo, int hi, int max_labels, double pad = 0.5);

/// Decades lo_exp .. hi_exp (domain log10, starting at lo_log), labelled on every decade up to 7
/// of them, else on every second one ("1", "10", "100", then "1e3", "1e-2", ...).
axis decade_axis(double lo_log, int lo_exp, int hi_exp);

}  // namespace fxmimo::report::html
