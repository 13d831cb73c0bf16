#include "axes.hpp"

#include <fmt/core.h>

#include <cmath>

namespace fxmimo::report::html {

/// Ticks at multiples of a round step (1, 2 or 5 times a power of ten), about `target` of them,
/// the domain widened to the outer ticks so the data never touch an unlabelled edge.
axis round_axis(double lo, double hi, int target) {
  if (!(hi > lo)) {
    const double pad = lo == 0.0 ? 1.0 : std::abs(lo) * 0.1;
    if (lo == 0.0) {
      hi = lo + pad;
    } else {
      lo -= pad;
      hi += pad;
    }
  }
  const double raw = (hi - lo) / target;
  int exp10 = static_cast<int>(std::floor(std::log10(raw)));
  const double norm = raw / std::pow(10.0, exp10);
  int mult = norm < 1.5 ? 1 : norm < 3.0 ? 2 : norm < 7.0 ? 5 : 10;
  if (mult == 10) {
    mult = 1;
    ++exp10;
  }
  const double step = mult * std::pow(10.0, exp10);
  const int decimals = std::max(0, -exp10);
  const auto first = static_cast<long long>(std::floor(lo / step + 1e-9));
  const auto last = static_cast<long long>(std::ceil(hi / step - 1e-9));
  axis a;
  a.lo = static_cast<double>(first) * step;
  a.hi = static_cast<double>(last) * step;
  for (long long i = first; i <= last; ++i) {
    const double v = i == 0 ? 0.0 : static_cast<double>(i) * step;
    a.ticks.push_back({v, fmt::format("{:.{}f}", v, decimals)});
  }
  return a;
}

/// An axis of whole numbers (bit counts, exponents) from lo to hi with half a unit beside the
/// outer values; labelled every 1, 2, 5, 10, ... so that at most `max_labels` labels show.
axis integer_axis(int lo, int hi, int max_labels, double pad) {
  if (lo == hi) {
    --lo;
    ++hi;
  }
  int step = 1;
  for (const int s : {1, 2, 5, 10, 20, 50, 100}) {
    step = s;
    if ((hi - lo) / s + 1 <= max_labels) break;
  }
  axis a;
  a.lo = lo - pad;
  a.hi = hi + pad;
  for (int v = lo; v <= hi; ++v) {
    if (v % step == 0) a.ticks.push_back({static_cast<double>(v), std::to_string(v)});
  }
  return a;
}

namespace {

/// The label of the decade 10^e on a log axis: "1", "10", "100", then "1e3", "1e-2", ...

std::string decade_label(int e) {
  if (e >= 0 && e <= 2) return e == 0 ? "1" : e == 1 ? "10" : "100";
  return fmt::format("1e{}", e);
}

}  // namespace

/// Decades lo_exp .. hi_exp (domain log10), labelled on every decade up to 7 of them, else on
/// every second one.
axis decade_axis(double lo_log, int lo_exp, int hi_exp) {
  axis a;
  a.lo = lo_log;
  a.hi = hi_exp;
  const int every = hi_exp - lo_exp > 7 ? 2 : 1;
  for (int e = lo_exp; e <= hi_exp; ++e) {
    a.ticks.push_back({static_cast<double>(e), (hi_exp - e) % every == 0 ? decade_label(e) : std::string()});
  }
  return a;
}

}  // namespace fxmimo::report::html
