// The golden value of every node, shaped like its words (datapath.hpp).
#include "fxmimo/golden/precoder.hpp"
#include "fxmimo/harness/datapath.hpp"

namespace fxmimo::harness {

namespace {

Eigen::MatrixXcd column(const Eigen::VectorXd& v) { return v.cast<std::complex<double>>(); }

}  // namespace

std::array<Eigen::MatrixXcd, num_nodes> golden_node_values(const golden::scenario& scen,
                                                           const golden::trial_data& trial) {
  std::array<Eigen::MatrixXcd, num_nodes> out;
  auto set = [&](node_id id, Eigen::MatrixXcd m) { out[index_of(id)] = std::move(m); };
  set(node_id::adc, trial.adc);
  set(node_id::pilot_rom, trial.pilots);
  set(node_id::pilot_acc, trial.pilot_acc);
  set(node_id::est_scale, column(trial.est_scale));
  set(node_id::chan_est, trial.chan_est);
  const int num_users = static_cast<int>(trial.chan_est.cols());
  const Eigen::MatrixXcd identity = Eigen::MatrixXcd::Identity(num_users, num_users);
  if (scen.precoder.kind != golden::precoder_kind::mf) {
    set(node_id::gram, trial.gram);
    set(node_id::inv_out, trial.inverse);
    if (scen.precoder.inversion == golden::inversion_kind::neumann) {
      const Eigen::VectorXd recip = trial.gram.diagonal().real().cwiseInverse();
      set(node_id::inv_diag_recip, column(recip));
      const Eigen::MatrixXcd b = identity - recip.cast<std::complex<double>>().asDiagonal() * trial.gram;
      set(node_id::inv_iter, b);
      const int num_extra = scen.precoder.neumann_terms - 1;
      if (num_extra > 0) {
        Eigen::MatrixXcd terms(num_users, num_users * num_extra);
        Eigen::MatrixXcd term = recip.cast<std::complex<double>>().asDiagonal();
        for (int n = 1; n <= num_extra; ++n) {
          term = b * term;
          terms.middleCols((n - 1) * num_users, num_users) = term;
        }
        set(node_id::inv_term, terms);
      }
    } else {
      // The reference inversion is realised by LDL^H in the fixed datapath: compare against the
      // golden factors of the same Gram matrix.
      const golden::ldl_factors f = trial.ldl ? *trial.ldl : golden::ldl_decompose(trial.gram);
      Eigen::MatrixXcd acc = Eigen::MatrixXcd::Zero(num_users, num_users);
      Eigen::MatrixXcd strict = Eigen::MatrixXcd::Zero(num_users, num_users);
      for (int j = 0; j < num_users; ++j) {
        acc(j, j) = f.diag(j);
        for (int i = j + 1; i < num_users; ++i) {
          acc(i, j) = f.unit_lower(i, j) * f.diag(j);
          strict(i, j) = f.unit_lower(i, j);
        }
      }
      set(node_id::ldl_acc, acc);
      set(node_id::inv_diag_recip, column(f.diag.cwiseInverse()));
      set(node_id::inv_factor, strict);
      set(node_id::inv_fwd, f.unit_lower.triangularView<Eigen::UnitLower>().solve(identity));
    }
  }
  set(node_id::precoder, trial.precoder);
  const bool per_antenna = scen.precoder.normalization == golden::power_normalization::per_antenna;
  const double p_dig = golden::digital_power(scen);
  const double gain = std::sqrt(per_antenna ? p_dig / scen.array.num_antennas : p_dig);
  Eigen::VectorXd power = per_antenna ? Eigen::VectorXd(trial.precoder.rowwise().squaredNorm())
                                      : Eigen::VectorXd::Constant(1, trial.precoder.squaredNorm());
  set(node_id::power_acc, column(power));
  set(node_id::norm, column(power.cwiseSqrt().cwiseInverse()));
  set(node_id::tx_gain, Eigen::MatrixXcd::Constant(1, 1, gain));
  set(node_id::weights, trial.weights);
  set(node_id::symbols, trial.symbols);
  set(node_id::tx_acc, trial.tx);
  set(node_id::dac, trial.tx);
  return out;
}

}  // namespace fxmimo::harness
