#include "fxmimo/analysis/tail.hpp"

#include <algorithm>
#include <boost/math/distributions/normal.hpp>
#include <cmath>
#include <functional>
#include <limits>
#include <stdexcept>

namespace fxmimo::analysis {

namespace {

constexpr double max_shape = 2.0;
constexpr double minus_inf = -std::numeric_limits<double>::infinity();

/// GPD log-likelihood of the exceedances y (Coles 2001, eq. 4.10; xi = 0: eq. 4.11).
double log_likelihood(const std::vector<double>& y, double shape, double scale) {
  if (!(scale > 0) || !std::isfinite(scale)) return minus_inf;
  const double k = static_cast<double>(y.size());
  if (shape < 1e-9) {
    double sum = 0;
    for (double v : y) sum += v;
    return -k * std::log(scale) - sum / scale;
  }
  double sum = 0;
  for (double v : y) sum += std::log1p(shape * v / scale);
  return -k * std::log(scale) - (1.0 + 1.0 / shape) * sum;
}

/// The scale maximising the likelihood at a fixed shape: the root of
/// (1 + xi) sum y / (sigma + xi y) = k, whose left side falls with sigma (bisection on log sigma).
double best_scale(const std::vector<double>& y, double shape, double mean) {
  if (shape < 1e-9) return mean;
  const double k = static_cast<double>(y.size());
  double lo = std::log(mean * 1e-9), hi = std::log(2.0 * (1.0 + shape) * mean);
  for (int i = 0; i < 80 && hi - lo > 1e-10; ++i) {
    const double mid = 0.5 * (lo + hi), s = std::exp(mid);
    double f = 0;
    for (double v : y) f += v / (s + shape * v);
    if ((1.0 + shape) * f > k)
      lo = mid;
    else
      hi = mid;
  }
  return std::exp(0.5 * (lo + hi));
}

/// Largest value of f on [0, max_shape] (golden-section search, unimodal f assumed; the end
/// xi = 0 is tried too because the constrained maximum often sits there). Returns {xi, f(xi)}.
std::pair<double, double> maximise_over_shape(const std::function<double(double)>& f) {
  const double g = (std::sqrt(5.0) - 1.0) / 2.0;
  double a = 0.0, b = max_shape;
  double c = b - g * (b - a), d = a + g * (b - a);
  double fc = f(c), fd = f(d);
  while (b - a > 1e-5) {
    if (fc >= fd) {
      b = d;
      d = c;
      fd = fc;
      c = b - g * (b - a);
      fc = f(c);
    } else {
      a = c;
      c = d;
      fc = fd;
      d = a + g * (b - a);
      fd = f(d);
    }
  }
  std::pair<double, double> best = fc >= fd ? std::pair{c, fc} : std::pair{d, fd};
  const double f0 = f(0.0);
  if (f0 >= best.second) best = {0.0, f0};
  return best;
}

/// Exceedance above the threshold of the quantile exceeded with probability p, for the ratio
/// r = (k / n) / p > 1: sigma / xi (r^xi - 1), or sigma ln r at xi = 0 (Coles 2001, eq. 4.13).
double return_level(double shape, double scale, double r) {
  return shape < 1e-9 ? scale * std::log(r) : scale / shape * std::expm1(shape * std::log(r));
}

/// The scale that puts the quantile at exceedance z for a shape (the inverse of return_level).
double scale_for_level(double shape, double z, double r) {
  return shape < 1e-9 ? z / std::log(r) : z * shape / std::expm1(shape * std::log(r));
}

}  // namespace

std::size_t tail_exceedance_count(std::size_t num_values, std::size_t max_exceedances) {
  return std::min(max_exceedances, num_values / 20);
}

std::optional<tail_fit> fit_tail_quantile(std::vector<double> largest, std::size_t num_values, double exceed_prob,
                                          double confidence) {
  if (!(exceed_prob > 0 && exceed_prob < 1)) throw std::invalid_argument("tail fit: probability must lie in (0, 1)");
  if (!(confidence > 0.5 && confidence < 1)) throw std::invalid_argument("tail fit: confidence must lie in (0.5, 1)");
  const std::size_t k = tail_exceedance_count(num_values);
  if (k < 30 || largest.size() < k + 1) return std::nullopt;
  const double r = static_cast<double>(k) / static_cast<double>(num_values) / exceed_prob;
  if (!(r > 1.0)) return std::nullopt;
  // The k+1 largest, largest first: the sums below then run in an order fixed by the values.
  std::partial_sort(largest.begin(), largest.begin() + static_cast<std::ptrdiff_t>(k + 1), largest.end(),
                    std::greater<>());
  const double u = largest[k];
  std::vector<double> y(k);
  double mean = 0;
  std::size_t positive = 0;
  for (std::size_t i = 0; i < k; ++i) {
    y[i] = largest[i] - u;
    mean += y[i];
    if (y[i] > 0) ++positive;
  }
  mean /= static_cast<double>(k);
  // Values piled up at the threshold (a constant node, an exact 1 on a diagonal) have no
  // continuous tail to fit.
  if (positive < 30) return std::nullopt;

  // Named copies, not structured bindings: a lambda below uses them, and C++20 (as clang 14
  // reads it) does not let a lambda capture a structured binding.
  const auto fitted = maximise_over_shape([&](double xi) { return log_likelihood(y, xi, best_scale(y, xi, mean)); });
  const double shape = fitted.first;
  const double best = fitted.second;
  tail_fit out;
  out.num_values = num_values;
  out.num_exceedances = k;
  out.threshold = u;
  out.shape = shape;
  out.scale = best_scale(y, shape, mean);
  out.exceed_prob = exceed_prob;
  out.confidence = confidence;
  const double z_hat = return_level(out.shape, out.scale, r);
  out.quantile = u + z_hat;

  // Profile likelihood of the exceedance z of the quantile; the upper bound is the largest z
  // whose deviance 2 (l_max - l_p(z)) stays within the one-sided critical value
  // (Phi^-1(confidence))^2, the chi-square(1) quantile at 2 confidence - 1.
  const double q = boost::math::quantile(boost::math::normal(), confidence);
  const double critical = q * q;
  auto deviance = [&](double z) {
    const double lp =
        maximise_over_shape([&](double xi) { return log_likelihood(y, xi, scale_for_level(xi, z, r)); }).second;
    return 2.0 * (best - lp);
  };
  double lo = z_hat, hi = 2.0 * z_hat;
  for (int i = 0; i < 200 && deviance(hi) <= critical; ++i) {
    lo = hi;
    hi *= 2.0;
  }
  while (hi - lo > 1e-6 * hi) {
    const double mid = 0.5 * (lo + hi);
    if (deviance(mid) <= critical)
      lo = mid;
    else
      hi = mid;
  }
  out.upper_bound = u + hi;
  return out;
}

}  // namespace fxmimo::analysis
