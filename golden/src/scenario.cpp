#include "fxmimo/golden/scenario.hpp"

#include <fmt/format.h>
#include <toml++/toml.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <fstream>
#include <functional>
#include <initializer_list>
#include <limits>
#include <optional>
#include <sstream>
#include <utility>

#include "fxmimo/golden/checked_table.hpp"
#include "fxmimo/golden/large_scale.hpp"

namespace fxmimo::golden {

scenario_error::scenario_error(std::string file_name, int line_number, std::string key_name, const std::string& message)
    : std::runtime_error(fmt::format("{}:{}: {}: {}", file_name, line_number, key_name, message)),
      file(std::move(file_name)),
      line(line_number),
      key(std::move(key_name)) {}

double scenario::pilot_snr() const { return std::pow(10.0, pilots.snr_db / 10.0); }
double scenario::downlink_snr() const { return std::pow(10.0, data.snr_db / 10.0); }
double scenario::uplink_snr() const { return std::pow(10.0, uplink.snr_db / 10.0); }
double scenario::rzf_regularizer() const {
  return precoder.has_regularizer ? precoder.regularizer : cells.num_users / downlink_snr();
}
int scenario::pilot_group(int i_cell) const {
  if (pilots.reuse == 1) {
    return 0;
  }
  if (cells.source == gain_source::hexagonal) {
    return hex_pilot_group(i_cell, pilots.reuse);
  }
  return i_cell % pilots.reuse;
}

std::string_view combiner_name(combiner_kind kind) {
  switch (kind) {
    case combiner_kind::mrc: return "mrc";
    case combiner_kind::zf: return "zf";
    case combiner_kind::mmse: return "mmse";
  }
  return "mrc";
}

std::string_view modulation_name(modulation mod) {
  switch (mod) {
    case modulation::qpsk: return "qpsk";
    case modulation::qam16: return "16qam";
    case modulation::qam64: return "64qam";
    case modulation::qam256: return "256qam";
    case modulation::qam1024: return "1024qam";
  }
  return "?";
}

namespace {

std::string one_line(std::string_view text) {
  std::string out(text);
  std::replace(out.begin(), out.end(), '\n', ' ');
  std::replace(out.begin(), out.end(), '\r', ' ');
  return out;
}

// Reads a flat array of numbers within [lo, hi], failing at the offending element's line.
std::vector<double> number_list(const checked_table& reader, std::string_view name, const toml::node& node, double lo,
                                double hi) {
  if (!node.is_array()) {
    reader.fail(name, "expected an array of numbers");
  }
  std::vector<double> values;
  for (const toml::node& element : *node.as_array()) {
    const std::optional<double> value = checked_table::number_of(element);
    if (!value || !(*value >= lo && *value <= hi)) {
      throw scenario_error(reader.file(), std::max(line_of(element.source()), 1), reader.key(name),
                           fmt::format("every element must be a number in [{}, {}]", lo, hi));
    }
    values.push_back(*value);
  }
  return values;
}

constexpr double gain_db_lo = -300.0;
constexpr double gain_db_hi = 100.0;

void read_array(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "array"), "array");
  r.only({"antennas", "layout", "spacing", "columns"});
  if (!root.has("array")) {
    root.fail("array", "missing required table [array]");
  }
  scen.array.num_antennas = static_cast<int>(r.required("antennas", r.integer("antennas", 1, 4096)));
  scen.array.layout = r.choice<array_layout>("layout", {{"ula", array_layout::ula}, {"upa", array_layout::upa}})
                          .value_or(array_layout::ula);
  scen.array.spacing = r.number("spacing", 1e-3, 100.0).value_or(0.5);
  if (scen.array.layout == array_layout::upa) {
    const int columns = static_cast<int>(r.required("columns", r.integer("columns", 1, 4096)));
    if (scen.array.num_antennas % columns != 0) {
      r.fail("columns", fmt::format("{} columns do not divide {} antennas", columns, scen.array.num_antennas));
    }
    scen.array.num_columns = columns;
  } else {
    if (r.has("columns")) {
      r.fail("columns", "only used with layout = \"upa\"");
    }
    scen.array.num_columns = scen.array.num_antennas;
  }
}

void read_cells(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "cells"), "cells");
  r.only({"count", "users_per_cell", "radius_m", "min_distance_m", "pathloss_exponent", "shadowing_db", "user_gains_db",
          "cross_gain_db", "gains_db"});
  cells_config& cells = scen.cells;
  const bool explicit_matrix = r.has("gains_db");
  const bool per_user = r.has("user_gains_db");
  if (explicit_matrix && per_user) {
    r.fail("user_gains_db", "give either gains_db or user_gains_db, not both");
  }
  const std::optional<std::int64_t> users = r.integer("users_per_cell", 1, 1024);
  const std::optional<std::int64_t> count = r.integer("count", 1, 64);

  auto reject_geometry = [&r](std::string_view why) {
    for (std::string_view name : {"radius_m", "min_distance_m", "pathloss_exponent", "shadowing_db"}) {
      if (r.has(name)) {
        r.fail(name, fmt::format("has no effect with {}", why));
      }
    }
  };

  if (explicit_matrix) {
    cells.source = gain_source::explicit_matrix;
    reject_geometry("gains_db");
    if (r.has("cross_gain_db")) {
      r.fail("cross_gain_db", "only used with user_gains_db");
    }
    // gains_db = [[[bs 0 -> cell 0 users], [bs 0 -> cell 1 users], ...], [bs 1 ...], ...]
    const toml::node& node = *r.table().get("gains_db");
    const toml::array* outer = node.as_array();
    if (outer == nullptr || outer->empty()) {
      r.fail("gains_db", "expected a non-empty array [bs][cell][user] of gains in dB");
    }
    const auto num_cells = static_cast<int>(outer->size());
    if (num_cells > 64) {
      r.fail("gains_db", "at most 64 cells");
    }
    int num_users = -1;
    for (const toml::node& bs_node : *outer) {
      const toml::array* per_bs = bs_node.as_array();
      if (per_bs == nullptr || static_cast<int>(per_bs->size()) != num_cells) {
        throw scenario_error(root.file(), std::max(line_of(bs_node.source()), 1), "cells.gains_db",
                             fmt::format("each base station needs a list of {} cells", num_cells));
      }
      for (const toml::node& cell_node : *per_bs) {
        const std::vector<double> row = number_list(r, "gains_db", cell_node, gain_db_lo, gain_db_hi);
        if (num_users < 0) {
          num_users = static_cast<int>(row.size());
        }
        if (row.empty() || static_cast<int>(row.size()) != num_users || num_users > 1024) {
          throw scenario_error(root.file(), std::max(line_of(cell_node.source()), 1), "cells.gains_db",
                               "every cell needs the same number (1..1024) of user gains");
        }
        cells.gains_db.insert(cells.gains_db.end(), row.begin(), row.end());
      }
    }
    if (count && *count != num_cells) {
      r.fail("count", fmt::format("count = {} but gains_db describes {} cells", *count, num_cells));
    }
    if (users && *users != num_users) {
      r.fail("users_per_cell",
             fmt::format("users_per_cell = {} but gains_db has {} users per cell", *users, num_users));
    }
    cells.num_cells = num_cells;
    cells.num_users = num_users;
    return;
  }

  cells.num_users = static_cast<int>(r.required("users_per_cell", users));
  cells.num_cells = static_cast<int>(count.value_or(1));

  if (per_user) {
    cells.source = gain_source::per_user;
    reject_geometry("user_gains_db");
    cells.user_gains_db = number_list(r, "user_gains_db", *r.table().get("user_gains_db"), gain_db_lo, gain_db_hi);
    if (static_cast<int>(cells.user_gains_db.size()) != cells.num_users) {
      r.fail("user_gains_db",
             fmt::format("needs {} values (users_per_cell), got {}", cells.num_users, cells.user_gains_db.size()));
    }
    if (cells.num_cells > 1) {
      cells.cross_gain_db = r.required("cross_gain_db", r.number("cross_gain_db", gain_db_lo, gain_db_hi));
    } else if (r.has("cross_gain_db")) {
      r.fail("cross_gain_db", "has no effect with a single cell");
    }
    return;
  }

  cells.source = gain_source::hexagonal;
  if (r.has("cross_gain_db")) {
    r.fail("cross_gain_db", "only used with user_gains_db");
  }
  if (cells.num_cells != 1 && cells.num_cells != 3 && cells.num_cells != 7 && cells.num_cells != 19) {
    r.fail("count", fmt::format("the hexagonal layout has 1, 3, 7 or 19 cells, not {}", cells.num_cells));
  }
  cells.radius_m = r.number("radius_m", 1.0, 1e5).value_or(500.0);
  cells.min_distance_m = r.number("min_distance_m", 0.0, 1e5).value_or(std::min(35.0, 0.5 * cells.radius_m));
  if (cells.min_distance_m >= 0.5 * std::sqrt(3.0) * cells.radius_m) {
    r.fail("min_distance_m", fmt::format("{} m leaves no room in a hexagon of radius {} m (must be below {:.6g} m)",
                                         cells.min_distance_m, cells.radius_m, 0.5 * std::sqrt(3.0) * cells.radius_m));
  }
  cells.pathloss_exponent = r.number("pathloss_exponent", 1.0, 8.0).value_or(3.76);
  cells.shadowing_db = r.number("shadowing_db", 0.0, 20.0).value_or(8.0);
}

void read_channel(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "channel"), "channel");
  r.only({"model", "correlation", "k_factor_db"});
  channel_config& ch = scen.channel;
  ch.model = r.choice<channel_model>("model", {{"rayleigh", channel_model::rayleigh},
                                               {"correlated", channel_model::correlated},
                                               {"rician", channel_model::rician}})
                 .value_or(channel_model::rayleigh);
  if (ch.model == channel_model::correlated) {
    ch.correlation = r.required("correlation", r.number("correlation", 0.0, 0.999999));
  } else if (r.has("correlation")) {
    r.fail("correlation", "only used with model = \"correlated\"");
  }
  if (ch.model == channel_model::rician) {
    ch.k_factor_db = r.required("k_factor_db", r.number("k_factor_db", -40.0, 40.0));
  } else if (r.has("k_factor_db")) {
    r.fail("k_factor_db", "only used with model = \"rician\"");
  }
}

void read_pilots(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "pilots"), "pilots");
  r.only({"length", "sequence", "snr_db", "reuse"});
  pilot_config& p = scen.pilots;
  if (!root.has("pilots")) {
    root.fail("pilots", "missing required table [pilots] (at least snr_db)");
  }
  p.sequence = r.choice<pilot_sequence>("sequence", {{"dft", pilot_sequence::dft}, {"walsh", pilot_sequence::walsh}})
                   .value_or(pilot_sequence::dft);
  p.snr_db = r.required("snr_db", r.number("snr_db", -50.0, 80.0));
  p.reuse = static_cast<int>(r.integer("reuse", 1, 7).value_or(1));
  if (p.reuse != 1 && p.reuse != 3 && p.reuse != 7) {
    r.fail("reuse", fmt::format("reuse factor must be 1, 3 or 7, not {}", p.reuse));
  }
  const int num_cells = scen.cells.num_cells;
  if (p.reuse > num_cells) {
    r.fail("reuse", fmt::format("reuse {} needs at least {} cells, the scenario has {}", p.reuse, p.reuse, num_cells));
  }
  const int needed = p.reuse * scen.cells.num_users;
  int default_length = needed;
  if (p.sequence == pilot_sequence::walsh) {
    default_length = 1;
    while (default_length < needed) {
      default_length *= 2;
    }
  }
  p.length = static_cast<int>(r.integer("length", 1, 8192).value_or(default_length));
  if (p.length < needed) {
    r.fail("length", fmt::format("{} orthogonal pilots needed (users_per_cell {} x reuse {}) but length is {}", needed,
                                 scen.cells.num_users, p.reuse, p.length));
  }
  if (p.sequence == pilot_sequence::walsh && (p.length & (p.length - 1)) != 0) {
    r.fail("length", fmt::format("Walsh–Hadamard sequences need a power-of-two length, not {}", p.length));
  }
}

void read_estimator(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "estimator"), "estimator");
  r.only({"kind"});
  scen.estimator.kind =
      r.choice<estimator_kind>(
           "kind", {{"ls", estimator_kind::ls}, {"mmse", estimator_kind::mmse}, {"perfect", estimator_kind::perfect}})
          .value_or(estimator_kind::mmse);
}

void read_precoder(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "precoder"), "precoder");
  r.only({"kind", "inversion", "neumann_terms", "sweeps", "regularizer", "normalization"});
  precoder_config& pc = scen.precoder;
  pc.kind = r.choice<precoder_kind>("kind",
                                    {{"mf", precoder_kind::mf}, {"zf", precoder_kind::zf}, {"rzf", precoder_kind::rzf}})
                .value_or(precoder_kind::zf);
  if (pc.kind == precoder_kind::mf) {
    for (std::string_view name : {"inversion", "neumann_terms", "sweeps", "regularizer"}) {
      if (r.has(name)) {
        r.fail(name, "has no effect with kind = \"mf\"");
      }
    }
  }
  pc.inversion = r.choice<inversion_kind>("inversion", {{"ldl", inversion_kind::ldl},
                                                        {"neumann", inversion_kind::neumann},
                                                        {"reference", inversion_kind::reference},
                                                        {"cholesky", inversion_kind::cholesky},
                                                        {"gauss_seidel", inversion_kind::gauss_seidel}})
                     .value_or(inversion_kind::ldl);
  if (pc.inversion == inversion_kind::neumann) {
    pc.neumann_terms = static_cast<int>(r.integer("neumann_terms", 1, 64).value_or(3));
  } else if (r.has("neumann_terms")) {
    r.fail("neumann_terms", "only used with inversion = \"neumann\"");
  }
  if (pc.inversion == inversion_kind::gauss_seidel) {
    pc.gauss_seidel_sweeps = static_cast<int>(r.integer("sweeps", 1, 64).value_or(2));
  } else if (r.has("sweeps")) {
    r.fail("sweeps", "only used with inversion = \"gauss_seidel\"");
  }
  if (r.has("regularizer")) {
    if (pc.kind != precoder_kind::rzf) {
      r.fail("regularizer", "only used with kind = \"rzf\"");
    }
    pc.has_regularizer = true;
    pc.regularizer = *r.number("regularizer", 1e-12, 1e9);
  }
  pc.normalization = r.choice<power_normalization>("normalization", {{"total", power_normalization::total},
                                                                     {"per_antenna", power_normalization::per_antenna}})
                         .value_or(power_normalization::total);
  if (pc.kind == precoder_kind::zf && scen.cells.num_users > scen.array.num_antennas) {
    const checked_table cells(root.file(), sub_table(root, "cells"), "cells");
    cells.fail("users_per_cell", fmt::format("zero forcing needs users_per_cell ({}) <= array.antennas ({})",
                                             scen.cells.num_users, scen.array.num_antennas));
  }
}

modulation read_modulation(const checked_table& r) {
  return r
      .choice<modulation>("modulation", {{"qpsk", modulation::qpsk},
                                         {"16qam", modulation::qam16},
                                         {"64qam", modulation::qam64},
                                         {"256qam", modulation::qam256},
                                         {"1024qam", modulation::qam1024}})
      .value_or(modulation::qam16);
}

void read_data(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "data"), "data");
  r.only({"modulation", "symbols", "snr_db"});
  if (!root.has("data")) {
    root.fail("data", "missing required table [data] (at least snr_db)");
  }
  scen.data.mod = read_modulation(r);
  scen.data.num_symbols = static_cast<int>(r.integer("symbols", 1, 1'000'000).value_or(168));
  scen.data.snr_db = r.required("snr_db", r.number("snr_db", -50.0, 80.0));
}

/// [uplink]: read after [precoder] and [data], whose choices the combiner must match. ZF and
/// MMSE detection reuse the downlink's Gram inverse (one inverse per block, as shared hardware
/// computes it), so the combiner must be the one that inverse is, unless `inverse = "own"`
/// gives the uplink its own Gram and inverse.
void read_uplink(const checked_table& root, scenario& scen) {
  if (!root.has("uplink")) return;
  const checked_table r(root.file(), sub_table(root, "uplink"), "uplink");
  r.only({"snr_db", "modulation", "symbols", "combiner", "inverse"});
  uplink_config& ul = scen.uplink;
  ul.on = true;
  ul.snr_db = r.required("snr_db", r.number("snr_db", -50.0, 80.0));
  ul.mod = read_modulation(r);
  ul.num_symbols = static_cast<int>(r.integer("symbols", 1, 4096).value_or(168));
  ul.combiner =
      r.choice<combiner_kind>("combiner",
                              {{"mrc", combiner_kind::mrc}, {"zf", combiner_kind::zf}, {"mmse", combiner_kind::mmse}})
          .value_or(combiner_kind::mrc);
  ul.own_inverse = r.choice<bool>("inverse", {{"shared", false}, {"own", true}}).value_or(false);
  if (ul.own_inverse && ul.combiner == combiner_kind::mrc) {
    r.fail("inverse",
           "inverse = \"own\" builds an uplink Gram inverse, which combiner = \"mrc\" does not use: "
           "choose combiner = \"zf\" or \"mmse\", or remove inverse");
  }
  const precoder_config& pc = scen.precoder;
  if (!ul.own_inverse && ul.combiner == combiner_kind::zf && pc.kind != precoder_kind::zf) {
    r.fail("combiner",
           "combiner = \"zf\" reuses the downlink's inverse of H_hat^H H_hat: it needs precoder kind = \"zf\" "
           "(or inverse = \"own\" for an uplink inverse of its own)");
  }
  if (!ul.own_inverse && ul.combiner == combiner_kind::mmse) {
    const double loading = 1.0 / scen.uplink_snr();
    if (pc.kind != precoder_kind::rzf || std::abs(scen.rzf_regularizer() - loading) > 1e-9 * loading) {
      r.fail("combiner", fmt::format("combiner = \"mmse\" reuses the downlink's inverse of H_hat^H H_hat + "
                                     "(1 / rho_ul) I: it needs precoder kind = \"rzf\" with regularizer = {} "
                                     "(10^(-snr_db / 10)), or inverse = \"own\" for an uplink inverse of its own",
                                     loading));
    }
  }
  if (scen.block_float.chan_est.on || scen.block_float.precoder.on) {
    r.fail("snr_db", "the uplink does not carry block exponents yet: remove [block_float] to model the uplink");
  }
  const std::int64_t words = static_cast<std::int64_t>(scen.array.num_antennas) * ul.num_symbols;
  if (words > (std::int64_t{1} << 22)) {
    r.fail("symbols", fmt::format("antennas x symbols = {} uplink samples per trial exceeds 2^22", words));
  }
}

void read_frontend(const checked_table& root, scenario& scen) {
  const checked_table r(root.file(), sub_table(root, "frontend"), "frontend");
  r.only({"agc_backoff_db", "dac_backoff_db"});
  scen.frontend.agc_backoff_db = r.number("agc_backoff_db", -20.0, 60.0).value_or(12.0);
  scen.frontend.dac_backoff_db = r.number("dac_backoff_db", -20.0, 60.0).value_or(12.0);
}

}  // namespace

namespace {

/// The code point of the UTF-8 sequence that starts `s`, and its length; length 0 when the bytes
/// are not well-formed UTF-8 (Unicode 15.0, table 3-7: no overlong forms, no surrogates).
std::pair<char32_t, std::size_t> decode_utf8(std::string_view s) {
  const auto at = [&](std::size_t k) { return k < s.size() ? static_cast<unsigned char>(s[k]) : 0U; };
  const unsigned lead = at(0);
  std::size_t len = 0;
  char32_t cp = 0;
  unsigned lo = 0x80, hi = 0xBF;  // the range of the second byte; later bytes are 80..BF
  if (lead >= 0xC2 && lead <= 0xDF) {
    len = 2;
    cp = lead & 0x1FU;
  } else if (lead >= 0xE0 && lead <= 0xEF) {
    len = 3;
    cp = lead & 0x0FU;
    if (lead == 0xE0) lo = 0xA0;
    if (lead == 0xED) hi = 0x9F;
  } else if (lead >= 0xF0 && lead <= 0xF4) {
    len = 4;
    cp = lead & 0x07U;
    if (lead == 0xF0) lo = 0x90;
    if (lead == 0xF4) hi = 0x8F;
  } else {
    return {0, 0};
  }
  for (std::size_t k = 1; k < len; ++k) {
    const unsigned byte = at(k);
    if (byte < lo || byte > hi) return {0, 0};
    lo = 0x80;
    hi = 0xBF;
    cp = (cp << 6) | (byte & 0x3FU);
  }
  return {cp, len};
}

/// The text toml++ is given: an ASCII copy of the scenario with the same lines and the same
/// values. toml++ 3.3 tests code points for Unicode whitespace outside strings, while it scans a
/// malformed bare value (which runs on across quotes: `a=0"é"`) and after a backslash in a
/// multi-line basic string (`"""\` newline `ζ"""`, valid TOML); its table reaches an unreachable
/// branch (undefined behaviour) for U+00A1..U+049A and two more ranges (found by fuzzing: the
/// two-byte file U+03B6 did it). So it never sees a non-ASCII byte: outside strings and comments
/// TOML 1.0 allows only printable ASCII, tab, CR and LF (anything else is a scenario_error naming
/// the line); in a basic string each code point becomes its \uXXXX or \UXXXXXXXX escape; a literal
/// string holding one becomes the basic string of the same value; in a comment it becomes '?'.
/// Text that is not UTF-8 is a scenario_error too.
std::string ascii_toml_text(std::string_view text, const std::string& source_name) {
  int line = 1;
  const auto fail = [&](const std::string& message) { throw scenario_error(source_name, line, "(syntax)", message); };
  std::string out;
  out.reserve(text.size());
  std::size_t i = text.substr(0, 3) == "\xEF\xBB\xBF" ? 3 : 0;  // a UTF-8 byte-order mark may lead
  out.append(text.substr(0, i));
  const auto starts = [&](std::size_t at, std::string_view token) { return text.substr(at, token.size()) == token; };
  // The code point at text[at], checked, and its length.
  const auto code_point = [&](std::size_t at) {
    const auto [cp, len] = decode_utf8(text.substr(at));
    if (len == 0) fail(fmt::format("byte 0x{:02X} is not UTF-8", static_cast<unsigned char>(text[at])));
    return std::pair{cp, len};
  };
  // Appends the escape of the code point at text[i] and steps over it.
  const auto escape_code_point = [&] {
    const auto [cp, len] = code_point(i);
    out += cp <= 0xFFFF ? fmt::format("\\u{:04X}", static_cast<std::uint32_t>(cp))
                        : fmt::format("\\U{:08X}", static_cast<std::uint32_t>(cp));
    i += len;
  };
  // Appends one ASCII byte and steps over it.
  const auto copy_byte = [&] {
    if (text[i] == '\n') ++line;
    out.push_back(text[i++]);
  };
  const auto is_ascii = [](char ch) { return static_cast<unsigned char>(ch) < 0x80; };
  // Where a '[' opens a table header rather than an array: at the start of a line, outside any
  // value. toml++ 3.3 asserts (an optimiser assumption under NDEBUG) that a header's first
  // character after '[' or '[[' and blanks starts a key: "[#", "[=", "[" at a line's end reached
  // its parse_key with anything else; and that an array element does not start with '}'
  // ("a=[}"), which reached its parse_value (both found by fuzzing with the library's assertions
  // on). So brackets of values must pair up here, innermost first.
  std::string open_values;    // the '[' and '{' of the values being read, innermost last
  bool expect_value = false;  // after '=': the next '[' or '{' opens a value
  bool at_line_start = true;  // only blanks since the last line end
  const auto check_header = [&] {
    std::size_t k = i + 1;
    if (k < text.size() && text[k] == '[') ++k;
    while (k < text.size() && (text[k] == ' ' || text[k] == '\t')) ++k;
    const char first = k < text.size() ? text[k] : '\n';
    const bool starts_key = std::isalnum(static_cast<unsigned char>(first)) != 0 || first == '_' || first == '-' ||
                            first == '"' || first == '\'' || first == ']';
    if (!starts_key) fail("a table header needs a key after '[' (letters, digits, _ or -, or a quoted key)");
  };
  // Dates and times: no scenario key takes one, and toml++ 3.3 parses malformed ones past its
  // own assertions ("8444------ 5" and "1a=2-a=-a= 2" rescanned past a blank, "1001-06-06ts0z"
  // read a time without a digit; found by fuzzing). toml++ takes a bare value that starts with a
  // digit for a date or time when it holds a ':' or a '-' (letters other than b, e, o, p, t, x, z
  // and '=' count for nothing there); in a number a '-' follows an exponent's 'e' or 'E'. So a
  // bare value that starts with a digit and holds a ':', or a '-' after anything but 'e' or 'E',
  // is refused.
  const auto looks_like_date_or_time = [&](std::size_t at) {
    if (at > 0 && std::string_view(" \t\r\n=[,{").find(text[at - 1]) == std::string_view::npos) return false;
    for (std::size_t k = at; k < text.size() && std::string_view(" \t\r\n],}#").find(text[k]) == std::string_view::npos;
         ++k) {
      if (text[k] == ':' || (text[k] == '-' && text[k - 1] != 'e' && text[k - 1] != 'E')) return true;
    }
    return false;
  };
  while (i < text.size()) {
    const auto byte = static_cast<unsigned char>(text[i]);
    if (byte == '\n') {
      at_line_start = true;
    } else if (byte != ' ' && byte != '\t' && byte != '\r') {
      if (byte == '[' || byte == '{') {
        if (!open_values.empty() || expect_value) {
          open_values.push_back(static_cast<char>(byte));
        } else if (byte == '[' && at_line_start) {
          check_header();
        }
      } else if ((byte == ']' || byte == '}') && !open_values.empty()) {
        if (open_values.back() != (byte == ']' ? '[' : '{')) {
          fail(fmt::format("'{}' closes the '{}' of a value", static_cast<char>(byte), open_values.back()));
        }
        open_values.pop_back();
      }
      const bool in_value = expect_value || (!open_values.empty() && open_values.back() == '[');
      if (std::isdigit(byte) != 0 && in_value && looks_like_date_or_time(i)) {
        fail(
            "a date or time (or a number with a stray '-' or ':') is not a scenario value (write numbers as "
            "numbers, text in quotes)");
      }
      expect_value = byte == '=';
      if (byte != '#') at_line_start = false;
    }
    if (byte == '#') {
      while (i < text.size() && text[i] != '\n') {
        if (is_ascii(text[i])) {
          copy_byte();
        } else {
          i += code_point(i).second;
          out.push_back('?');
        }
      }
    } else if (byte == '"') {
      const bool multi_line = starts(i, "\"\"\"");
      out.append(text.substr(i, multi_line ? 3 : 1));
      i += multi_line ? 3 : 1;
      while (i < text.size()) {
        const char ch = text[i];
        if (!is_ascii(ch)) {
          escape_code_point();
        } else if (ch == '\\') {
          copy_byte();
          if (i < text.size() && !is_ascii(text[i])) fail("a backslash in a string escapes an ASCII character only");
          if (i < text.size()) copy_byte();
        } else if (multi_line && starts(i, "\"\"\"")) {
          // Up to two more quotes close it as part of the string ("""a"""""): copied with it.
          out.append(text.substr(i, 3));
          i += 3;
          for (int extra = 0; extra < 2 && i < text.size() && text[i] == '"'; ++extra) copy_byte();
          break;
        } else if (!multi_line && (ch == '"' || ch == '\n')) {
          copy_byte();  // the closing quote, or the newline of a broken string (toml++ reports it)
          break;
        } else {
          copy_byte();
        }
      }
    } else if (byte == '\'') {
      const bool multi_line = starts(i, "'''");
      const std::size_t open = multi_line ? 3 : 1;
      std::size_t end = multi_line ? text.find("'''", i + open) : text.find_first_of("'\n", i + open);
      if (end == std::string_view::npos) end = text.size();
      if (multi_line && end < text.size()) {
        for (int extra = 0; extra < 2 && end + 3 < text.size() && text[end + 3] == '\''; ++extra) ++end;
      }
      const std::string_view content = text.substr(i + open, end - i - open);
      const std::size_t close = end < text.size() && text[end] == '\'' ? open : 0;
      if (std::all_of(content.begin(), content.end(), is_ascii)) {
        out.append(text.substr(i, end + close - i));
        line += static_cast<int>(std::count(content.begin(), content.end(), '\n'));
        i = end + close;
      } else {
        // The basic string of the same value: a literal has no escapes, so \ and " get one.
        const std::string_view quotes = multi_line ? "\"\"\"" : "\"";
        out += quotes;
        i += open;
        while (i < end) {
          if (!is_ascii(text[i])) {
            escape_code_point();
          } else {
            if (text[i] == '\\' || text[i] == '"') out.push_back('\\');
            copy_byte();
          }
        }
        if (close != 0) out += quotes;
        i += close;
      }
    } else if (byte >= 0x80 || (byte < 0x20 && byte != '\t' && byte != '\n' && byte != '\r') || byte == 0x7F) {
      fail(
          fmt::format("byte 0x{:02X} outside a string or comment (TOML allows only ASCII there; put other text "
                      "in quotes or after #)",
                      byte));
    } else {
      copy_byte();
    }
  }
  return out;
}

}  // namespace

toml::table parse_toml(std::string_view text, const std::string& source_name) {
  const std::string ascii = ascii_toml_text(text, source_name);
  try {
    return toml::parse(std::string_view(ascii), std::string_view(source_name));
  } catch (const toml::parse_error& err) {
    throw scenario_error(source_name, std::max(line_of(err.source()), 1), "(syntax)", one_line(err.description()));
  }
}

namespace {

void read_units(const checked_table& root, scenario& scen) {
  const checked_table u(root.file(), sub_table(root, "units"), "units");
  u.only({"inv_diag_recip", "norm", "chol_diag_rsqrt"});
  // kind, seed_bits and steps of one table (the node's own or an alternative).
  const auto read_choice = [](const checked_table& t) {
    unit_choice out;
    out.newton = t.required("kind", t.choice<bool>("kind", {{"exact", false}, {"newton", true}}));
    if (!out.newton) {
      for (std::string_view key : {"seed_bits", "steps"})
        if (t.has(key)) t.fail(key, "only used with kind = \"newton\"");
    }
    out.seed_bits = static_cast<int>(t.integer("seed_bits", 1, 16).value_or(6));
    out.steps = static_cast<int>(t.integer("steps", 0, 8).value_or(2));
    return out;
  };
  const auto read_one = [&](const char* name, unit_choice& out) {
    if (!u.has(name)) return;
    const checked_table t(root.file(), sub_table(u, name), std::string("units.") + name);
    t.only({"kind", "seed_bits", "steps", "alternatives"});
    out = read_choice(t);
    if (!t.has("alternatives")) return;
    const toml::array* list = t.table().get("alternatives")->as_array();
    if (list == nullptr || list->empty())
      t.fail("alternatives", "expected an array of tables, e.g. [{ kind = \"exact\" }]");
    unit_alternatives alt{name, {}};
    for (const toml::node& element : *list) {
      const toml::table* table = element.as_table();
      if (table == nullptr) {
        throw scenario_error(root.file(), std::max(line_of(element.source()), 1), t.key("alternatives"),
                             "every element must be a table such as { kind = \"newton\", seed_bits = 5, steps = 2 }");
      }
      const checked_table one(root.file(), *table, t.key("alternatives"));
      one.only({"kind", "seed_bits", "steps"});
      const unit_choice choice = read_choice(one);
      if (choice == out || std::find(alt.choices.begin(), alt.choices.end(), choice) != alt.choices.end()) {
        throw scenario_error(root.file(), std::max(line_of(element.source()), 1), t.key("alternatives"),
                             fmt::format("{} is listed twice", choice.label()));
      }
      alt.choices.push_back(choice);
    }
    scen.units.alternatives.push_back(std::move(alt));
  };
  if (scen.precoder.kind == precoder_kind::mf && u.has("inv_diag_recip"))
    u.fail("inv_diag_recip", "the matched-filter precoder inverts nothing (kind = \"mf\")");
  if (u.has("inv_diag_recip") && scen.precoder.inversion == inversion_kind::cholesky)
    u.fail("inv_diag_recip", "the Cholesky inverter has no reciprocal (inversion = \"cholesky\")");
  if (u.has("chol_diag_rsqrt") &&
      (scen.precoder.kind == precoder_kind::mf || scen.precoder.inversion != inversion_kind::cholesky))
    u.fail("chol_diag_rsqrt", "only used with inversion = \"cholesky\"");
  read_one("inv_diag_recip", scen.units.inv_diag_recip);
  read_one("norm", scen.units.norm);
  read_one("chol_diag_rsqrt", scen.units.chol_diag_rsqrt);
}

void read_block_float(const checked_table& root, scenario& scen) {
  const checked_table b(root.file(), sub_table(root, "block_float"), "block_float");
  b.only({"chan_est", "precoder"});
  if (b.has("precoder")) {
    const checked_table t(root.file(), sub_table(b, "precoder"), "block_float.precoder");
    t.only({"block", "top"});
    t.required("block", t.choice<int>("block", {{"whole", 0}}));
    scen.block_float.precoder = {true, static_cast<int>(t.required("top", t.integer("top", -64, 64)))};
  }
  if (!b.has("chan_est")) return;
  const checked_table t(root.file(), sub_table(b, "chan_est"), "block_float.chan_est");
  t.only({"block", "top"});
  t.required("block", t.choice<int>("block", {{"user", 0}}));
  scen.block_float.chan_est = {true, static_cast<int>(t.required("top", t.integer("top", -64, 64)))};
  if (scen.estimator.kind == estimator_kind::perfect)
    b.fail("chan_est", "a block exponent is found by the estimate stage (estimator kind ls or mmse, not perfect)");
  const bool carried = scen.precoder.kind == precoder_kind::mf || scen.precoder.inversion == inversion_kind::ldl ||
                       scen.precoder.inversion == inversion_kind::neumann ||
                       scen.precoder.inversion == inversion_kind::reference;
  if (!carried)
    b.fail("chan_est",
           "the column exponents are carried through the LDL^H and Neumann inverters only "
           "(inversion = \"ldl\" or \"neumann\")");
}

}  // namespace

std::string unit_choice::label() const {
  return newton ? fmt::format("newton a={} n={}", seed_bits, steps) : std::string("exact");
}

const unit_choice& units_config::of(std::string_view node) const {
  if (node == "inv_diag_recip") return inv_diag_recip;
  if (node == "norm") return norm;
  if (node == "chol_diag_rsqrt") return chol_diag_rsqrt;
  throw std::invalid_argument(fmt::format("no divide or root node '{}'", node));
}

unit_choice& units_config::of(std::string_view node) { return const_cast<unit_choice&>(std::as_const(*this).of(node)); }

scenario_document parse_scenario_document(std::string text, std::string source_name) {
  toml::table root = parse_toml(text, source_name);
  return {std::move(source_name), std::move(text), std::move(root)};
}

scenario_override parse_override(std::string_view text) {
  const auto eq = text.find('=');
  if (eq == std::string_view::npos || eq == 0 || eq + 1 == text.size())
    throw std::invalid_argument(fmt::format("bad override '{}': expected KEY=VALUE, e.g. data.snr_db=10", text));
  return {std::string(text.substr(0, eq)), std::string(text.substr(eq + 1))};
}

scenario_document with_overrides(scenario_document doc, const std::vector<scenario_override>& overrides) {
  std::string names;
  for (const scenario_override& o : overrides) {
    const std::string where = fmt::format("{} (override {}={})", doc.source_name, o.key, o.value);
    const toml::table parsed = parse_toml("value = " + o.value + "\n", where);
    const toml::node* value = parsed.get("value");
    const auto dot = o.key.rfind('.');
    const std::string table_name = dot == std::string::npos ? "" : o.key.substr(0, dot);
    const std::string leaf = dot == std::string::npos ? o.key : o.key.substr(dot + 1);
    if (leaf.empty() || (dot != std::string::npos && table_name.empty()))
      throw scenario_error(doc.source_name, 0, o.key, fmt::format("override {}={}: not a dotted key", o.key, o.value));
    toml::table* table = &doc.root;
    std::size_t start = 0;
    while (start < table_name.size()) {
      const auto next = table_name.find('.', start);
      const std::string part = table_name.substr(start, next == std::string::npos ? std::string::npos : next - start);
      if (part.empty())
        throw scenario_error(doc.source_name, 0, o.key,
                             fmt::format("override {}={}: not a dotted key", o.key, o.value));
      if (!table->contains(part)) table->insert(part, toml::table{});
      table = (*table)[part].as_table();
      if (table == nullptr)
        throw scenario_error(doc.source_name, 0, o.key,
                             fmt::format("override {}={}: '{}' is not a table", o.key, o.value, part));
      if (next == std::string::npos) break;
      start = next + 1;
    }
    if (table->get(leaf) != nullptr && table->get(leaf)->is_table())
      throw scenario_error(doc.source_name, 0, o.key,
                           fmt::format("override {}={}: the key names a table, not a value", o.key, o.value));
    value->visit([&](const auto& v) { table->insert_or_assign(leaf, v); });
    names += (names.empty() ? "" : ", ") + o.key + "=" + o.value;
  }
  if (!names.empty()) doc.source_name += " [" + names + "]";
  return doc;
}

std::string scenario_with_units(const std::string& text, const units_config& units) {
  std::vector<std::string> lines;
  {
    std::istringstream in(text);
    for (std::string line; std::getline(in, line);) lines.push_back(line);
  }
  const toml::table root = parse_toml(text, "(scenario)");
  // Per node, from the last table to the first (so that earlier line numbers stay valid): the
  // lines of its kind, seed_bits, steps and alternatives go; the chosen unit's lines and the
  // other choices (its own and the alternatives, in their order) as alternatives come right
  // after its header.
  struct edit {
    int header;  // 1-based
    std::vector<std::pair<int, int>> remove;
    std::vector<std::string> insert;
  };
  std::vector<edit> edits;
  for (const unit_alternatives& a : units.alternatives) {
    const toml::table* table = root["units"][a.node].as_table();
    if (table == nullptr) continue;
    edit e{line_of(table->source()), {}, {}};
    unit_choice own_before;
    for (const char* key : {"kind", "seed_bits", "steps", "alternatives"}) {
      if (const toml::node* n = table->get(key))
        e.remove.emplace_back(line_of(n->source()), static_cast<int>(n->source().end.line));
    }
    own_before.newton = table->get("kind") != nullptr && table->get("kind")->value_or(std::string()) == "newton";
    own_before.seed_bits = static_cast<int>(table->get("seed_bits") ? table->get("seed_bits")->value_or(6) : 6);
    own_before.steps = static_cast<int>(table->get("steps") ? table->get("steps")->value_or(2) : 2);
    const unit_choice& chosen = units.of(a.node);
    e.insert.push_back(chosen.newton ? "kind = \"newton\"" : "kind = \"exact\"");
    if (chosen.newton) {
      e.insert.push_back(fmt::format("seed_bits = {}", chosen.seed_bits));
      e.insert.push_back(fmt::format("steps = {}", chosen.steps));
    }
    std::vector<unit_choice> others{own_before};
    others.insert(others.end(), a.choices.begin(), a.choices.end());
    std::string list;
    for (const unit_choice& c : others) {
      if (c == chosen) continue;
      list += list.empty() ? "" : ", ";
      list += c.newton ? fmt::format("{{ kind = \"newton\", seed_bits = {}, steps = {} }}", c.seed_bits, c.steps)
                       : std::string("{ kind = \"exact\" }");
    }
    if (!list.empty()) e.insert.push_back("alternatives = [" + list + "]");
    edits.push_back(std::move(e));
  }
  std::sort(edits.begin(), edits.end(), [](const edit& x, const edit& y) { return x.header > y.header; });
  for (edit& e : edits) {
    std::sort(e.remove.begin(), e.remove.end(), std::greater<>());
    for (const auto& [first, last] : e.remove) lines.erase(lines.begin() + (first - 1), lines.begin() + last);
    lines.insert(lines.begin() + e.header, e.insert.begin(), e.insert.end());
  }
  std::string out;
  for (const std::string& l : lines) out += l + "\n";
  return out;
}

scenario parse_scenario_text(std::string_view toml_text, std::string source_name) {
  return parse_scenario(parse_scenario_document(std::string(toml_text), std::move(source_name)));
}

scenario parse_scenario(const scenario_document& doc) {
  const std::string& source_name = doc.source_name;
  const checked_table root(source_name, doc.root, "");
  root.only({"name", "seed", "trials", "array", "cells", "channel", "pilots", "estimator", "precoder", "data",
             "frontend", "units", "block_float", "uplink", "nodes"});

  scenario scen;
  scen.source_name = source_name;
  scen.name = root.string("name").value_or(source_name);
  scen.seed = static_cast<std::uint64_t>(root.integer("seed", 0, std::numeric_limits<std::int64_t>::max()).value_or(0));
  scen.num_trials = static_cast<int>(root.integer("trials", 1, 100'000'000).value_or(1));
  if (root.has("nodes") && !root.table().get("nodes")->is_table()) {
    root.fail("nodes", "expected a table");
  }

  read_array(root, scen);
  read_cells(root, scen);
  // Bound the per-trial working set: L channel matrices of M x K at every base station.
  const std::int64_t entries = static_cast<std::int64_t>(scen.cells.num_cells) * scen.cells.num_cells *
                               scen.array.num_antennas * scen.cells.num_users;
  if (entries > (std::int64_t{1} << 26)) {
    const checked_table cells(source_name, sub_table(root, "cells"), "cells");
    cells.fail("users_per_cell",
               fmt::format("cells^2 x antennas x users = {} channel coefficients per trial exceeds 2^26", entries));
  }
  read_channel(root, scen);
  read_pilots(root, scen);
  read_estimator(root, scen);
  read_precoder(root, scen);
  read_data(root, scen);
  read_frontend(root, scen);
  read_units(root, scen);
  read_block_float(root, scen);
  read_uplink(root, scen);
  return scen;
}

scenario load_scenario_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    throw scenario_error(path, 0, "(file)", "cannot open the scenario file");
  }
  std::ostringstream text;
  text << in.rdbuf();
  return parse_scenario_text(text.str(), path);
}

}  // namespace fxmimo::golden
