// Sweeps (harness/src/sweep.cpp) against their definition: a sweep point is a run of the
// scenario with that one width set, so its figures must equal, bit for bit, run_trials on a config
// set by hand, on a scenario text written and parsed back, and `fxmimo run` on that file. Also
// swept_format's arithmetic, SQNR against the 6.02 dB per bit of rounding noise (common practice),
// and the command line's exit codes.
#include "fxmimo/analysis/sweep.hpp"

#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <vector>

#include "fxmimo/analysis/tune.hpp"
#include "fxmimo/report/records.hpp"

namespace fp = fxmimo::fixedpoint;
namespace h = fxmimo::analysis;
namespace d = fxmimo::datapath;
namespace rep = fxmimo::report;
namespace g = fxmimo::golden;
namespace fs = std::filesystem;

namespace {

/// A small scenario of our own: 16 antennas, 2 users, ZF with LDL^H; weights and dac set, every
/// other node at the wide default.
const char* sweep_scenario_text = R"(name = "sweep-16x2"
seed = 4242
trials = 3
[array]
antennas = 16
[cells]
count = 1
users_per_cell = 2
user_gains_db = [0.0, -3.0]
[pilots]
length = 2
sequence = "walsh"
snr_db = 10.0
[precoder]
kind = "zf"
inversion = "ldl"
[data]
modulation = "16qam"
symbols = 16
snr_db = 15.0

[nodes.weights]
format = "Q0.12"
rounding = "half_even"
overflow = "saturate"

[nodes.dac]
format = "Q0.15"
rounding = "half_even"
overflow = "saturate"
)";

/// The same system with cell 0's uplink (our own numbers): 16-QAM through the downlink's ZF
/// inverse, and a narrow equaliser output so that its fraction bits move the uplink's figures.
const std::string uplink_scenario_text = std::string(sweep_scenario_text) + R"(
[uplink]
snr_db = 14.0
modulation = "16qam"
symbols = 48
combiner = "zf"

[nodes.ul_eq]
format = "Q3.3"
rounding = "half_even"
overflow = "saturate"
)";

struct fixture_data {
  g::scenario scen;
  d::datapath_config config;
};

fixture_data load() {
  return {g::parse_scenario_text(sweep_scenario_text, "sweep-16x2.toml"),
          d::parse_datapath_config(sweep_scenario_text, "sweep-16x2.toml")};
}

fixture_data load_uplink() {
  return {g::parse_scenario_text(uplink_scenario_text, "sweep-16x2-uplink.toml"),
          d::parse_datapath_config(uplink_scenario_text, "sweep-16x2-uplink.toml")};
}

/// Exact equality of two uplink reductions (the same computation: `==` on doubles and counts).
void expect_uplink_equal(const h::uplink_results& a, const h::uplink_results& b, const std::string& what) {
  ASSERT_EQ(a.users.size(), b.users.size()) << what;
  for (std::size_t k = 0; k < a.users.size(); ++k) {
    EXPECT_EQ(a.users[k].sinr_golden_db, b.users[k].sinr_golden_db) << what << " user " << k;
    EXPECT_EQ(a.users[k].sinr_fixed_db, b.users[k].sinr_fixed_db) << what << " user " << k;
    EXPECT_EQ(a.users[k].evm_golden_pct, b.users[k].evm_golden_pct) << what << " user " << k;
    EXPECT_EQ(a.users[k].evm_fixed_pct, b.users[k].evm_fixed_pct) << what << " user " << k;
  }
  EXPECT_EQ(a.sinr_golden_db, b.sinr_golden_db) << what;
  EXPECT_EQ(a.sinr_fixed_db, b.sinr_fixed_db) << what;
  EXPECT_EQ(a.sinr_loss_db, b.sinr_loss_db) << what;
  EXPECT_EQ(a.evm_golden_pct, b.evm_golden_pct) << what;
  EXPECT_EQ(a.evm_fixed_pct, b.evm_fixed_pct) << what;
  EXPECT_EQ(a.bits, b.bits) << what;
  EXPECT_EQ(a.bit_errors_golden, b.bit_errors_golden) << what;
  EXPECT_EQ(a.bit_errors_fixed, b.bit_errors_fixed) << what;
  EXPECT_EQ(a.llrs, b.llrs) << what;
  EXPECT_EQ(a.llr_sign_flips, b.llr_sign_flips) << what;
}

const h::node_result& find_node(const h::run_results& r, d::node_id id) {
  for (const h::node_result& n : r.nodes)
    if (n.id == id) return n;
  throw std::runtime_error("node not run");
}

/// Exact equality of a sweep point's figures and the run's: the same computation, so `==` on
/// doubles (EXPECT_EQ), no tolerance.
void expect_point_equals_run(const h::sweep_point& p, const h::run_results& run, const std::string& what) {
  EXPECT_EQ(p.summary.sinr_loss_db, run.summary.sinr_loss_db) << what;
  EXPECT_EQ(p.summary.sinr_fixed_db, run.summary.sinr_fixed_db) << what;
  EXPECT_EQ(p.summary.sinr_golden_db, run.summary.sinr_golden_db) << what;
  EXPECT_EQ(p.summary.evm_fixed_pct, run.summary.evm_fixed_pct) << what;
  EXPECT_EQ(p.summary.evm_impl_pct, run.summary.evm_impl_pct) << what;
  EXPECT_EQ(p.summary.tx_power_error_db, run.summary.tx_power_error_db) << what;
  const h::node_result& n = find_node(run, p.id);
  EXPECT_EQ(p.node_sqnr_db, n.sqnr_db()) << what;
  EXPECT_EQ(p.node_overflow_rate, n.overflow_rate()) << what;
  double max_rate = 0;
  for (const h::node_result& m : run.nodes) max_rate = std::max(max_rate, m.overflow_rate());
  EXPECT_EQ(p.max_overflow_rate, max_rate) << what;
  EXPECT_EQ(p.fmt, n.spec.fmt) << what;
}

TEST(sweep, point_is_bit_identical_to_a_run_with_that_width) {
  const fixture_data in = load();
  const std::vector<std::uint64_t> trials = h::first_trials(3);
  struct sweep_case {
    d::node_id id;
    int lo, hi;
    h::sweep_axis axis;
  };
  const sweep_case cases[] = {{d::node_id::weights, 6, 8, h::sweep_axis::frac},
                              {d::node_id::gram, 10, 12, h::sweep_axis::int_bits},
                              {d::node_id::dac, 12, 13, h::sweep_axis::word}};
  for (const sweep_case& c : cases) {
    const h::sweep_results sweep = h::run_sweep(in.scen, in.config, {c.id}, c.lo, c.hi, c.axis, trials, 2);
    ASSERT_EQ(sweep.points.size(), static_cast<std::size_t>(c.hi - c.lo + 1));
    for (const h::sweep_point& p : sweep.points) {
      const std::string what = std::string(d::node_name(c.id)) + " " + std::string(h::to_string(c.axis)) + " = " +
                               std::to_string(p.bits) + " (" + fp::to_q_string(p.fmt) + ")";
      // The point's format has the swept quantity at `bits` and the other kept.
      const fp::format& base = in.config[c.id].spec.fmt;
      if (c.axis == h::sweep_axis::frac) {
        EXPECT_EQ(p.fmt.frac_bits, p.bits) << what;
        EXPECT_EQ(p.fmt.int_bits(), base.int_bits()) << what;
      } else if (c.axis == h::sweep_axis::int_bits) {
        EXPECT_EQ(p.fmt.int_bits(), p.bits) << what;
        EXPECT_EQ(p.fmt.frac_bits, base.frac_bits) << what;
      } else {
        EXPECT_EQ(p.fmt.word_bits, p.bits) << what;
        EXPECT_EQ(p.fmt.int_bits(), base.int_bits()) << what;
      }
      // By hand: the configured datapath with that node's format replaced.
      d::datapath_config by_hand = in.config;
      by_hand[c.id].spec.fmt = p.fmt;
      by_hand[c.id].is_default = false;
      const h::run_results run = h::run_trials(in.scen, by_hand, trials, 1);
      expect_point_equals_run(p, run, what + ", by hand");
      // Through a scenario file: written with the node's table and parsed back.
      std::vector<d::node_id> tables{d::node_id::weights, d::node_id::dac};
      if (c.id != d::node_id::weights && c.id != d::node_id::dac) tables.push_back(c.id);
      const std::string text = d::scenario_with_nodes(sweep_scenario_text, by_hand, tables, "sweep point");
      const g::scenario scen2 = g::parse_scenario_text(text, "sweep-16x2.toml");
      const d::datapath_config parsed = d::parse_datapath_config(text, "sweep-16x2.toml");
      const h::run_results run2 = h::run_trials(scen2, parsed, trials, 2);
      EXPECT_EQ(rep::to_json(rep::make_record(run2)).dump(), rep::to_json(rep::make_record(run)).dump())
          << what << ", file and hand differ";
      expect_point_equals_run(p, run2, what + ", through the scenario file");
    }
  }
}

TEST(sweep, uplink_at_a_point_is_bit_identical_to_a_run_with_that_width) {
  // The definition again, for the uplink: a point's uplink figures are run_trials' at that width,
  // whether the swept node is the uplink's (ul_eq) or the downlink's alone (weights).
  const fixture_data in = load_uplink();
  const std::vector<std::uint64_t> trials = h::first_trials(3);
  const h::sweep_results sweep =
      h::run_sweep(in.scen, in.config, {d::node_id::ul_eq, d::node_id::weights}, 1, 4, h::sweep_axis::frac, trials, 2);
  ASSERT_EQ(sweep.points.size(), 8U);
  for (const h::sweep_point& p : sweep.points) {
    const std::string what = std::string(d::node_name(p.id)) + " frac " + std::to_string(p.bits);
    d::datapath_config by_hand = in.config;
    by_hand[p.id].spec.fmt = p.fmt;
    by_hand[p.id].is_default = false;
    const h::run_results run = h::run_trials(in.scen, by_hand, trials, 1);
    ASSERT_TRUE(run.uplink.has_value()) << what;
    ASSERT_TRUE(p.uplink.has_value()) << what << ": a scenario with [uplink] gives every point its uplink";
    expect_uplink_equal(*p.uplink, *run.uplink, what);
    expect_point_equals_run(p, run, what);
    // Cell 0's 2 users send 48 16-QAM symbols (4 bits) per trial: 2 x 48 x 4 x 3 trials.
    EXPECT_EQ(p.uplink->bits, 2U * 48U * 4U * 3U) << what;
  }
  // ul_eq's fraction bits move the uplink (the points are not one run copied): 1 against 4
  // fraction bits on a 16-QAM grid of odd integers is a coarse against a fine quantiser.
  EXPECT_NE(sweep.points[0].uplink->sinr_fixed_db, sweep.points[3].uplink->sinr_fixed_db);
  // The golden side is the same trials at every point.
  for (const h::sweep_point& p : sweep.points) {
    EXPECT_EQ(p.uplink->bit_errors_golden, sweep.points[0].uplink->bit_errors_golden);
    EXPECT_EQ(p.uplink->sinr_golden_db, sweep.points[0].uplink->sinr_golden_db);
  }
  // A downlink-only scenario has no uplink at any point.
  const fixture_data down = load();
  const h::sweep_results plain =
      h::run_sweep(down.scen, down.config, {d::node_id::weights}, 8, 9, h::sweep_axis::frac, h::first_trials(2), 2);
  for (const h::sweep_point& p : plain.points) EXPECT_FALSE(p.uplink.has_value()) << p.bits;
}

TEST(sweep, swept_format_sets_one_quantity) {
  const fp::format q2_10{true, 13, 10};  // Q2.10
  // frac: integer bits kept.
  EXPECT_EQ(h::swept_format(q2_10, h::sweep_axis::frac, 5), (fp::format{true, 8, 5}));
  EXPECT_EQ(h::swept_format(q2_10, h::sweep_axis::frac, 0), (fp::format{true, 3, 0}));
  // word: integer bits kept, fraction bits follow (may go negative: Q2.-1 is a 2-bit word).
  EXPECT_EQ(h::swept_format(q2_10, h::sweep_axis::word, 16), (fp::format{true, 16, 13}));
  EXPECT_EQ(h::swept_format(q2_10, h::sweep_axis::word, 2), (fp::format{true, 2, -1}));
  // int: fraction bits kept.
  EXPECT_EQ(h::swept_format(q2_10, h::sweep_axis::int_bits, -3), (fp::format{true, 8, 10}));
  EXPECT_EQ(h::swept_format(q2_10, h::sweep_axis::int_bits, 53), (fp::format{true, 64, 10}));
  for (int bits = -1; bits <= 40; ++bits) {
    const fp::format f = h::swept_format(q2_10, h::sweep_axis::frac, bits);
    EXPECT_EQ(f.int_bits(), 2) << bits;
    EXPECT_EQ(f.frac_bits, bits);
  }
  // Unsigned formats have no sign bit: Q2.10 unsigned is 12 bits.
  EXPECT_EQ(h::swept_format(fp::format{false, 12, 10}, h::sweep_axis::frac, 4), (fp::format{false, 6, 4}));
  // Errors: word below 2 or above 64.
  EXPECT_THROW((void)h::swept_format(q2_10, h::sweep_axis::word, 1), std::invalid_argument);
  EXPECT_THROW((void)h::swept_format(q2_10, h::sweep_axis::word, 65), std::invalid_argument);
  EXPECT_NO_THROW((void)h::swept_format(q2_10, h::sweep_axis::word, 64));
  EXPECT_THROW((void)h::swept_format(q2_10, h::sweep_axis::frac, -3), std::invalid_argument);  // 0 bits
  EXPECT_THROW((void)h::swept_format(q2_10, h::sweep_axis::frac, 62), std::invalid_argument);  // 65 bits
  EXPECT_THROW((void)h::swept_format(q2_10, h::sweep_axis::int_bits, 54), std::invalid_argument);
  // A sweep with one bad point fails before running any.
  const fixture_data in = load();
  EXPECT_THROW(
      (void)h::run_sweep(in.scen, in.config, {d::node_id::weights}, 60, 64, h::sweep_axis::frac, h::first_trials(1), 1),
      std::invalid_argument);
  EXPECT_THROW(
      (void)h::run_sweep(in.scen, in.config, {d::node_id::weights}, 9, 8, h::sweep_axis::frac, h::first_trials(1), 1),
      std::invalid_argument);
}

TEST(sweep, node_sqnr_rises_six_db_per_bit) {
  // Rounding to an LSB of 2^-F adds noise of power 2^(-2F) / 12 per part when the signal spans
  // many LSBs (common practice, the 6.02 dB-per-bit rule). The weights node takes wide inputs
  // (every upstream node at the 64-bit default), so its error is its own rounding only: the SQNR
  // must rise at every step and by 6.02 dB per bit on average. The noise energy of each point is
  // a sum over 16 x 2 x 2 x 4 = 256 parts of a variance-lsb^2/12 uniform error squared; its
  // relative standard error is sqrt(0.8 / 256) = 5.6 % (0.24 dB) per point, so the slope over 10
  // bits (least squares over 11 points) has a standard error near 0.24 dB * sqrt(12 / (11 * 120))
  // = 0.023 dB per bit: 0.15 dB is more than five of them.
  const fixture_data in = load();
  const int lo = 6, hi = 16;
  const h::sweep_results sweep =
      h::run_sweep(in.scen, in.config, {d::node_id::weights}, lo, hi, h::sweep_axis::frac, h::first_trials(4), 2);
  ASSERT_EQ(sweep.points.size(), static_cast<std::size_t>(hi - lo + 1));
  double sum_x = 0, sum_y = 0, sum_xx = 0, sum_xy = 0;
  for (std::size_t i = 0; i < sweep.points.size(); ++i) {
    const h::sweep_point& p = sweep.points[i];
    EXPECT_EQ(p.bits, lo + static_cast<int>(i));
    EXPECT_EQ(p.node_overflow_rate, 0.0) << "the granular model needs no overflow, bits " << p.bits;
    ASSERT_TRUE(std::isfinite(p.node_sqnr_db)) << p.bits;
    if (i > 0) {
      EXPECT_GT(p.node_sqnr_db, sweep.points[i - 1].node_sqnr_db + 3.0) << "bits " << p.bits;
      EXPECT_LT(p.node_sqnr_db, sweep.points[i - 1].node_sqnr_db + 9.0) << "bits " << p.bits;
    }
    sum_x += p.bits;
    sum_y += p.node_sqnr_db;
    sum_xx += static_cast<double>(p.bits) * p.bits;
    sum_xy += p.bits * p.node_sqnr_db;
  }
  const double n = static_cast<double>(sweep.points.size());
  const double slope = (n * sum_xy - sum_x * sum_y) / (n * sum_xx - sum_x * sum_x);
  EXPECT_NEAR(slope, 20.0 * std::log10(2.0), 0.15) << "dB per bit, seed 4242";
}

// ---- command line ----

struct command_result {
  int exit_code = -1;
  std::string out, err;
};

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

std::string quote(const std::string& s) { return "'" + s + "'"; }

/// Runs the fxmimo program with `args` (already quoted), stdout and stderr into files of `dir`.
command_result run_fxmimo(const std::string& args, const fs::path& dir) {
  const fs::path out = dir / "stdout.txt", err = dir / "stderr.txt";
  const std::string cmd =
      quote(FXMIMO_EXE) + " " + args + " > " + quote(out.string()) + " 2> " + quote(err.string()) + " < /dev/null";
  const int status = std::system(cmd.c_str());
  command_result r;
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.out = read_text(out);
  r.err = read_text(err);
  return r;
}

fs::path scratch_dir(const std::string& name) {
  const fs::path dir = fs::temp_directory_path() / ("fxmimo_sweep_test_" + std::to_string(::getpid())) / name;
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

void write_text(const fs::path& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary);
  out << text;
}

int count_lines(const std::string& s) { return static_cast<int>(std::count(s.begin(), s.end(), '\n')); }

TEST(sweep_cli, json_and_csv_points_equal_fxmimo_run) {
  const fs::path dir = scratch_dir("cli");
  const fs::path scen_file = dir / "sweep-16x2.toml";
  write_text(scen_file, sweep_scenario_text);
  const fs::path json_file = dir / "sweep.json", csv_file = dir / "sweep.csv";
  const command_result r = run_fxmimo("sweep -c " + quote(scen_file.string()) + " --node weights --bits 8:10 --json " +
                                          quote(json_file.string()) + " --csv " + quote(csv_file.string()),
                                      dir);
  ASSERT_EQ(r.exit_code, 0) << r.err;
  const nlohmann::json sweep = nlohmann::json::parse(read_text(json_file));
  ASSERT_EQ(sweep.at("points").size(), 3U);
  const std::string csv = read_text(csv_file);
  EXPECT_EQ(count_lines(csv), 4) << "header and three points:\n" << csv;
  // Without [uplink]: no uplink key, column or table.
  EXPECT_EQ(csv.find("ul_"), std::string::npos) << csv;
  EXPECT_EQ(r.out.find("uplink"), std::string::npos) << r.out;
  for (const nlohmann::json& p : sweep.at("points")) EXPECT_FALSE(p.contains("uplink")) << p;

  // `fxmimo run` on the scenario file with the point's width is the definition of the point;
  // JSON numbers are written to round-trip, so equality is exact.
  const fixture_data in = load();
  for (const nlohmann::json& p : sweep.at("points")) {
    const int bits = p.at("bits").get<int>();
    EXPECT_EQ(p.at("node"), "weights");
    d::datapath_config c = in.config;
    c[d::node_id::weights].spec.fmt = fp::parse_format(p.at("format").get<std::string>());
    EXPECT_EQ(c[d::node_id::weights].spec.fmt.frac_bits, bits);
    const fs::path point_file = dir / ("point-" + std::to_string(bits) + ".toml");
    write_text(point_file, d::scenario_with_nodes(sweep_scenario_text, c, {d::node_id::weights, d::node_id::dac},
                                                  "weights at " + std::to_string(bits) + " fraction bits"));
    const fs::path run_json = dir / ("run-" + std::to_string(bits) + ".json");
    const command_result rr =
        run_fxmimo("run -c " + quote(point_file.string()) + " --json " + quote(run_json.string()), dir);
    ASSERT_EQ(rr.exit_code, 0) << rr.err;
    const nlohmann::json run = nlohmann::json::parse(read_text(run_json));
    const std::string what = "weights frac " + std::to_string(bits);
    for (const char* key : {"sinr_loss_db", "sinr_fixed_db", "evm_fixed_pct", "evm_impl_pct"}) {
      EXPECT_EQ(p.at(key), run.at("summary").at(key)) << what << " " << key;
    }
    EXPECT_EQ(p.at("sqnr_db"), run.at("nodes").at("weights").at("sqnr_db")) << what;
    EXPECT_EQ(p.at("sinr_loss_p95_db"), run.at("distribution").at("sinr_loss_p95_db")) << what;
    EXPECT_EQ(p.at("evm_impl_p95_pct"), run.at("distribution").at("evm_impl_p95_pct")) << what;
    EXPECT_EQ(p.at("overflow_rate"), run.at("nodes").at("weights").at("overflow_rate")) << what;
    EXPECT_EQ(p.at("format"), run.at("nodes").at("weights").at("format")) << what;
    double max_rate = 0;
    for (const auto& [name, n] : run.at("nodes").items())
      max_rate = std::max(max_rate, n.at("overflow_rate").get<double>());
    EXPECT_EQ(p.at("max_overflow_rate").get<double>(), max_rate) << what;
  }
}

/// The CSV as rows of cells (no quoting needed: the sweep's cells hold no comma).
std::vector<std::vector<std::string>> csv_rows(const std::string& csv) {
  std::vector<std::vector<std::string>> rows;
  std::istringstream lines(csv);
  for (std::string line; std::getline(lines, line);) {
    std::vector<std::string> cells;
    std::istringstream cell(line);
    for (std::string c; std::getline(cell, c, ',');) cells.push_back(c);
    rows.push_back(cells);
  }
  return rows;
}

TEST(sweep_cli, uplink_columns_equal_fxmimo_run_at_each_point) {
  const fs::path dir = scratch_dir("cli_uplink");
  const fs::path scen_file = dir / "sweep-16x2-uplink.toml";
  write_text(scen_file, uplink_scenario_text);
  const fs::path json_file = dir / "sweep.json", csv_file = dir / "sweep.csv";
  const command_result r = run_fxmimo("sweep -c " + quote(scen_file.string()) + " --node ul_eq --bits 2:3 --json " +
                                          quote(json_file.string()) + " --csv " + quote(csv_file.string()),
                                      dir);
  ASSERT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("\nuplink at each point"), std::string::npos) << r.out;
  const nlohmann::json sweep = nlohmann::json::parse(read_text(json_file));
  ASSERT_EQ(sweep.at("points").size(), 2U);
  const auto rows = csv_rows(read_text(csv_file));
  ASSERT_EQ(rows.size(), 3U);
  const auto column = [&](const std::string& name) {
    const auto it = std::find(rows[0].begin(), rows[0].end(), name);
    EXPECT_NE(it, rows[0].end()) << name;
    return static_cast<std::size_t>(it - rows[0].begin());
  };
  const fixture_data in = load_uplink();
  for (std::size_t i = 0; i < 2; ++i) {
    const nlohmann::json& p = sweep.at("points")[i];
    const int bits = p.at("bits").get<int>();
    d::datapath_config c = in.config;
    c[d::node_id::ul_eq].spec.fmt = fp::parse_format(p.at("format").get<std::string>());
    const fs::path point_file = dir / ("point-" + std::to_string(bits) + ".toml");
    write_text(point_file, d::scenario_with_nodes(uplink_scenario_text, c,
                                                  {d::node_id::weights, d::node_id::dac, d::node_id::ul_eq},
                                                  "ul_eq at " + std::to_string(bits) + " fraction bits"));
    const fs::path run_json = dir / ("run-" + std::to_string(bits) + ".json");
    const command_result rr =
        run_fxmimo("run -c " + quote(point_file.string()) + " --json " + quote(run_json.string()), dir);
    ASSERT_EQ(rr.exit_code, 0) << rr.err;
    const nlohmann::json run = nlohmann::json::parse(read_text(run_json));
    // The whole uplink object, per user and in total, as `fxmimo run` writes it (numbers that
    // round-trip: equality is exact).
    EXPECT_EQ(p.at("uplink"), run.at("uplink")) << "ul_eq frac " << bits;
    // The CSV's counts are the run's; its rates are the counts divided (6 significant digits).
    const nlohmann::json& u = run.at("uplink");
    const auto& row = rows[i + 1];
    EXPECT_EQ(row[column("ul_bits")], std::to_string(u.at("bits").get<std::uint64_t>()));
    EXPECT_EQ(row[column("ul_bit_errors_fixed")], std::to_string(u.at("bit_errors_fixed").get<std::uint64_t>()));
    EXPECT_EQ(row[column("ul_bit_errors_golden")], std::to_string(u.at("bit_errors_golden").get<std::uint64_t>()));
    EXPECT_EQ(row[column("ul_llr_sign_flips")], std::to_string(u.at("llr_sign_flips").get<std::uint64_t>()));
    const double n_bits = u.at("bits").get<double>();
    EXPECT_NEAR(std::stod(row[column("ul_ber_fixed")]), u.at("bit_errors_fixed").get<double>() / n_bits,
                5e-6 * u.at("bit_errors_fixed").get<double>() / n_bits)
        << "6 significant digits";
    EXPECT_NEAR(std::stod(row[column("ul_llr_flip_rate")]), u.at("llr_sign_flips").get<double>() / n_bits,
                5e-6 * u.at("llr_sign_flips").get<double>() / n_bits);
    EXPECT_NEAR(std::stod(row[column("ul_sinr_loss_db")]), u.at("sinr_loss_db").get<double>(),
                5e-6 * std::abs(u.at("sinr_loss_db").get<double>()));
  }
}

TEST(sweep_cli, usage_errors_exit_2_with_one_line) {
  const fs::path dir = scratch_dir("errors");
  const fs::path scen_file = dir / "sweep-16x2.toml";
  write_text(scen_file, sweep_scenario_text);
  const fs::path json_file = dir / "never.json";
  struct error_case {
    const char* name;
    std::string args;
  };
  const std::string base = "sweep -c " + quote(scen_file.string()) + " --json " + quote(json_file.string());
  const error_case cases[] = {
      {"bits without colon number", base + " --node weights --bits 8-10"},
      {"bits reversed", base + " --node weights --bits 10:8"},
      {"bits not numbers", base + " --node weights --bits a:b"},
      {"bits beyond 64-bit words", base + " --node weights --bits 40:64"},  // Q0.64: 65 bits
      {"unknown node", base + " --node nosuchnode --bits 8:10"},
      {"node unused by LDL", base + " --node inv_iter --bits 8:10"},
      {"bad vary", base + " --node weights --bits 8:10 --vary mantissa"},
  };
  for (const error_case& c : cases) {
    const command_result r = run_fxmimo(c.args, dir);
    EXPECT_EQ(r.exit_code, 2) << c.name << ": " << r.err;
    EXPECT_EQ(count_lines(r.err), 1) << c.name << ": '" << r.err << "'";
    EXPECT_EQ(r.err.rfind("fxmimo sweep: ", 0), 0U) << c.name << ": '" << r.err << "'";
    EXPECT_FALSE(fs::exists(json_file)) << c.name << ": nothing is written on an error";
  }
}

}  // namespace
