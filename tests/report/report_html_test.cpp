// The HTML report checked from outside the project: Python's standard XML parser
// (xml.etree.ElementTree, expat underneath: any well-formedness error is fatal) reads every page
// and hands back what is drawn; the checks compare it with the JSON fixtures through the linear
// (or log10) map that the tick labels themselves define, so a point drawn anywhere but where its
// axis says fails. Headless Chromium renders the page to a PNG and must report no console error.
// The fxmimo program runs on the fixtures for the exit codes and one-line errors.
#include "fxmimo/report/report_html.hpp"

#include <gtest/gtest.h>
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <sstream>
#include <string>
#include <tuple>
#include <vector>

#include "fxmimo/analysis/runner.hpp"
#include "fxmimo/analysis/sweep.hpp"
#include "fxmimo/datapath/config.hpp"
#include "fxmimo/golden/scenario.hpp"
#include "fxmimo/report/records.hpp"

namespace {

namespace fs = std::filesystem;
using nlohmann::json;

constexpr const char* python_exe = "/usr/bin/python3";
constexpr const char* chromium_exe = "/usr/bin/chromium";

// Coordinates are written with two decimals: each is off by at most 0.005 px, so a point and the
// two ticks that define its map are within 0.02 px of the exact position (common practice:
// rounding bound of the printed digits, with margin).
constexpr double pixel_tolerance = 0.02;

fs::path fixture(const std::string& name) { return fs::path(FXMIMO_SOURCE_DIR) / "tests/report/fixtures" / name; }

std::string read_text(const fs::path& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

json load_fixture(const std::string& name) { return json::parse(read_text(fixture(name))); }

/// A scratch directory for one test, removed and made anew.
fs::path scratch_dir(const std::string& name) {
  const fs::path dir = fs::temp_directory_path() / ("fxmimo_report_" + std::to_string(::getpid())) / name;
  fs::remove_all(dir);
  fs::create_directories(dir);
  return dir;
}

struct command_result {
  int exit_code = -1;
  std::string out;
  std::string err;
};

/// Runs a shell command; stdout captured, stderr through a file.
command_result run_command(const std::string& command, const fs::path& err_path) {
  command_result r;
  FILE* pipe = popen((command + " 2>" + err_path.string()).c_str(), "r");
  if (pipe == nullptr) return r;
  std::array<char, 4096> buffer{};
  while (std::fgets(buffer.data(), static_cast<int>(buffer.size()), pipe) != nullptr) r.out += buffer.data();
  const int status = pclose(pipe);
  r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
  r.err = read_text(err_path);
  return r;
}

std::string shell_quoted(const fs::path& p) { return "'" + p.string() + "'"; }

/// What Python's XML parser finds in a page: every <svg> chart with its title, axis labels, tick
/// labels (position, text), markers (centre, series, <title>), histogram bars and integer-bit
/// marks; the tables' cell texts; verdict texts; every href/src; the number of <script> elements.
constexpr const char* extractor_source = R"PY(
import json, sys, xml.etree.ElementTree as ET
root = ET.parse(sys.argv[1]).getroot()
def classes(e): return (e.get('class') or '').split()
def text(e): return ''.join(e.itertext()) if e is not None else None
out = {'root': root.tag, 'scripts': 0, 'refs': [], 'charts': [], 'tables': [], 'verdicts': [], 'sections': []}
for e in root.iter():
    if e.tag.lower() == 'script': out['scripts'] += 1
    for k, v in e.attrib.items():
        if k.endswith('href') or k == 'src': out['refs'].append(v)
    if 'verdict' in classes(e): out['verdicts'].append(text(e))
    if e.tag == 'section': out['sections'].append(text(e.find('h2')))
    if e.tag == 'table':
        out['tables'].append([[text(c).strip() for c in row] for row in e.iter('tr')])
for svg in root.iter('svg'):
    c = {'chart': svg.get('data-chart'), 'node': svg.get('data-node'), 'title': text(svg.find('title')),
         'heading': None, 'x_label': None, 'y_label': None, 'x_ticks': [], 'y_ticks': [], 'markers': [],
         'bars': [], 'marks': []}
    for e in svg.iter():
        k = classes(e)
        if 'chart-title' in k: c['heading'] = text(e)
        if 'axis-label-x' in k: c['x_label'] = text(e)
        if 'axis-label-y' in k: c['y_label'] = text(e)
        if 'tick-label-x' in k: c['x_ticks'].append([float(e.get('x')), text(e)])
        if 'tick-label-y' in k: c['y_ticks'].append([float(e.get('y')), text(e)])
        if 'marker' in k:
            if e.tag == 'circle':
                x, y = float(e.get('cx')), float(e.get('cy'))
            else:
                x = float(e.get('x')) + float(e.get('width')) / 2
                y = float(e.get('y')) + float(e.get('height')) / 2
            c['markers'].append({'series': [s for s in k if s in ('s1', 's2')][0], 'x': x, 'y': y,
                                 'title': text(e.find('title'))})
        if 'bar' in k:
            c['bars'].append({'exp': int(e.get('data-exp')), 'x': float(e.get('x')), 'y': float(e.get('y')),
                              'width': float(e.get('width')), 'height': float(e.get('height')),
                              'title': text(e.find('title'))})
        if 'mark-proposed' in k or 'mark-analytic' in k:
            c['marks'].append({'kind': k[0], 'bits': int(e.get('data-bits')), 'x1': float(e.get('x1')),
                               'x2': float(e.get('x2'))})
    out['charts'].append(c)
print(json.dumps(out))
)PY";

bool have_python() { return fs::exists(python_exe); }

/// The page as Python's XML parser reads it; a parse error fails the test with Python's message.
json parse_page(const fs::path& html) {
  const fs::path dir = html.parent_path();
  const fs::path script = dir / "extract_page.py";
  std::ofstream(script) << extractor_source;
  const command_result r =
      run_command(std::string(python_exe) + " " + shell_quoted(script) + " " + shell_quoted(html), dir / "python.err");
  EXPECT_EQ(r.exit_code, 0) << "Python's XML parser rejects " << html << ":\n" << r.err;
  if (r.exit_code != 0) return json::object();
  return json::parse(r.out);
}

/// The page for the fixtures, written to `dir/report.html` through the library.
fs::path render_fixtures(const std::vector<std::string>& names, const fs::path& dir) {
  std::vector<std::pair<std::string, json>> inputs;
  for (const std::string& n : names) inputs.emplace_back(n, fxmimo::report::read_report_input(fixture(n)));
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << fxmimo::report::render_report_html(inputs);
  return html;
}

/// value -> pixel as the labelled ticks define it: the straight line through the first and last
/// labelled tick (labels read as numbers; `log` takes log10 of the label). Every other labelled
/// tick must lie on the same line.
struct tick_map {
  double v0 = 0, p0 = 0, v1 = 1, p1 = 1;
  double operator()(double v) const { return p0 + (v - v0) * (p1 - p0) / (v1 - v0); }
};

tick_map map_from_ticks(const json& ticks, bool log, const std::string& what) {
  std::vector<std::pair<double, double>> vp;  // (value, pixel)
  for (const json& t : ticks) {
    const std::string label = t[1].get<std::string>();
    if (log && label == "0") continue;  // the zero row of a log axis is off the scale
    const double v = std::stod(label);
    vp.emplace_back(log ? std::log10(v) : v, t[0].get<double>());
  }
  EXPECT_GE(vp.size(), 2u) << what << ": needs two labelled ticks";
  if (vp.size() < 2) return {};
  std::sort(vp.begin(), vp.end());
  tick_map m{vp.front().first, vp.front().second, vp.back().first, vp.back().second};
  for (const auto& [v, p] : vp) EXPECT_NEAR(m(v), p, pixel_tolerance) << what << ": tick " << v << " off the line";
  return m;
}

std::vector<json> charts_of(const json& page, const std::string& kind, const std::string& node) {
  std::vector<json> out;
  for (const json& c : page["charts"]) {
    if (c["chart"] == kind && c["node"] == node) out.push_back(c);
  }
  return out;
}

std::vector<json> markers_of(const json& chart, const std::string& series) {
  std::vector<json> out;
  for (const json& m : chart["markers"]) {
    if (m["series"] == series) out.push_back(m);
  }
  return out;
}

/// The points of one node in a sweep fixture, by width.
std::vector<json> sweep_points(const json& sweep, const std::string& node) {
  std::vector<json> pts;
  for (const json& p : sweep["points"]) {
    if (p["node"] == node) pts.push_back(p);
  }
  std::sort(pts.begin(), pts.end(), [](const json& a, const json& b) { return a["bits"] < b["bits"]; });
  return pts;
}

std::vector<std::string> sweep_nodes(const json& sweep) {
  std::vector<std::string> nodes;
  for (const json& p : sweep["points"]) {
    const std::string n = p["node"];
    if (std::find(nodes.begin(), nodes.end(), n) == nodes.end()) nodes.push_back(n);
  }
  return nodes;
}

class report_page : public ::testing::Test {
 protected:
  void SetUp() override {
    if (!have_python()) GTEST_SKIP() << python_exe << " is absent: the page cannot be checked by an XML parser";
  }
};

// ---------------------------------------------------------------------------------------------

struct sweep_case {
  const char* name;
  const char* file;
};

void PrintTo(const sweep_case& c, std::ostream* os) { *os << c.name; }

class sweep_charts : public report_page, public ::testing::WithParamInterface<sweep_case> {};

TEST_P(sweep_charts, one_marker_per_swept_width_in_every_chart_of_every_node) {
  const json sweep = load_fixture(GetParam().file);
  const json page = parse_page(render_fixtures({GetParam().file}, scratch_dir(GetParam().name)));
  const bool vary_int = sweep["vary"] == "int";
  for (const std::string& node : sweep_nodes(sweep)) {
    const std::size_t num_points = sweep_points(sweep, node).size();
    const auto sinr = charts_of(page, "sweep-sinr", node);
    const auto evm = charts_of(page, "sweep-evm", node);
    const auto ovf = charts_of(page, "sweep-overflow", node);
    ASSERT_EQ(sinr.size(), 1u) << node;
    ASSERT_EQ(evm.size(), 1u) << node;
    ASSERT_EQ(ovf.size(), vary_int ? 1u : 0u) << node << ": overflow chart only for integer-bit sweeps";
    EXPECT_EQ(sinr[0]["markers"].size(), num_points) << node;
    EXPECT_EQ(markers_of(evm[0], "s1").size(), num_points) << node << " implementation EVM";
    EXPECT_EQ(markers_of(evm[0], "s2").size(), num_points) << node << " fixed EVM";
    if (vary_int) {
      EXPECT_EQ(markers_of(ovf[0], "s1").size(), num_points) << node << " overflow rate";
    }
    for (const json& c : sinr[0]["markers"])
      EXPECT_FALSE(c["title"].is_null()) << node << ": every point has a <title>";
  }
}

TEST_P(sweep_charts, markers_sit_where_the_tick_labels_say) {
  const json sweep = load_fixture(GetParam().file);
  const json page = parse_page(render_fixtures({GetParam().file}, scratch_dir(GetParam().name)));
  struct metric {
    const char* chart;
    const char* series;
    const char* key;
  };
  for (const std::string& node : sweep_nodes(sweep)) {
    const auto pts = sweep_points(sweep, node);
    for (const metric m : {metric{"sweep-sinr", "s1", "sinr_loss_db"}, metric{"sweep-evm", "s1", "evm_impl_pct"},
                           metric{"sweep-evm", "s2", "evm_fixed_pct"}}) {
      const auto charts = charts_of(page, m.chart, node);
      ASSERT_EQ(charts.size(), 1u) << m.chart << " " << node;
      const std::string what = std::string(m.chart) + " " + node;
      const tick_map mx = map_from_ticks(charts[0]["x_ticks"], false, what + " x");
      const tick_map my = map_from_ticks(charts[0]["y_ticks"], false, what + " y");
      const auto markers = markers_of(charts[0], m.series);
      ASSERT_EQ(markers.size(), pts.size()) << what;
      for (std::size_t i = 0; i < pts.size(); ++i) {
        const double bits = pts[i]["bits"].get<double>();
        const double value = pts[i][m.key].get<double>();
        EXPECT_NEAR(markers[i]["x"].get<double>(), mx(bits), pixel_tolerance) << what << " bits " << bits;
        EXPECT_NEAR(markers[i]["y"].get<double>(), my(value), pixel_tolerance) << what << " " << m.key << " " << value;
      }
    }
  }
}

INSTANTIATE_TEST_SUITE_P(fixtures, sweep_charts,
                         ::testing::Values(sweep_case{"frac", "report_sweep_frac.json"},
                                           sweep_case{"int", "report_sweep_int.json"}),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

TEST_F(report_page, overflow_rate_on_a_log_scale_with_zero_rates_on_the_labelled_floor) {
  const json sweep = load_fixture("report_sweep_int.json");
  const json page = parse_page(render_fixtures({"report_sweep_int.json"}, scratch_dir("overflow")));
  for (const std::string& node : sweep_nodes(sweep)) {
    const auto charts = charts_of(page, "sweep-overflow", node);
    ASSERT_EQ(charts.size(), 1u) << node;
    const json& c = charts[0];
    EXPECT_NE(c["y_label"].get<std::string>().find("log"), std::string::npos) << c["y_label"];
    const tick_map mx = map_from_ticks(c["x_ticks"], false, node + " overflow x");
    const tick_map my = map_from_ticks(c["y_ticks"], true, node + " overflow y");
    double zero_row = NAN, lowest_decade = -INFINITY;
    for (const json& t : c["y_ticks"]) {
      if (t[1] == "0") {
        zero_row = t[0].get<double>();
      } else {
        lowest_decade = std::max(lowest_decade, t[0].get<double>());  // SVG y grows downwards
      }
    }
    ASSERT_FALSE(std::isnan(zero_row)) << node << ": the fixture has zero rates, so a tick labelled 0";
    EXPECT_GT(zero_row, lowest_decade) << node << ": the zero row lies below every decade";
    const auto pts = sweep_points(sweep, node);
    for (const char* series : {"s1", "s2"}) {
      const char* key = std::string(series) == "s1" ? "overflow_rate" : "max_overflow_rate";
      const auto markers = markers_of(c, series);
      ASSERT_EQ(markers.size(), pts.size()) << node << " " << series;
      for (std::size_t i = 0; i < pts.size(); ++i) {
        const double rate = pts[i][key].get<double>();
        EXPECT_NEAR(markers[i]["x"].get<double>(), mx(pts[i]["bits"].get<double>()), pixel_tolerance);
        const double expected_y = rate > 0 ? my(std::log10(rate)) : zero_row;
        EXPECT_NEAR(markers[i]["y"].get<double>(), expected_y, pixel_tolerance)
            << node << " " << key << " " << rate << " at " << pts[i]["bits"];
      }
    }
  }
}

TEST_F(report_page, every_chart_has_a_title_labelled_axes_with_units_and_tick_labels) {
  const json page = parse_page(
      render_fixtures({"report_sweep_frac.json", "report_sweep_int.json", "report_range.json"}, scratch_dir("axes")));
  ASSERT_FALSE(page["charts"].empty());
  const std::map<std::string, std::pair<std::string, std::string>> units{
      {"sweep-sinr", {"(bits)", "(dB)"}},
      {"sweep-evm", {"(bits)", "(%)"}},
      {"sweep-overflow", {"(bits)", "(log)"}},
      {"range-histogram", {"integer bits", "(log)"}}};
  for (const json& c : page["charts"]) {
    const std::string what = c["chart"].get<std::string>() + " " + c["node"].get<std::string>();
    ASSERT_TRUE(units.count(c["chart"])) << what;
    const auto& [x_unit, y_unit] = units.at(c["chart"]);
    EXPECT_FALSE(c["title"].get<std::string>().empty()) << what;
    EXPECT_NE(c["heading"].get<std::string>().find(c["node"].get<std::string>()), std::string::npos) << what;
    EXPECT_NE(c["x_label"].get<std::string>().find(x_unit), std::string::npos) << what << ": " << c["x_label"];
    EXPECT_NE(c["y_label"].get<std::string>().find(y_unit), std::string::npos) << what << ": " << c["y_label"];
    EXPECT_GE(c["x_ticks"].size(), 2u) << what;
    EXPECT_GE(c["y_ticks"].size(), 2u) << what;
  }
}

TEST_F(report_page, histograms_draw_every_bin_and_mark_the_proposed_integer_bits) {
  const json range = load_fixture("report_range.json");
  const json page = parse_page(render_fixtures({"report_range.json"}, scratch_dir("histogram")));
  std::vector<std::string> drawn;
  for (const json& c : page["charts"]) drawn.push_back(c["node"]);
  // Datapath order (README "How it computes"), not the alphabetical order of the JSON object.
  EXPECT_EQ(drawn, (std::vector<std::string>{"adc", "pilot_acc", "gram"}));
  for (const auto& [node, n] : range["nodes"].items()) {
    const auto charts = charts_of(page, "range-histogram", node);
    ASSERT_EQ(charts.size(), 1u) << node;
    const json& c = charts[0];
    const tick_map mx = map_from_ticks(c["x_ticks"], false, node + " x");
    const tick_map my = map_from_ticks(c["y_ticks"], true, node + " y");
    const int min_exp = n["hist_min_exp"];
    std::map<int, double> expected;  // exponent -> count, non-empty bins only
    for (std::size_t i = 0; i < n["log2_histogram"].size(); ++i) {
      const double count = n["log2_histogram"][i];
      if (count > 0) expected[min_exp + static_cast<int>(i)] = count;
    }
    ASSERT_EQ(c["bars"].size(), expected.size()) << node;
    for (const json& b : c["bars"]) {
      const int e = b["exp"];
      ASSERT_TRUE(expected.count(e)) << node << " bar at empty exponent " << e;
      // Bar e covers log2 |v| in [e, e+1) and reaches up to its count on the log axis.
      EXPECT_NEAR(b["x"].get<double>(), mx(e), pixel_tolerance) << node << " bar " << e;
      EXPECT_NEAR(b["x"].get<double>() + b["width"].get<double>(), mx(e + 1), 2 * pixel_tolerance) << node << " " << e;
      EXPECT_NEAR(b["y"].get<double>(), my(std::log10(expected[e])), pixel_tolerance) << node << " bar " << e;
      EXPECT_NE(b["title"].get<std::string>().find(std::to_string(static_cast<long long>(expected[e]))),
                std::string::npos)
          << b["title"];
    }
    int num_proposed = 0, num_analytic = 0;
    for (const json& m : c["marks"]) {
      const int bits = m["bits"];
      EXPECT_NEAR(m["x1"].get<double>(), mx(bits), pixel_tolerance) << node << " " << m["kind"];
      EXPECT_EQ(m["x1"], m["x2"]) << "a vertical line";
      if (m["kind"] == "mark-proposed") {
        ++num_proposed;
        EXPECT_EQ(bits, n["proposed_int_bits"].get<int>()) << node;
      } else {
        ++num_analytic;
        EXPECT_EQ(bits, n["analytic_int_bits"].get<int>()) << node;
      }
    }
    EXPECT_EQ(num_proposed, 1) << node;
    EXPECT_EQ(num_analytic, n["analytic_int_bits"].is_null() ? 0 : 1) << node;
  }
}

/// The table whose first row starts with `first_header`.
json table_starting(const json& page, const std::string& first_header) {
  for (const json& t : page["tables"]) {
    if (!t.empty() && !t[0].empty() && t[0][0] == first_header) return t;
  }
  ADD_FAILURE() << "no table headed '" << first_header << "'";
  return json::array();
}

struct tune_case {
  const char* name;
  const char* file;
  const char* verdict;
  const char* not_verdict;
};

void PrintTo(const tune_case& c, std::ostream* os) { *os << c.name; }

class tune_section : public report_page, public ::testing::WithParamInterface<tune_case> {};

TEST_P(tune_section, widths_cost_margins_and_the_verdict_of_the_re_verification) {
  const tune_case tc = GetParam();
  const json tune = load_fixture(tc.file);
  const json page = parse_page(render_fixtures({tc.file}, scratch_dir(tc.name)));
  ASSERT_FALSE(page["verdicts"].empty());
  const std::string verdict = page["verdicts"][0];
  EXPECT_NE(verdict.find(tc.verdict), std::string::npos) << verdict;
  EXPECT_EQ(verdict.find(tc.not_verdict), std::string::npos) << verdict;
  const json widths = table_starting(page, "node");
  for (const auto& [node, n] : tune["nodes"].items()) {
    const std::string name = node;  // a lambda may not capture a structured binding (clang 14)
    const auto row = std::find_if(widths.begin(), widths.end(), [&](const json& r) { return r[0] == name; });
    ASSERT_NE(row, widths.end()) << node;
    EXPECT_EQ((*row)[1], n["format"]);
    EXPECT_EQ((*row)[2], std::to_string(n["word_bits"].get<int>()));
    EXPECT_EQ((*row)[3], std::to_string(n["frac_bits"].get<int>()));
    EXPECT_EQ((*row)[5], std::to_string(n["cost"].get<int>()));
  }
  EXPECT_EQ(widths.back()[0], "total");
  EXPECT_EQ(widths.back().back(), std::to_string(tune["cost"].get<int>()));
  const json limits = table_starting(page, "limit");
  ASSERT_EQ(limits.size(), 4u);
  const json& evm_row = limits[2];
  EXPECT_NE(evm_row[0].get<std::string>().find("EVM"), std::string::npos);
  EXPECT_EQ(std::stod(evm_row[1].get<std::string>()), tune["limits"]["max_evm_pct"].get<double>());
  EXPECT_EQ(std::stod(evm_row[2].get<std::string>()), tune["verification"]["evm_impl_pct"].get<double>());
  EXPECT_EQ(std::stod(evm_row[3].get<std::string>()), tune["margins"]["evm_pct"].get<double>());
  EXPECT_EQ(evm_row[4], tune["verification"]["meets_limits"].get<bool>() ? "within" : "EXCEEDED");
}

INSTANTIATE_TEST_SUITE_P(fixtures, tune_section,
                         ::testing::Values(tune_case{"pass", "report_tune_pass.json", "PASS", "FAIL"},
                                           tune_case{"fail", "report_tune_fail.json", "FAIL", "PASS"}),
                         [](const auto& param_info) { return std::string(param_info.param.name); });

/// The page for a file outside tests/report/fixtures.
json page_of_file(const fs::path& file, const fs::path& dir) {
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << fxmimo::report::render_report_html(
      {fxmimo::report::read_results_file(file)});
  return parse_page(html);
}

/// Two figures agree to the 4 significant digits the page prints.
void expect_shown(const json& cell, double value, const std::string& what) {
  const double shown = std::stod(cell.get<std::string>());
  EXPECT_NEAR(shown, value, 5e-4 * std::abs(value) + 1e-300) << what << ": page shows " << cell;
}

TEST_F(report_page, every_figure_a_tune_file_holds_is_on_the_page) {
  // tests/fixtures/tune.json: written by an earlier fxmimo tune (commit 1e106d8).
  const fs::path file = fs::path(FXMIMO_SOURCE_DIR) / "tests/fixtures/tune.json";
  const json tune = json::parse(read_text(file));
  const json page = page_of_file(file, scratch_dir("tune_all_fields"));
  const json limits = table_starting(page, "limit");
  ASSERT_EQ(limits.size(), 5u) << "four limits";
  const std::vector<std::tuple<std::string, std::string, std::string>> rows{
      {"max_sinr_loss_db", "sinr_loss_db", "SINR loss"},
      {"max_evm_pct", "evm_impl_pct", "EVM"},
      {"max_overflow_rate", "max_overflow_rate", "overflow"},
      {"max_tx_power_error_db", "abs_tx_power_error_db", "power"}};
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const auto& [limit, figure, label] = rows[i];
    const json& row = limits[i + 1];
    EXPECT_NE(row[0].get<std::string>().find(label), std::string::npos) << row;
    expect_shown(row[1], tune["limits"][limit], label + " limit");
    expect_shown(row[2], tune["verification"][figure], label + " re-verified");
    expect_shown(row[5], tune["search"][figure], label + " on the search trials");
  }
  bool found_modes = false;
  for (const json& t : page["tables"]) {
    if (t[0] != json::array({"node", "rounding", "overflow"})) continue;
    found_modes = true;
    ASSERT_EQ(t.size(), 1 + tune["nodes"].size());
    for (std::size_t i = 1; i < t.size(); ++i) {
      const json& n = tune["nodes"][t[i][0].get<std::string>()];
      EXPECT_EQ(t[i][1], n["rounding"]) << t[i];
      EXPECT_EQ(t[i][2], n["overflow"]) << t[i];
    }
  }
  EXPECT_TRUE(found_modes) << "a table of the nodes' rounding and overflow";
  const json verdicts = page["verdicts"];
  ASSERT_FALSE(verdicts.empty());
  EXPECT_NE(verdicts[0].get<std::string>().find(std::to_string(tune["verification"]["trials"].get<int>()) + " fresh"),
            std::string::npos);
}

TEST_F(report_page, every_counter_a_run_file_holds_is_on_the_page) {
  // tests/fixtures/run.json: written by an earlier fxmimo run (commit 1e106d8).
  const fs::path file = fs::path(FXMIMO_SOURCE_DIR) / "tests/fixtures/run.json";
  const json run = json::parse(read_text(file));
  const json page = page_of_file(file, scratch_dir("run_all_fields"));
  const json nodes = table_starting(page, "node");
  ASSERT_EQ(nodes.size(), 1 + run["nodes"].size());
  const json& header = nodes[0];
  const auto column = [&](const std::string& name) {
    const auto it = std::find(header.begin(), header.end(), name);
    EXPECT_NE(it, header.end()) << name;
    return static_cast<std::size_t>(it - header.begin());
  };
  for (std::size_t i = 1; i < nodes.size(); ++i) {
    const json& n = run["nodes"][nodes[i][0].get<std::string>()];
    EXPECT_EQ(nodes[i][column("values")], std::to_string(n["values"].get<std::uint64_t>()));
    EXPECT_EQ(nodes[i][column("requantised")], std::to_string(n["requantized"].get<std::uint64_t>()));
    EXPECT_EQ(nodes[i][column("inexact")], std::to_string(n["inexact"].get<std::uint64_t>()));
    EXPECT_EQ(nodes[i][column("overflows")], std::to_string(n["overflows"].get<std::uint64_t>()));
    expect_shown(nodes[i][column("max |golden|")], n["max_abs_golden"], "max |golden|");
  }
}

TEST_F(report_page, a_run_file_without_kind_is_drawn_as_a_run) {
  const json run = load_fixture("report_run_nokind.json");
  ASSERT_FALSE(run.contains("kind"));
  const json page = parse_page(render_fixtures({"report_run_nokind.json"}, scratch_dir("run")));
  ASSERT_EQ(page["sections"].size(), 1u);
  EXPECT_EQ(page["sections"][0].get<std::string>().rfind("Run", 0), 0u) << page["sections"][0];
  const json nodes = table_starting(page, "node");
  ASSERT_EQ(nodes.size(), 3u);
  EXPECT_EQ(nodes[1][0], "adc") << "datapath order";
  EXPECT_EQ(nodes[1][4], "exact") << "sqnr_db null is an exact node";
  EXPECT_EQ(nodes[2][0], "dac");
  EXPECT_EQ(nodes[2][1], "Q0.11");
  const json users = table_starting(page, "user");
  EXPECT_EQ(users.size(), 1 + run["users"].size());
}

TEST_F(report_page, the_whole_page_is_one_file_without_scripts_or_links_out) {
  const fs::path dir = scratch_dir("self_contained");
  const fs::path html = render_fixtures({"report_sweep_frac.json", "report_sweep_int.json", "report_range.json",
                                         "report_tune_pass.json", "report_run_nokind.json"},
                                        dir);
  const json page = parse_page(html);
  EXPECT_EQ(page["root"], "html");
  EXPECT_EQ(page["scripts"], 0);
  for (const json& ref : page["refs"]) {
    EXPECT_EQ(ref.get<std::string>().rfind('#', 0), 0u) << "only links inside the page: " << ref;
  }
  EXPECT_EQ(page["sections"].size(), 5u);
  std::string text = read_text(html);
  std::transform(text.begin(), text.end(), text.begin(),
                 [](unsigned char ch) { return static_cast<char>(std::tolower(ch)); });
  for (const char* banned : {"<script", "http:", "https:", "url(", "@import", "@font-face", "javascript:"}) {
    EXPECT_EQ(text.find(banned), std::string::npos) << banned;
  }
  for (const char* handler : {" onload=", " onclick=", " onerror=", " onmouseover="}) {
    EXPECT_EQ(text.find(handler), std::string::npos) << "no event handlers: " << handler;
  }
}

TEST_F(report_page, names_with_markup_characters_are_text_not_markup) {
  const std::string evil = "a<b>&\"c'</svg><script>x</script>";
  json sweep = load_fixture("report_sweep_frac.json");
  for (json& p : sweep["points"]) p["node"] = evil + p["node"].get<std::string>();
  sweep["scenario"]["name"] = evil;
  const fs::path dir = scratch_dir("escaping");
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << fxmimo::report::render_report_html({{evil + ".json", sweep}});
  const json page = parse_page(html);
  EXPECT_EQ(page["scripts"], 0);
  const auto charts = charts_of(page, "sweep-sinr", evil + "adc");
  ASSERT_EQ(charts.size(), 1u);
  EXPECT_EQ(charts[0]["heading"], evil + "adc: SINR loss");
  EXPECT_EQ(charts[0]["markers"].size(), 8u);
}

TEST_F(report_page, edge_cases_single_width_missing_values_empty_histogram) {
  // Every key a writer always writes is present (the reader requires them); the figures are the
  // edge cases: null values, one width, a histogram without a single value.
  const json sweep = {{"kind", "sweep"},
                      {"scenario", {{"name", "edge"}}},
                      {"trials", 1},
                      {"vary", "int"},
                      {"points",
                       {{{"node", "norm"},
                         {"bits", 4},
                         {"format", "Q4.9"},
                         {"word_bits", 14},
                         {"frac_bits", 9},
                         {"sqnr_db", nullptr},
                         {"sinr_loss_db", nullptr},
                         {"evm_impl_pct", 0.0},
                         {"evm_fixed_pct", nullptr},
                         {"overflow_rate", 0.0}},
                        {{"node", "dac"},
                         {"bits", 1},
                         {"format", "Q1.11"},
                         {"word_bits", 13},
                         {"frac_bits", 11},
                         {"sqnr_db", 50.0},
                         {"sinr_loss_db", -0.5},
                         {"evm_impl_pct", 0.0},
                         {"evm_fixed_pct", 1.0},
                         {"overflow_rate", 1.0}},
                        {{"node", "dac"},
                         {"bits", 40},
                         {"format", "Q40.11"},
                         {"word_bits", 52},
                         {"frac_bits", 11},
                         {"sqnr_db", 60.0},
                         {"sinr_loss_db", -0.25},
                         {"evm_impl_pct", 0.0},
                         {"evm_fixed_pct", 1.0},
                         {"overflow_rate", 0.0}}}}};
  const json range = {{"kind", "range"},
                      {"scenario", {{"name", "edge"}}},
                      {"trials", 1},
                      {"overflow_prob", 1e-6},
                      {"nodes",
                       {{"symbols",
                         {{"values", 0},
                          {"max_abs", 0.0},
                          {"p99", 0.0},
                          {"p99_99", 0.0},
                          {"p99_9999", 0.0},
                          {"proposal_basis", "max+1"},
                          {"analytic_rule", ""},
                          {"hist_min_exp", -40},
                          {"log2_histogram", std::vector<int>(81, 0)},
                          {"proposed_int_bits", -30},
                          {"analytic_int_bits", nullptr}}}}}};
  const fs::path dir = scratch_dir("edge");
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << fxmimo::report::render_report_html({{"s.json", sweep}, {"r.json", range}});
  const json page = parse_page(html);
  for (const std::string node : {"norm", "dac"}) {
    const std::size_t n = node == "norm" ? 1 : 2;
    for (const char* kind : {"sweep-sinr", "sweep-evm", "sweep-overflow"}) {
      const auto charts = charts_of(page, kind, node);
      ASSERT_EQ(charts.size(), 1u) << kind << " " << node;
      EXPECT_EQ(markers_of(charts[0], "s1").size(), n) << kind << " " << node;
      EXPECT_GE(charts[0]["x_ticks"].size(), 2u) << kind << " " << node;
    }
  }
  // A missing value still gets its marker, and its title says so.
  const auto norm_sinr = charts_of(page, "sweep-sinr", "norm");
  ASSERT_EQ(norm_sinr.size(), 1u);
  EXPECT_NE(norm_sinr[0]["markers"][0]["title"].get<std::string>().find("—"), std::string::npos);
  // Negative SINR loss (noise) stays inside the axis: the map puts it between the outer ticks.
  const auto dac_sinr = charts_of(page, "sweep-sinr", "dac");
  ASSERT_EQ(dac_sinr.size(), 1u);
  const tick_map my = map_from_ticks(dac_sinr[0]["y_ticks"], false, "dac sinr y");
  EXPECT_NEAR(dac_sinr[0]["markers"][0]["y"].get<double>(), my(-0.5), pixel_tolerance);
  const auto hist = charts_of(page, "range-histogram", "symbols");
  ASSERT_EQ(hist.size(), 1u);
  EXPECT_TRUE(hist[0]["bars"].empty());
  ASSERT_EQ(hist[0]["marks"].size(), 1u);
  EXPECT_EQ(hist[0]["marks"][0]["bits"], -30);
}

TEST(report_input, kinds_and_errors_name_the_file) {
  using fxmimo::report::report_input_error;
  using fxmimo::report::report_input_kind;
  using fxmimo::report::report_kind;
  EXPECT_EQ(report_input_kind("f", load_fixture("report_run_nokind.json")), report_kind::run);
  EXPECT_EQ(report_input_kind("f", load_fixture("report_range.json")), report_kind::range);
  EXPECT_EQ(report_input_kind("f", load_fixture("report_sweep_int.json")), report_kind::sweep);
  EXPECT_EQ(report_input_kind("f", load_fixture("report_tune_pass.json")), report_kind::tune);
  const auto message = [](const json& doc) {
    try {
      report_input_kind("in.json", doc);
    } catch (const report_input_error& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  EXPECT_EQ(message(json::array()), "in.json: expected a JSON object with a \"kind\"");
  EXPECT_EQ(message({{"summary", 1}}), "in.json: no \"kind\" (expected run, range, sweep or tune)");
  EXPECT_EQ(message({{"kind", "plot"}}), "in.json: unknown kind \"plot\" (expected run, range, sweep or tune)");
  // A known kind missing what it needs: the message names the key.
  json sweep = load_fixture("report_sweep_frac.json");
  sweep["points"][3].erase("evm_impl_pct");
  try {
    fxmimo::report::render_report_html({{"s.json", sweep}});
    ADD_FAILURE() << "no error for a point without evm_impl_pct";
  } catch (const report_input_error& e) {
    EXPECT_EQ(std::string(e.what()), "s.json: points[3].evm_impl_pct: missing");
  }
}

// ---------------------------------------------------------------------------------------------
// The fxmimo program.

command_result run_fxmimo(const std::string& args, const fs::path& dir) {
  return run_command(std::string(FXMIMO_EXE) + " " + args + " </dev/null", dir / "fxmimo.err");
}

TEST(report_command, writes_the_page_atomically_and_says_where) {
  const fs::path dir = scratch_dir("command_ok");
  const fs::path out = dir / "report.html";
  const auto r = run_fxmimo("report " + shell_quoted(fixture("report_sweep_int.json")) + " " +
                                shell_quoted(fixture("report_tune_pass.json")) + " -o " + shell_quoted(out),
                            dir);
  EXPECT_EQ(r.exit_code, 0) << r.err;
  EXPECT_TRUE(r.err.empty()) << r.err;
  EXPECT_NE(r.out.find(out.string()), std::string::npos) << r.out;
  ASSERT_TRUE(fs::exists(out));
  EXPECT_FALSE(fs::exists(out.string() + ".partial")) << "the temporary file is renamed, not left behind";
  // The program writes exactly what the library renders for the same inputs.
  std::vector<std::pair<std::string, json>> inputs{
      {fixture("report_sweep_int.json").string(), load_fixture("report_sweep_int.json")},
      {fixture("report_tune_pass.json").string(), load_fixture("report_tune_pass.json")}};
  EXPECT_EQ(read_text(out), fxmimo::report::render_report_html(inputs));
}

struct bad_input_case {
  const char* name;
  const char* file;      ///< fixture, or "" for a file that does not exist
  const char* expected;  ///< part of the one-line message after the file name
};

void PrintTo(const bad_input_case& c, std::ostream* os) { *os << c.name; }

class report_command_errors : public ::testing::TestWithParam<bad_input_case> {};

TEST_P(report_command_errors, exit_2_with_one_line_naming_the_file_and_an_earlier_report_kept) {
  const bad_input_case c = GetParam();
  const fs::path dir = scratch_dir(std::string("command_") + c.name);
  const fs::path bad = std::string(c.file).empty() ? dir / "missing.json" : fixture(c.file);
  const fs::path out = dir / "report.html";
  std::ofstream(out) << "earlier report";
  const auto r = run_fxmimo("report " + shell_quoted(fixture("report_sweep_frac.json")) + " " + shell_quoted(bad) +
                                " -o " + shell_quoted(out),
                            dir);
  EXPECT_EQ(r.exit_code, 2) << r.err;
  EXPECT_EQ(std::count(r.err.begin(), r.err.end(), '\n'), 1) << "one line: " << r.err;
  EXPECT_EQ(r.err.rfind("fxmimo report: " + bad.string() + ": ", 0), 0u) << r.err;
  EXPECT_NE(r.err.find(c.expected), std::string::npos) << r.err;
  EXPECT_EQ(read_text(out), "earlier report") << "a failed run leaves the earlier report alone";
  EXPECT_FALSE(fs::exists(out.string() + ".partial"));
}

INSTANTIATE_TEST_SUITE_P(
    inputs, report_command_errors,
    ::testing::Values(bad_input_case{"unknown_kind", "report_unknown_kind.json", "unknown kind \"spectrum\""},
                      bad_input_case{"malformed", "report_malformed.json", "not valid JSON: parse error at line 1"},
                      bad_input_case{"missing_file", "", "cannot open the file"},
                      bad_input_case{"missing_key", "report_sweep_no_points.json", "points: missing"}),
    [](const auto& param_info) { return std::string(param_info.param.name); });

TEST(report_command, help_shows_examples_and_the_output_option) {
  const fs::path dir = scratch_dir("command_help");
  const auto r = run_fxmimo("report --help", dir);
  EXPECT_EQ(r.exit_code, 0) << r.err;
  EXPECT_NE(r.out.find("Examples:"), std::string::npos) << r.out;
  EXPECT_NE(r.out.find("fxmimo report sweep.json -o report.html"), std::string::npos) << r.out;
  EXPECT_NE(r.out.find("-o,--out"), std::string::npos) << r.out;
  const auto no_out = run_fxmimo("report " + shell_quoted(fixture("report_sweep_frac.json")), dir);
  EXPECT_NE(no_out.exit_code, 0) << "-o is required";
}

// ---------------------------------------------------------------------------------------------
// Headless Chromium (Debian package chromium).

/// Width and height from a PNG's IHDR chunk (PNG specification, 11.2.2: bytes 16..23, big endian).
std::pair<unsigned, unsigned> png_size(const std::string& png) {
  const auto be32 = [&](std::size_t at) {
    return (static_cast<unsigned>(static_cast<unsigned char>(png[at])) << 24) |
           (static_cast<unsigned>(static_cast<unsigned char>(png[at + 1])) << 16) |
           (static_cast<unsigned>(static_cast<unsigned char>(png[at + 2])) << 8) |
           static_cast<unsigned>(static_cast<unsigned char>(png[at + 3]));
  };
  return {be32(16), be32(20)};
}

std::size_t count_of(const std::string& text, const std::string& what) {
  std::size_t n = 0;
  for (auto at = text.find(what); at != std::string::npos; at = text.find(what, at + what.size())) ++n;
  return n;
}

TEST(report_in_chromium, renders_to_a_png_without_console_errors_and_keeps_every_marker) {
  if (!fs::exists(chromium_exe)) {
    GTEST_SKIP() << chromium_exe << " is absent (Debian package chromium): the page is not rendered here";
  }
  const fs::path dir = scratch_dir("chromium");
  const fs::path html = render_fixtures({"report_sweep_frac.json", "report_sweep_int.json", "report_range.json",
                                         "report_tune_fail.json", "report_run_nokind.json"},
                                        dir);
  const std::string page = read_text(html);
  const std::string flags =
      "--headless --no-sandbox --disable-gpu --disable-background-networking "
      "--disable-component-update --disable-sync --no-first-run --enable-logging=stderr --v=0 ";
  const fs::path png = dir / "report.png";
  const auto shot = run_command(
      std::string(chromium_exe) + " " + flags + "--user-data-dir=" + shell_quoted(dir / "profile-shot") +
          " --screenshot=" + shell_quoted(png) + " --window-size=1200,2000 " + shell_quoted("file://" + html.string()),
      dir / "chromium-shot.err");
  EXPECT_EQ(shot.exit_code, 0) << shot.err;
  ASSERT_TRUE(fs::exists(png)) << shot.err;
  const std::string image = read_text(png);
  ASSERT_GT(image.size(), 24u);
  EXPECT_EQ(image.substr(0, 8), std::string("\x89PNG\r\n\x1a\n", 8)) << "PNG signature (PNG specification, 5.2)";
  EXPECT_EQ(png_size(image), std::make_pair(1200u, 2000u));
  EXPECT_GT(image.size(), 20000u) << "a page of charts and tables, not a blank image";
  // Chromium logs every console message as "CONSOLE(line)": a page without scripts has none,
  // and a malformed SVG attribute would appear as an error here.
  EXPECT_EQ(shot.err.find("CONSOLE"), std::string::npos) << shot.err;

  // Chromium's own HTML parser keeps every marker and bar of the page (nothing swallowed).
  const auto dom =
      run_command(std::string(chromium_exe) + " " + flags + "--user-data-dir=" + shell_quoted(dir / "profile-dom") +
                      " --dump-dom " + shell_quoted("file://" + html.string()),
                  dir / "chromium-dom.err");
  EXPECT_EQ(dom.exit_code, 0) << dom.err;
  EXPECT_EQ(dom.err.find("CONSOLE"), std::string::npos) << dom.err;
  ASSERT_GT(count_of(page, "class=\"marker "), 0u);
  EXPECT_EQ(count_of(dom.out, "class=\"marker "), count_of(page, "class=\"marker "));
  EXPECT_EQ(count_of(dom.out, "class=\"bar\""), count_of(page, "class=\"bar\""));
  EXPECT_EQ(count_of(dom.out, "<svg "), count_of(page, "<svg "));
}

}  // namespace

namespace {

/// The marker of a chart whose <title> starts with `prefix`.
json marker_titled(const json& chart, const std::string& prefix) {
  for (const json& m : chart["markers"]) {
    if (m["title"].get<std::string>().rfind(prefix, 0) == 0) return m;
  }
  ADD_FAILURE() << "no marker titled " << prefix;
  return json::object();
}

}  // namespace

TEST_F(report_page, the_sinr_loss_distribution_is_an_empirical_cdf_on_its_ticks) {
  // The earlier program's run file with a distribution added: percentiles q -> -0.2 + 0.004 q dB
  // (q = 0..100), so the 5 / 50 / 95 % points are at -0.18, 0 and 0.18 dB.
  json run = json::parse(read_text(fs::path(FXMIMO_SOURCE_DIR) / "tests/fixtures/run.json"));
  json pct = json::array();
  for (int q = 0; q <= 100; ++q) pct.push_back(-0.2 + 0.004 * q);
  run["distribution"] = {{"sinr_loss_p5_db", -0.18},        {"sinr_loss_p50_db", 0.0},    {"sinr_loss_p95_db", 0.18},
                         {"sinr_loss_percentiles_db", pct}, {"evm_impl_p95_pct", 0.31},   {"evm_impl_max_pct", 0.42},
                         {"gram_condition_p50", 3.5},       {"gram_condition_p95", 7.25}, {"gram_condition_max", 11.0}};
  const fs::path dir = scratch_dir("run_cdf");
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << fxmimo::report::render_report_html({{"run.json", run}});
  const json page = parse_page(html);
  const std::vector<json> cdfs = charts_of(page, "sinr-loss-cdf", "");
  ASSERT_EQ(cdfs.size(), 1U);
  const json& c = cdfs[0];
  EXPECT_EQ(c["x_label"], "SINR loss (dB)");
  const tick_map mx = map_from_ticks(c["x_ticks"], false, "cdf x");
  const tick_map my = map_from_ticks(c["y_ticks"], false, "cdf y");
  ASSERT_EQ(c["markers"].size(), 3U);
  for (const auto& [q, v] : std::vector<std::pair<int, double>>{{5, -0.18}, {50, 0.0}, {95, 0.18}}) {
    const json m = marker_titled(c, std::to_string(q) + " %");
    EXPECT_NEAR(m["x"].get<double>(), mx(v), pixel_tolerance) << q;
    EXPECT_NEAR(m["y"].get<double>(), my(q / 100.0), pixel_tolerance) << q;
  }
  const std::string text = read_text(html);
  EXPECT_NE(text.find("3.5 median, 7.25 at 95 %, 11 worst"), std::string::npos);
}

TEST_F(report_page, a_key_sweep_draws_sinr_and_interference_against_the_value) {
  json sweep = {{"kind", "key-sweep"},
                {"schema", 1},
                {"scenario", {{"name", "mf"}, {"source", ""}}},
                {"trials", 4},
                {"key", "array.antennas"},
                {"points", json::array()}};
  for (const auto& [m, isr] : std::vector<std::pair<int, double>>{{16, -7.0}, {64, -13.0}, {256, -19.0}}) {
    sweep["points"].push_back({{"value", std::to_string(m)},
                               {"sinr_golden_db", 10.0 - isr},
                               {"sinr_fixed_db", 9.9 - isr},
                               {"sinr_loss_db", 0.1},
                               {"evm_impl_pct", 0.5},
                               {"interference_db", isr},
                               {"max_overflow_rate", 0.0},
                               {"growth_int_bits", {{"power_acc", m / 16}}}});
  }
  const fs::path dir = scratch_dir("key_sweep");
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << fxmimo::report::render_report_html({{"k.json", sweep}});
  const json page = parse_page(html);
  const std::vector<json> charts = charts_of(page, "key-sweep", "");
  ASSERT_EQ(charts.size(), 1U);
  const tick_map mx = map_from_ticks(charts[0]["x_ticks"], false, "key x");
  const tick_map my = map_from_ticks(charts[0]["y_ticks"], false, "key y");
  const std::vector<json> interference = markers_of(charts[0], "s2");
  ASSERT_EQ(interference.size(), 3U);
  EXPECT_NEAR(interference[2]["x"].get<double>(), mx(256), pixel_tolerance);
  EXPECT_NEAR(interference[2]["y"].get<double>(), my(-19.0), pixel_tolerance);
  const json table = table_starting(page, "array.antennas");
  ASSERT_EQ(table.size(), 4U);
  EXPECT_EQ(table[3].back(), "16");  // power_acc's integer bits at 256 antennas
}

// ---------------------------------------------------------------------------------------------
// The uplink: a run and a sweep of examples/pier-64-uplink.toml computed here (analysis), their
// records drawn, and the page read back by Python's XML parser against the analysis's own figures.

namespace {

namespace an = fxmimo::analysis;
namespace rep = fxmimo::report;

struct uplink_input {
  fxmimo::golden::scenario scen;
  fxmimo::datapath::datapath_config config;
};

uplink_input load_pier() {
  const std::string text = read_text(fs::path(FXMIMO_SOURCE_DIR) / "examples/pier-64-uplink.toml");
  return {fxmimo::golden::parse_scenario_text(text, "pier-64-uplink.toml"),
          fxmimo::datapath::parse_datapath_config(text, "pier-64-uplink.toml")};
}

json page_of_records(const std::vector<rep::named_record>& records, const fs::path& dir) {
  const fs::path html = dir / "report.html";
  std::ofstream(html, std::ios::binary) << rep::render_report_html(records);
  return parse_page(html);
}

bool has_table(const json& page, const std::string& first_header) {
  for (const json& t : page["tables"])
    if (!t.empty() && !t[0].empty() && t[0][0] == first_header) return true;
  return false;
}

/// count / bits, computed here from the counts (the definition of a rate per bit).
double per_bit_rate(std::uint64_t count, std::uint64_t bits) {
  return static_cast<double>(count) / static_cast<double>(bits);
}

}  // namespace

TEST_F(report_page, a_run_with_an_uplink_shows_its_users_bit_errors_and_llr_flips) {
  const uplink_input in = load_pier();
  const an::run_results run = an::run_trials(in.scen, in.config, an::first_trials(2), 0);
  ASSERT_TRUE(run.uplink.has_value());
  const an::uplink_results& u = *run.uplink;
  const json page = page_of_records({{"run.json", rep::make_record(run)}}, scratch_dir("run_uplink"));
  const json users = table_starting(page, "uplink user");
  ASSERT_EQ(users.size(), 1 + u.users.size() + 1) << "header, one row per user, the mean";
  for (std::size_t k = 0; k < u.users.size(); ++k) {
    const json& row = users[k + 1];
    const an::user_result& x = u.users[k];
    const std::string what = "uplink user " + std::to_string(k);
    EXPECT_EQ(row[0], std::to_string(k));
    expect_shown(row[1], x.sinr_golden_db, what + " SINR golden");
    expect_shown(row[2], x.sinr_fixed_db, what + " SINR fixed");
    expect_shown(row[3], x.sinr_golden_db - x.sinr_fixed_db, what + " SINR loss");
    expect_shown(row[4], x.evm_golden_pct, what + " EVM golden");
    expect_shown(row[5], x.evm_fixed_pct, what + " EVM fixed");
  }
  EXPECT_EQ(users.back()[0], "mean");
  expect_shown(users.back()[3], u.sinr_loss_db, "uplink mean SINR loss");
  const json decisions = table_starting(page, "uplink decisions");
  ASSERT_EQ(decisions.size(), 5u);
  // Counts in full; rates to the 3 significant digits shown (half a unit in the third digit).
  EXPECT_EQ(decisions[1][1], std::to_string(u.bit_errors_golden));
  EXPECT_EQ(decisions[1][2], std::to_string(u.bit_errors_fixed));
  EXPECT_EQ(decisions[1][3], std::to_string(u.bits));
  // 64-QAM, 8 users, 168 symbols, 2 trials: 6 x 8 x 168 x 2 bits.
  EXPECT_EQ(u.bits, 6u * 8u * 168u * 2u);
  const auto shown3 = [](const json& cell, double v, const std::string& what) {
    EXPECT_NEAR(std::stod(cell.get<std::string>()), v, 5e-3 * v) << what << ": page shows " << cell;
  };
  shown3(decisions[2][1], per_bit_rate(u.bit_errors_golden, u.bits), "BER golden");
  shown3(decisions[2][2], per_bit_rate(u.bit_errors_fixed, u.bits), "BER fixed");
  EXPECT_EQ(decisions[3][2], std::to_string(u.llr_sign_flips));
  shown3(decisions[4][2], per_bit_rate(u.llr_sign_flips, u.bits), "LLR flip rate");
  // A run without an uplink (the earlier program's file) has none of it.
  const json plain = page_of_file(fs::path(FXMIMO_SOURCE_DIR) / "tests/fixtures/run.json", scratch_dir("run_plain"));
  EXPECT_FALSE(has_table(plain, "uplink user"));
  EXPECT_FALSE(has_table(plain, "uplink decisions"));
}

TEST_F(report_page, a_sweep_with_an_uplink_draws_its_loss_and_error_rates_where_the_ticks_say) {
  const uplink_input in = load_pier();
  const an::sweep_results sweep = an::run_sweep(in.scen, in.config, {fxmimo::datapath::node_id::ul_eq}, 2, 4,
                                                an::sweep_axis::frac, an::first_trials(2), 0);
  const rep::sweep_record record = rep::make_record(sweep);
  const fs::path dir = scratch_dir("sweep_uplink");
  // The record survives its file: written, read back, written again, the same text.
  const fs::path file = dir / "sweep.json";
  std::ofstream(file, std::ios::binary) << rep::to_json(record).dump(2);
  EXPECT_EQ(rep::to_json(rep::read_results_file(file).record).dump(2), rep::to_json(record).dump(2));
  const json page = page_of_records({{"sweep.json", record}}, dir);
  const auto loss = charts_of(page, "sweep-uplink-sinr", "ul_eq");
  const auto errors = charts_of(page, "sweep-uplink-errors", "ul_eq");
  ASSERT_EQ(loss.size(), 1u);
  ASSERT_EQ(errors.size(), 1u);
  EXPECT_NE(loss[0]["y_label"].get<std::string>().find("(dB)"), std::string::npos);
  EXPECT_NE(errors[0]["y_label"].get<std::string>().find("(log)"), std::string::npos);
  const tick_map lx = map_from_ticks(loss[0]["x_ticks"], false, "uplink loss x");
  const tick_map ly = map_from_ticks(loss[0]["y_ticks"], false, "uplink loss y");
  const tick_map ex = map_from_ticks(errors[0]["x_ticks"], false, "uplink errors x");
  const tick_map ey = map_from_ticks(errors[0]["y_ticks"], true, "uplink errors y");
  double zero_row = NAN;
  for (const json& t : errors[0]["y_ticks"])
    if (t[1] == "0") zero_row = t[0].get<double>();
  const auto loss_markers = markers_of(loss[0], "s1");
  const auto ber_markers = markers_of(errors[0], "s1");
  const auto flip_markers = markers_of(errors[0], "s2");
  ASSERT_EQ(sweep.points.size(), 3u);
  ASSERT_EQ(loss_markers.size(), 3u);
  ASSERT_EQ(ber_markers.size(), 3u);
  ASSERT_EQ(flip_markers.size(), 3u);
  const json values = table_starting(page, "F (bits)");
  ASSERT_EQ(values.size(), 4u);
  const auto column = [&](const std::string& name) {
    const auto it = std::find(values[0].begin(), values[0].end(), name);
    EXPECT_NE(it, values[0].end()) << name;
    return static_cast<std::size_t>(it - values[0].begin());
  };
  for (std::size_t i = 0; i < 3; ++i) {
    const an::sweep_point& p = sweep.points[i];
    ASSERT_TRUE(p.uplink.has_value());
    const an::uplink_results& u = *p.uplink;
    const std::string what = "ul_eq F = " + std::to_string(p.bits);
    EXPECT_NEAR(loss_markers[i]["x"].get<double>(), lx(p.bits), pixel_tolerance) << what;
    EXPECT_NEAR(loss_markers[i]["y"].get<double>(), ly(u.sinr_loss_db), pixel_tolerance) << what;
    const auto y_of = [&](std::uint64_t count) {
      return count > 0 ? ey(std::log10(per_bit_rate(count, u.bits))) : zero_row;
    };
    EXPECT_NEAR(ber_markers[i]["x"].get<double>(), ex(p.bits), pixel_tolerance) << what;
    EXPECT_NEAR(ber_markers[i]["y"].get<double>(), y_of(u.bit_errors_fixed), pixel_tolerance) << what << " BER";
    EXPECT_NEAR(flip_markers[i]["y"].get<double>(), y_of(u.llr_sign_flips), pixel_tolerance) << what << " flips";
    const json& row = values[i + 1];
    EXPECT_EQ(row[column("uplink bit errors fixed")], std::to_string(u.bit_errors_fixed)) << what;
    EXPECT_EQ(row[column("uplink bit errors golden")], std::to_string(u.bit_errors_golden)) << what;
    EXPECT_EQ(row[column("uplink bits")], std::to_string(u.bits)) << what;
    EXPECT_EQ(row[column("LLR flips")], std::to_string(u.llr_sign_flips)) << what;
    expect_shown(row[column("uplink SINR loss (dB)")], u.sinr_loss_db, what + " uplink SINR loss");
  }
  // Sweeps without an uplink (the fixtures) draw no uplink chart and have no uplink column.
  const json plain =
      parse_page(render_fixtures({"report_sweep_frac.json", "report_sweep_int.json"}, scratch_dir("sweep_plain")));
  for (const json& c : plain["charts"]) {
    EXPECT_EQ(c["chart"].get<std::string>().find("uplink"), std::string::npos) << c["chart"];
  }
  for (const json& t : plain["tables"]) {
    for (const json& h : t[0]) EXPECT_EQ(h.get<std::string>().find("uplink"), std::string::npos) << h;
  }
}
