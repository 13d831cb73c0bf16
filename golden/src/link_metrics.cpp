#include "fxmimo/golden/link_metrics.hpp"

#include <algorithm>
#include <cmath>

namespace fxmimo::golden {

void streamed_fit::add(const std::complex<double>* u, const std::complex<double>* v, const std::complex<double>* x,
                       Eigen::Index n, Eigen::Index stride) {
  const auto v_at = [&](Eigen::Index i) { return v != nullptr ? v[i * stride] : std::complex<double>(); };
  if (!started_ && n > 0) {
    double xx = 0.0;
    std::complex<double> xu, xv;
    for (Eigen::Index i = 0; i < n; ++i) {
      const std::complex<double> xi = x[i * stride];
      xx += std::norm(xi);
      xu += std::conj(xi) * u[i * stride];
      xv += std::conj(xi) * v_at(i);
    }
    if (xx > 0.0) {
      gu0_ = xu / xx;
      gv0_ = xv / xx;
    }
    started_ = true;
  }
  for (Eigen::Index i = 0; i < n; ++i) {
    const std::complex<double> xi = x[i * stride], ui = u[i * stride], vi = v_at(i);
    const std::complex<double> du = ui - gu0_ * xi, dv = vi - gv0_ * xi;
    xx_ += std::norm(xi);
    uu_ += std::norm(ui);
    vv_ += std::norm(vi);
    uv_ += ui * std::conj(vi);
    eu_ += std::norm(du);
    ev_ += std::norm(dv);
    euv_ += du * std::conj(dv);
    xeu_ += std::conj(xi) * du;
    xev_ += std::conj(xi) * dv;
  }
  count_ += static_cast<std::uint64_t>(std::max<Eigen::Index>(n, 0));
}

streamed_fit::result streamed_fit::solve(double c) const {
  result r;
  r.count = count_;
  r.regressor = xx_;
  r.target = c * c * uu_ + 2.0 * c * uv_.real() + vv_;
  if (xx_ == 0.0) {
    r.residual = r.target;
    return r;
  }
  // t - g0 x = c (u - gu0 x) + (v - gv0 x) with g0 = c gu0 + gv0; the fit's correction to g0 is
  // sum conj(x) (t - g0 x) / sum |x|^2, and the residual falls by its square times sum |x|^2.
  const double ee = c * c * eu_ + 2.0 * c * euv_.real() + ev_;
  const std::complex<double> xe = c * xeu_ + xev_;
  r.gain = c * gu0_ + gv0_ + xe / xx_;
  r.residual = std::max(0.0, ee - std::norm(xe) / xx_);
  return r;
}

link_sums::link_sums(Eigen::Index num_users) : users_(static_cast<std::size_t>(std::max<Eigen::Index>(num_users, 0))) {}

void link_sums::add(const Eigen::MatrixXcd& own, const Eigen::MatrixXcd& others, const Eigen::MatrixXcd& symbols) {
  const bool with_others = others.size() > 0;
  for (Eigen::Index k = 0; k < symbols.rows(); ++k) {
    users_[static_cast<std::size_t>(k)].add(&own(k, 0), with_others ? &others(k, 0) : nullptr, &symbols(k, 0),
                                            symbols.cols(), symbols.rows());
  }
}

link_metrics link_sums::metrics(double amplitude, double scale, double noise_power) const {
  link_metrics m;
  for (const streamed_fit& user : users_) {
    const streamed_fit::result f = user.solve(scale);
    const std::complex<double> g = amplitude * f.gain;
    const double error_power = amplitude * amplitude * f.residual / static_cast<double>(f.count);
    const double signal_power = std::norm(g);  // times E|s|^2 = 1
    const double sinr = signal_power / (error_power + noise_power);
    const double evm = std::sqrt(error_power / signal_power);
    m.gain.push_back(g);
    m.sinr.push_back(sinr);
    m.sinr_db.push_back(10.0 * std::log10(sinr));
    m.evm_pct.push_back(100.0 * evm);
    m.evm_db.push_back(20.0 * std::log10(evm));
    m.rate.push_back(std::log2(1.0 + sinr));
    m.mean_sinr_db += m.sinr_db.back();
    m.mean_evm_pct += m.evm_pct.back();
    m.sum_rate += m.rate.back();
  }
  if (!users_.empty()) {
    m.mean_sinr_db /= static_cast<double>(users_.size());
    m.mean_evm_pct /= static_cast<double>(users_.size());
  }
  return m;
}

link_metrics measure_link(const Eigen::MatrixXcd& received, const Eigen::MatrixXcd& symbols, double noise_power) {
  link_sums sums(symbols.rows());
  sums.add(received, Eigen::MatrixXcd(), symbols);
  return sums.metrics(1.0, 1.0, noise_power);
}

void alignment_sums::add(const Eigen::MatrixXcd& x_fixed, const Eigen::MatrixXcd& x_golden) {
  fit_.add(x_golden.data(), nullptr, x_fixed.data(), x_golden.size(), 1);
}

double alignment_sums::evm() const {
  const streamed_fit::result f = fit_.solve(1.0);
  if (f.regressor == 0.0) return 1.0;  // nothing transmitted: the whole reference is error
  return std::sqrt(f.residual / f.target);
}

double alignment_sums::fixed_energy() const { return fit_.solve(1.0).regressor; }
double alignment_sums::golden_energy() const { return fit_.solve(1.0).target; }

double implementation_evm(const Eigen::MatrixXcd& x_fixed, const Eigen::MatrixXcd& x_golden) {
  alignment_sums sums;
  sums.add(x_fixed, x_golden);
  return sums.evm();
}

}  // namespace fxmimo::golden
