// Helpers shared by the golden-model tests: scenario text, Monte-Carlo statistics.
#pragma once

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <functional>
#include <string>
#include <vector>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden::test {

inline scenario make_scenario(const std::string& text) { return parse_scenario_text(text, "test.toml"); }

/// Sample mean and its standard error sqrt(s^2 / n).
struct mean_se {
  double mean = 0.0;
  double se = 0.0;
};

inline mean_se sample_mean(const std::vector<double>& x) {
  const auto n = static_cast<double>(x.size());
  double sum = 0.0;
  for (double v : x) {
    sum += v;
  }
  const double mean = sum / n;
  double ss = 0.0;
  for (double v : x) {
    ss += (v - mean) * (v - mean);
  }
  return {mean, std::sqrt(ss / (n - 1.0) / n)};
}

/// A smooth function f of the means of per-trial sample vectors, with its delete-a-group
/// jackknife standard error (Quenouille 1956; Efron & Stein 1981): the trials are cut into
/// `num_groups` groups, f is recomputed without each group, and
/// se^2 = (G - 1) / G * sum_g (f_g - mean f_g)^2.
inline mean_se jackknife(const std::vector<Eigen::VectorXd>& samples,
                         const std::function<double(const Eigen::VectorXd&)>& f, int num_groups = 20) {
  const auto n = static_cast<int>(samples.size());
  const Eigen::Index dim = samples.front().size();
  Eigen::VectorXd total = Eigen::VectorXd::Zero(dim);
  for (const auto& s : samples) {
    total += s;
  }
  const double estimate = f(total / n);
  std::vector<double> leave_out;
  for (int g = 0; g < num_groups; ++g) {
    const int first = g * n / num_groups;
    const int last = (g + 1) * n / num_groups;
    Eigen::VectorXd part = total;
    for (int i = first; i < last; ++i) {
      part -= samples[static_cast<std::size_t>(i)];
    }
    leave_out.push_back(f(part / (n - (last - first))));
  }
  double mean = 0.0;
  for (double v : leave_out) {
    mean += v;
  }
  mean /= num_groups;
  double ss = 0.0;
  for (double v : leave_out) {
    ss += (v - mean) * (v - mean);
  }
  return {estimate, std::sqrt((num_groups - 1.0) / num_groups * ss)};
}

inline double db_to_linear(double db) { return std::pow(10.0, db / 10.0); }

}  // namespace fxmimo::golden::test
