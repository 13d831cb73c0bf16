// Downlink link metrics of cell 0's users (README "The channel and scenario model", Evaluation),
// accumulated over the data phase block by block, so that no figure needs the whole block of
// N symbols in memory.
#pragma once

#include <Eigen/Dense>
#include <complex>
#include <cstdint>
#include <vector>

#include "fxmimo/golden/scenario.hpp"

namespace fxmimo::golden {

/// Per-user metrics of one data phase, then their averages over the users.
struct link_metrics {
  std::vector<std::complex<double>> gain;  ///< g_k = mean(r_k conj(s_k)) / mean|s_k|^2
  std::vector<double> sinr;                ///< |g_k|^2 E|s|^2 / (mean|r_k - g_k s_k|^2 + 1), linear
  std::vector<double> sinr_db;             ///< 10 log10 sinr
  std::vector<double> evm_pct;             ///< 100 sqrt(mean|r_k - g_k s_k|^2 / (|g_k|^2 E|s|^2)), noise excluded
  std::vector<double> evm_db;              ///< 20 log10(evm_pct / 100)
  std::vector<double> rate;                ///< log2(1 + sinr), bit/s/Hz
  double mean_sinr_db = 0.0;               ///< mean over users of sinr_db
  double mean_evm_pct = 0.0;               ///< mean over users of evm_pct
  double sum_rate = 0.0;                   ///< sum over users of rate
};

/// A least-squares fit of a target t = c u + v by g x over samples that arrive in blocks, with
/// the real scale c given only at the end (the DAC block's power calibration is known after its
/// last sample). Fitted: g = sum conj(x) t / sum |x|^2, residual energy sum |t - g x|^2.
/// The sums are kept about provisional gains (the first block's own fits of u and v), so the
/// residual energy is a sum of small terms rather than the difference of two large ones, and it
/// keeps its relative precision down to the double floor (a fit that is exact up to rounding
/// gives a residual of rounding size, not of the target's). Samples are added in order; the
/// result does not depend on how they are split into blocks, beyond the first block.
class streamed_fit {
 public:
  /// Adds n samples u[i * stride], v[i * stride] (v may be nullptr: v = 0) and x[i * stride].
  void add(const std::complex<double>* u, const std::complex<double>* v, const std::complex<double>* x, Eigen::Index n,
           Eigen::Index stride);
  struct result {
    std::complex<double> gain;  ///< g
    double residual = 0.0;      ///< sum |t - g x|^2 (0 when x is all zero: then g = 0, residual = sum |t|^2)
    double target = 0.0;        ///< sum |t|^2
    double regressor = 0.0;     ///< sum |x|^2
    std::uint64_t count = 0;    ///< samples added
  };
  [[nodiscard]] result solve(double c) const;

 private:
  bool started_ = false;
  std::complex<double> gu0_, gv0_;   // provisional gains of u and v on x
  double xx_ = 0, uu_ = 0, vv_ = 0;  // sum |x|^2, |u|^2, |v|^2
  double eu_ = 0, ev_ = 0;           // sum |u - gu0 x|^2, |v - gv0 x|^2
  std::complex<double> uv_, euv_;    // sum u conj(v), sum (u - gu0 x) conj(v - gv0 x)
  std::complex<double> xeu_, xev_;   // sum conj(x) (u - gu0 x), sum conj(x) (v - gv0 x)
  std::uint64_t count_ = 0;
};

/// The link figures of cell 0's users, accumulated over the data blocks: per user k, the
/// received samples r_k = a (c u_k + v_k), u = h^T x the part cell 0 transmits, v the other cells'
/// part, fitted by g_k s_k.
class link_sums {
 public:
  explicit link_sums(Eigen::Index num_users);
  /// Adds a block: own = h^T x (K x B), others (K x B, or empty: one cell), symbols (K x B).
  void add(const Eigen::MatrixXcd& own, const Eigen::MatrixXcd& others, const Eigen::MatrixXcd& symbols);
  /// Metrics of r = amplitude (scale u + v) with the analytic noise power `noise_power`:
  /// single-tap equalisation by the least-squares gain g_k, E|s|^2 = 1 (unit-power
  /// constellations). EVM excludes the noise, so it is the transmit-side error seen at user k
  /// (precoder leakage, inter-cell interference, quantisation), after the ideal one-tap equaliser.
  [[nodiscard]] link_metrics metrics(double amplitude, double scale, double noise_power) const;

 private:
  std::vector<streamed_fit> users_;
};

/// link_sums of one block r (K x N), symbols s: metrics(1, 1, noise_power).
link_metrics measure_link(const Eigen::MatrixXcd& received, const Eigen::MatrixXcd& symbols, double noise_power);

/// Implementation EVM at the DAC after a least-squares complex gain alignment, as an EVM
/// measurement removes gain and phase (3GPP TS 38.104 Annex B, equalisation before the error):
/// min over a of ||a x_fixed - x_golden||_F / ||x_golden||_F, a = <x_fixed, x_golden> / ||x_fixed||^2,
/// accumulated over the data blocks. A pure scaling of the block (e.g. a rounded gain constant)
/// is therefore no error; an all-zero fixed block gives 1 (the whole reference is error).
class alignment_sums {
 public:
  /// Adds a block of the fixed and the golden DAC values (same shape).
  void add(const Eigen::MatrixXcd& x_fixed, const Eigen::MatrixXcd& x_golden);
  [[nodiscard]] double evm() const;
  [[nodiscard]] double fixed_energy() const;   ///< ||x_fixed||^2
  [[nodiscard]] double golden_energy() const;  ///< ||x_golden||^2

 private:
  streamed_fit fit_;
};

/// alignment_sums of one block.
double implementation_evm(const Eigen::MatrixXcd& x_fixed, const Eigen::MatrixXcd& x_golden);

}  // namespace fxmimo::golden
