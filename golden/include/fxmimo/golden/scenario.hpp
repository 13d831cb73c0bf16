// The scenario: array, cells and users, channel model, pilots, estimator, precoder, data and
// front-end settings, read from TOML. Schema and ranges: README, "The channel and scenario model".
#pragma once

#include <cstdint>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

namespace fxmimo::golden {

/// A scenario file that cannot be used. what() is one line "FILE:LINE: KEY: message", with KEY
/// the dotted key (e.g. "pilots.length") and LINE the line of the offending key or value.
class scenario_error : public std::runtime_error {
 public:
  scenario_error(std::string file_name, int line_number, std::string key_name, const std::string& message);

  std::string file;  ///< source name given to the parser (file path or a label)
  int line;          ///< 1-based line of the offending key or value (0 when unknown)
  std::string key;   ///< dotted key path, e.g. "cells.users_per_cell"
};

enum class array_layout { ula, upa };
enum class gain_source { hexagonal, per_user, explicit_matrix };
enum class channel_model { rayleigh, correlated, rician };
enum class pilot_sequence { dft, walsh };
enum class estimator_kind { ls, mmse, perfect };
enum class precoder_kind { mf, zf, rzf };
enum class inversion_kind { ldl, neumann, reference, cholesky, gauss_seidel };
enum class power_normalization { total, per_antenna };
enum class modulation { qpsk, qam16, qam64, qam256, qam1024 };
enum class combiner_kind { mrc, zf, mmse };

/// The base-station array (the same at every cell).
struct array_config {
  int num_antennas = 0;                     ///< M, 1..4096
  array_layout layout = array_layout::ula;  ///< uniform linear or uniform planar
  double spacing = 0.5;                     ///< element spacing in wavelengths
  int num_columns = 0;                      ///< UPA: elements per row (divides M); ULA: M
};

/// Cells, users and the large-scale gains beta^j_{lk} (BS j to user k of cell l, linear power,
/// normalised so that a user at the cell radius without shadowing has gain 1 = 0 dB).
struct cells_config {
  int num_cells = 1;                            ///< L; hexagonal: 1, 3, 7 or 19
  int num_users = 0;                            ///< K users per cell
  gain_source source = gain_source::hexagonal;  ///< how the gains are obtained
  double radius_m = 500.0;                      ///< hexagon circumradius (hexagonal)
  double min_distance_m = 35.0;                 ///< minimum user–BS distance (hexagonal)
  double pathloss_exponent = 3.76;              ///< alpha (hexagonal; common practice default)
  double shadowing_db = 8.0;                    ///< log-normal shadowing std (hexagonal; common practice)
  std::vector<double> user_gains_db;            ///< per_user: own-BS gain of user k, every cell
  double cross_gain_db = 0.0;                   ///< per_user: gain from every other BS
  std::vector<double> gains_db;                 ///< explicit: flattened [bs][cell][user]
};

/// Small-scale fading.
struct channel_config {
  channel_model model = channel_model::rayleigh;
  double correlation = 0.0;  ///< exponential correlation coefficient r (Loyka 2001), 0 <= r < 1
  double k_factor_db = 0.0;  ///< Rician K-factor in dB
};

/// Uplink pilots.
struct pilot_config {
  int length = 0;                                 ///< tau_p >= reuse * K
  pilot_sequence sequence = pilot_sequence::dft;  ///< DFT (unit modulus) or Walsh–Hadamard (+-1)
  double snr_db = 0.0;                            ///< rho_p per pilot symbol at unit gain, dB
  int reuse = 1;                                  ///< pilot reuse factor 1, 3 or 7
};

struct estimator_config {
  estimator_kind kind = estimator_kind::mmse;
};

struct precoder_config {
  precoder_kind kind = precoder_kind::zf;
  inversion_kind inversion = inversion_kind::ldl;
  int neumann_terms = 3;         ///< T, 1..64
  int gauss_seidel_sweeps = 2;   ///< S, 1..64 (inversion = gauss_seidel)
  bool has_regularizer = false;  ///< false: RZF uses K / rho_d
  double regularizer = 0.0;      ///< RZF diagonal loading when has_regularizer
  power_normalization normalization = power_normalization::total;
};

struct data_config {
  modulation mod = modulation::qam16;
  int num_symbols = 168;  ///< N per block
  double snr_db = 0.0;    ///< rho_d: total radiated power over noise at unit gain, dB
};

struct frontend_config {
  double agc_backoff_db = 12.0;  ///< expected pilot RMS at the ADC below full scale 1.0, dB
  double dac_backoff_db = 12.0;  ///< per-antenna transmit RMS below full scale 1.0, dB
};

/// The uplink data phase (`[uplink]`, optional): every user of every cell sends N_ul QAM
/// symbols through the same small-scale channels as its pilots, and cell 0's base station
/// combines, equalises and demaps them (README "The uplink").
struct uplink_config {
  bool on = false;
  double snr_db = 0.0;                          ///< rho_ul: each user's transmit power over noise at unit gain, dB
  modulation mod = modulation::qam16;           ///< the users' constellation
  int num_symbols = 168;                        ///< N_ul per coherence block, 1..4096
  combiner_kind combiner = combiner_kind::mrc;  ///< mrc: H_hat^H y; zf, mmse: an inverse times that
  /// zf, mmse: false reuses the downlink's Gram inverse (one inverse per block); true gives the
  /// uplink its own Gram (loaded with 1 / rho_ul for mmse) and LDL^H inverse, nodes ul_gram ..
  /// ul_inv_out, whatever the precoder is (`inverse = "own"`).
  bool own_inverse = false;
  /// The loading of the Gram the combiner inverts: 1 / rho_ul for mmse, else 0.
  [[nodiscard]] double loading(double rho_ul) const { return combiner == combiner_kind::mmse ? 1.0 / rho_ul : 0.0; }
};

/// How a divide or root node is built (`[units.NODE]`): the exact unit (the result rounded once,
/// fixedpoint/divide.hpp) or a table + Newton-Raphson unit (fixedpoint/newton.hpp) with a seed
/// ROM of 2^seed_bits entries and `steps` iterations.
struct unit_choice {
  bool newton = false;
  int seed_bits = 6;
  int steps = 2;
  /// "exact" or "newton a=6 n=2": how reports name the choice.
  [[nodiscard]] std::string label() const;
  friend bool operator==(const unit_choice&, const unit_choice&) = default;
};

/// Other ways to build a divide or root node that `tune` compares with the table's own
/// (`alternatives = [{ kind = "exact" }, ...]` in `[units.NODE]`); run, sweep and the rest use the
/// table's own.
struct unit_alternatives {
  std::string node;  ///< "inv_diag_recip", "norm" or "chol_diag_rsqrt"
  std::vector<unit_choice> choices;
};

/// The divide and root units of the datapath.
struct units_config {
  unit_choice inv_diag_recip;                   ///< 1 / d_j (LDL^H) or 1 / G_jj (Neumann, Gauss-Seidel): a reciprocal
  unit_choice norm;                             ///< 1 / sqrt(power_acc): a reciprocal square root
  unit_choice chol_diag_rsqrt;                  ///< 1 / sqrt(r_j) of the Cholesky diagonal: a reciprocal square root
  std::vector<unit_alternatives> alternatives;  ///< per node that lists any, in file order
  /// The node's choice by its [units] name; throws std::invalid_argument for another name.
  [[nodiscard]] unit_choice& of(std::string_view node);
  [[nodiscard]] const unit_choice& of(std::string_view node) const;
};

/// Block floating point on a node (`[block_float.NODE]`): each block of the node's words shares
/// one exponent e = top - u, u the block's leading-sign count (an unsigned word, a node of its
/// own); the words are mantissas in [-1, 1) and the node's value is mantissa x 2^e.
struct block_float_choice {
  bool on = false;
  int top = 0;  ///< the largest exponent (u = 0): values of magnitude up to 2^top
};

/// The nodes that may carry a block exponent.
struct block_float_config {
  block_float_choice chan_est;  ///< one exponent per user column of the channel estimate
  block_float_choice precoder;  ///< one exponent for the whole precoder W (power normalisation cancels it)
};

/// One parsed and validated scenario.
struct scenario {
  std::string name;
  std::string source_name;
  std::uint64_t seed = 0;
  int num_trials = 1;
  array_config array;
  cells_config cells;
  channel_config channel;
  pilot_config pilots;
  estimator_config estimator;
  precoder_config precoder;
  data_config data;
  frontend_config frontend;
  units_config units;
  block_float_config block_float;
  uplink_config uplink;

  /// rho_p in linear units.
  double pilot_snr() const;
  /// rho_d in linear units.
  double downlink_snr() const;
  /// rho_ul in linear units.
  double uplink_snr() const;
  /// Regulariser actually used by RZF: the given one, else K / rho_d.
  double rzf_regularizer() const;
  /// Pilot group (0 .. reuse-1) of cell `i_cell`: cells of one group share a pilot set.
  int pilot_group(int i_cell) const;
};

/// The scenario text with each [units.NODE] table that lists alternatives set to `units`' choice
/// for that node: its kind, seed_bits and steps lines replaced by the choice's (right after the
/// table's header), every other line (the alternatives too) kept as it was.
std::string scenario_with_units(const std::string& text, const units_config& units);

/// Parses and validates TOML text. Unknown keys are errors, except inside the top-level table
/// `nodes` (the datapath formats, read by fxmimo::datapath), which is skipped entirely.
/// Throws scenario_error naming `source_name`, line and key.
scenario parse_scenario_text(std::string_view toml_text, std::string source_name);

/// Reads and parses a scenario file; errors name `path`.
scenario load_scenario_file(const std::string& path);

/// Name used in files for a modulation ("qpsk", "16qam", ...).
std::string_view modulation_name(modulation mod);
/// Name used in files for a combiner ("mrc", "zf", "mmse").
std::string_view combiner_name(combiner_kind kind);

}  // namespace fxmimo::golden
