#include "fxmimo/golden/uplink.hpp"

#include <bit>
#include <cmath>

#include "fxmimo/golden/estimator.hpp"
#include "fxmimo/golden/ldl.hpp"
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/golden/qam.hpp"
#include "fxmimo/golden/rng.hpp"

namespace fxmimo::golden {

namespace {

/// A constant mixed into the trial's seed for the uplink stream ("uplink" in ASCII).
constexpr std::uint64_t uplink_stream_salt = 0x75706c696e6bULL;

}  // namespace

double uplink_metrics::ber() const {
  const double n = static_cast<double>(bits) * static_cast<double>(bit_errors.size());
  return n > 0 ? static_cast<double>(total_bit_errors) / n : 0.0;
}

Eigen::VectorXd uplink_scales(const scenario& scen, const Eigen::MatrixXcd& chan_est, const Eigen::MatrixXcd& inverse,
                              double agc_ul) {
  const int num_users = scen.cells.num_users;
  const double base = agc_ul * std::sqrt(scen.uplink_snr()) * qam_step(scen.uplink.mod);
  Eigen::VectorXd c(num_users);
  for (int k = 0; k < num_users; ++k) {
    double a = 1.0;
    if (scen.uplink.combiner == combiner_kind::mrc) {
      a = chan_est.col(k).squaredNorm();
    } else if (scen.uplink.combiner == combiner_kind::mmse) {
      a = 1.0 - inverse(k, k).real() / scen.uplink_snr();
    }
    c(k) = 1.0 / (base * a);
  }
  return c;
}

const Eigen::MatrixXcd& combiner_inverse(const scenario& scen, const trial_data& trial, const uplink_data& ul) {
  return scen.uplink.own_inverse ? ul.inverse : trial.inverse;
}

uplink_metrics measure_uplink(modulation mod, const Eigen::MatrixXcd& equalised_grid, const Eigen::MatrixXcd& symbols,
                              const label_matrix& labels) {
  const Eigen::Index num_users = symbols.rows();
  const Eigen::Index n = symbols.cols();
  const double step = qam_step(mod);
  const int b = bits_per_symbol(mod);
  uplink_metrics out;
  out.bits = static_cast<std::uint64_t>(n) * static_cast<std::uint64_t>(b);
  for (Eigen::Index k = 0; k < num_users; ++k) {
    // One-tap least-squares fit of r = step x by g s (3GPP TS 38.104 Annex B: equalise, then
    // measure the error); E|s|^2 taken over the sent symbols.
    std::complex<double> sr = 0;
    double ss = 0;
    for (Eigen::Index i = 0; i < n; ++i) {
      sr += std::conj(symbols(k, i)) * step * equalised_grid(k, i);
      ss += std::norm(symbols(k, i));
    }
    const std::complex<double> g = ss > 0 ? sr / ss : 0.0;
    double err = 0;
    std::uint64_t errors = 0;
    for (Eigen::Index i = 0; i < n; ++i) {
      const std::complex<double> r = step * equalised_grid(k, i);
      err += std::norm(r - g * symbols(k, i));
      const std::uint32_t decided = qam_demap(mod, r);
      errors += static_cast<std::uint64_t>(std::popcount(decided ^ labels(k, i)));
    }
    const double signal = std::norm(g) * ss;
    const double sinr = err > 0 ? signal / err : HUGE_VAL;
    out.sinr.push_back(sinr);
    out.sinr_db.push_back(10.0 * std::log10(sinr));
    out.evm_pct.push_back(signal > 0 ? 100.0 * std::sqrt(err / signal) : 100.0);
    out.bit_errors.push_back(errors);
    out.total_bit_errors += errors;
    out.mean_sinr_db += out.sinr_db.back() / static_cast<double>(num_users);
    out.mean_evm_pct += out.evm_pct.back() / static_cast<double>(num_users);
  }
  return out;
}

Eigen::MatrixXd uplink_distances(modulation mod, const Eigen::MatrixXcd& equalised_grid) {
  const int b = bits_per_symbol(mod);
  Eigen::MatrixXd d(equalised_grid.rows(), equalised_grid.cols() * b);
  std::vector<double> one(static_cast<std::size_t>(b));
  for (Eigen::Index k = 0; k < equalised_grid.rows(); ++k) {
    for (Eigen::Index i = 0; i < equalised_grid.cols(); ++i) {
      maxlog_distances(mod, equalised_grid(k, i), one.data());
      for (int t = 0; t < b; ++t) d(k, i * b + t) = one[static_cast<std::size_t>(t)];
    }
  }
  return d;
}

uplink_data run_uplink(const scenario& scen, const trial_data& trial,
                       const std::vector<Eigen::MatrixXcd>& channels_bs0) {
  const uplink_config& cfg = scen.uplink;
  const int num_users = scen.cells.num_users;
  const int num_ant = scen.array.num_antennas;
  const int n = cfg.num_symbols;
  const std::uint64_t num_labels = std::uint64_t{1} << bits_per_symbol(cfg.mod);
  random_stream rng(trial_seed(trial.seed, uplink_stream_salt));

  uplink_data ul;
  const double amplitude = std::sqrt(scen.uplink_snr());
  Eigen::MatrixXcd y = Eigen::MatrixXcd::Zero(num_ant, n);
  for (std::size_t l = 0; l < channels_bs0.size(); ++l) {
    label_matrix labels(num_users, n);
    Eigen::MatrixXcd s(num_users, n);
    for (int k = 0; k < num_users; ++k) {
      for (int i = 0; i < n; ++i) {
        labels(k, i) = static_cast<std::uint32_t>(rng.uniform_below(num_labels));
        s(k, i) = qam_map(cfg.mod, labels(k, i));
      }
    }
    y.noalias() += amplitude * channels_bs0[l] * s;
    if (l == 0) {
      ul.labels = std::move(labels);
      ul.symbols = std::move(s);
    }
  }
  for (int i = 0; i < n; ++i)
    for (int m = 0; m < num_ant; ++m) y(m, i) += rng.complex_normal();

  ul.agc_gain = agc_gain_at(scen, trial.gains, 0, scen.uplink_snr());
  ul.adc = ul.agc_gain * y;
  ul.match.noalias() = trial.chan_est.adjoint() * ul.adc;
  if (cfg.own_inverse) {
    ul.gram = gram_matrix(trial.chan_est);
    ul.gram.diagonal().array() += cfg.loading(scen.uplink_snr());
    ul.ldl = ldl_decompose(ul.gram);
    ul.inverse = ldl_inverse(*ul.ldl);
  }
  const Eigen::MatrixXcd& inverse = combiner_inverse(scen, trial, ul);
  if (cfg.combiner != combiner_kind::mrc) ul.combined.noalias() = inverse * ul.match;
  ul.scale = uplink_scales(scen, trial.chan_est, inverse, ul.agc_gain);
  ul.equalised = ul.scale.asDiagonal() * (cfg.combiner == combiner_kind::mrc ? ul.match : ul.combined);
  ul.distances = uplink_distances(cfg.mod, ul.equalised);
  ul.metrics = measure_uplink(cfg.mod, ul.equalised, ul.symbols, ul.labels);
  return ul;
}

}  // namespace fxmimo::golden
