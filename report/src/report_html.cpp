// The visual report: results files (JSON) drawn into one self-contained page with inline SVG.
//
// The page is HTML that is also well-formed XML: every element closed, attributes quoted, every
// text escaped, no named entities besides the five of XML, no namespace URIs (an HTML parser puts
// <svg> into the SVG namespace by itself). No scripts, no links out of the page, no fonts but the
// reader's own sans-serif. Drawing is black and grey on white; series differ by marker shape and
// line dash, never by colour alone, and every data point carries a <title> with its value.
#include "fxmimo/report/report_html.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <climits>
#include <cmath>
#include <fstream>
#include <functional>
#include <iterator>
#include <map>
#include <optional>
#include <set>
#include <sstream>
#include <string_view>

#include "fxmimo/datapath/config.hpp"
#include "fxmimo/report/report.hpp"

namespace fxmimo::report {

using nlohmann::json;

namespace {

// ---------------------------------------------------------------------------------------------
// Text

/// Text for element content and attribute values: the five XML specials escaped; control
/// characters XML 1.0 forbids become '?'.
std::string esc(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char ch : text) {
    switch (ch) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default:
        if (static_cast<unsigned char>(ch) < 0x20 && ch != '\t' && ch != '\n' && ch != '\r') {
          out += '?';
        } else {
          out += ch;
        }
    }
  }
  return out;
}

/// A number for people: `sig` significant digits, exponents without padding ("1.5e-6").
std::string num(double v, int sig = 4) {
  if (std::isnan(v)) return "NaN";
  if (std::isinf(v)) return v > 0 ? "inf" : "-inf";
  std::string s = fmt::format("{:.{}g}", v, sig);
  const auto e = s.find('e');
  if (e == std::string::npos) return s;
  std::string mantissa = s.substr(0, e);
  const bool negative = s[e + 1] == '-';
  std::string digits = s.substr(e + 2);
  digits.erase(0, std::min(digits.find_first_not_of('0'), digits.size() - 1));
  return mantissa + "e" + (negative ? "-" : "") + digits;
}

/// "1 node", "3 nodes".
std::string count_of(std::size_t n, std::string_view noun) {
  return fmt::format("{} {}{}", n, noun, n == 1 ? "" : "s");
}

std::string num_or_dash(const std::optional<double>& v, int sig = 4) { return v ? num(*v, sig) : "—"; }

/// A pixel coordinate with two decimals (never "-0.00").
std::string px(double v) {
  if (std::abs(v) < 0.005) v = 0.0;
  return fmt::format("{:.2f}", v);
}

// ---------------------------------------------------------------------------------------------
// Reading the inputs: every access names the file and key it failed on.

struct where {
  std::string file;
  std::string path;

  where at(std::string_view key) const {
    return {file, path.empty() ? std::string(key) : path + "." + std::string(key)};
  }
  where at(std::size_t index) const { return {file, fmt::format("{}[{}]", path, index)}; }
  [[noreturn]] void fail(std::string_view what) const {
    throw report_input_error(fmt::format("{}: {}: {}", file, path.empty() ? "top level" : path, what));
  }
};

const json& member(const json& obj, const where& w, std::string_view key) {
  if (!obj.is_object()) w.fail("expected an object");
  const auto it = obj.find(std::string(key));
  if (it == obj.end()) w.at(key).fail("missing");
  return *it;
}

const json* find_member(const json& obj, std::string_view key) {
  if (!obj.is_object()) return nullptr;
  const auto it = obj.find(std::string(key));
  return it == obj.end() ? nullptr : &*it;
}

const json& object_member(const json& obj, const where& w, std::string_view key) {
  const json& v = member(obj, w, key);
  if (!v.is_object()) w.at(key).fail("expected an object");
  return v;
}

const json& array_member(const json& obj, const where& w, std::string_view key) {
  const json& v = member(obj, w, key);
  if (!v.is_array()) w.at(key).fail("expected an array");
  return v;
}

double number(const json& obj, const where& w, std::string_view key) {
  const json& v = member(obj, w, key);
  if (!v.is_number()) w.at(key).fail("expected a number");
  return v.get<double>();
}

int integer(const json& obj, const where& w, std::string_view key) {
  const json& v = member(obj, w, key);
  if (!v.is_number_integer() || v.get<long long>() < INT_MIN || v.get<long long>() > INT_MAX) {
    w.at(key).fail("expected an integer");
  }
  return v.get<int>();
}

/// A number that may be null (the writers store NaN, infinity and "exact" as null).
std::optional<double> number_or_null(const json& obj, const where& w, std::string_view key) {
  const json& v = member(obj, w, key);
  if (v.is_null()) return std::nullopt;
  if (!v.is_number()) w.at(key).fail("expected a number or null");
  return v.get<double>();
}

/// An optional key: absent or null gives nullopt; present, it must be a number.
std::optional<double> optional_number(const json& obj, const where& w, std::string_view key) {
  const json* v = find_member(obj, key);
  if (v == nullptr || v->is_null()) return std::nullopt;
  if (!v->is_number()) w.at(key).fail("expected a number");
  return v->get<double>();
}

std::string text(const json& obj, const where& w, std::string_view key) {
  const json& v = member(obj, w, key);
  if (!v.is_string()) w.at(key).fail("expected a string");
  return v.get<std::string>();
}

std::string optional_text(const json& obj, std::string_view key, std::string fallback = "") {
  const json* v = find_member(obj, key);
  if (v == nullptr) return fallback;
  if (v->is_string()) return v->get<std::string>();
  if (v->is_number()) return num(v->get<double>(), 6);
  if (v->is_boolean()) return v->get<bool>() ? "yes" : "no";
  return fallback;
}

/// Node names in datapath order (README "How it computes"), names the model does not know last.
std::vector<std::string> datapath_order(std::vector<std::string> names) {
  const auto rank = [](const std::string& name) {
    const auto id = datapath::parse_node_name(name);
    return id ? datapath::index_of(*id) : datapath::node_count();
  };
  std::stable_sort(names.begin(), names.end(),
                   [&](const std::string& a, const std::string& b) { return rank(a) < rank(b); });
  return names;
}

std::vector<std::string> object_keys(const json& obj) {
  std::vector<std::string> keys;
  for (auto it = obj.begin(); it != obj.end(); ++it) keys.push_back(it.key());
  return datapath_order(std::move(keys));
}

// ---------------------------------------------------------------------------------------------
// Axes

struct tick {
  double value = 0.0;  ///< in the axis's domain (log10 of the value on log axes)
  std::string label;   ///< empty: an unlabelled minor tick
};

/// An axis domain [lo, hi] and its ticks.
struct axis {
  double lo = 0.0, hi = 1.0;
  std::vector<tick> ticks;
};

/// Maps a domain value to pixels: p0 + (v - d0) (p1 - p0) / (d1 - d0).
struct linear_map {
  double d0, d1, p0, p1;
  double operator()(double v) const { return p0 + (v - d0) * (p1 - p0) / (d1 - d0); }
};

/// Ticks at multiples of a round step (1, 2 or 5 times a power of ten), about `target` of them,
/// the domain widened to the outer ticks so the data never touch an unlabelled edge.
axis round_axis(double lo, double hi, int target) {
  if (!(hi > lo)) {
    const double pad = lo == 0.0 ? 1.0 : std::abs(lo) * 0.1;
    if (lo == 0.0) {
      hi = lo + pad;
    } else {
      lo -= pad;
      hi += pad;
    }
  }
  const double raw = (hi - lo) / target;
  int exp10 = static_cast<int>(std::floor(std::log10(raw)));
  const double norm = raw / std::pow(10.0, exp10);
  int mult = norm < 1.5 ? 1 : norm < 3.0 ? 2 : norm < 7.0 ? 5 : 10;
  if (mult == 10) {
    mult = 1;
    ++exp10;
  }
  const double step = mult * std::pow(10.0, exp10);
  const int decimals = std::max(0, -exp10);
  const auto first = static_cast<long long>(std::floor(lo / step + 1e-9));
  const auto last = static_cast<long long>(std::ceil(hi / step - 1e-9));
  axis a;
  a.lo = static_cast<double>(first) * step;
  a.hi = static_cast<double>(last) * step;
  for (long long i = first; i <= last; ++i) {
    const double v = i == 0 ? 0.0 : static_cast<double>(i) * step;
    a.ticks.push_back({v, fmt::format("{:.{}f}", v, decimals)});
  }
  return a;
}

/// An axis of whole numbers (bit counts, exponents) from lo to hi with half a unit beside the
/// outer values; labelled every 1, 2, 5, 10, ... so that at most `max_labels` labels show.
axis integer_axis(int lo, int hi, int max_labels, double pad = 0.5) {
  if (lo == hi) {
    --lo;
    ++hi;
  }
  int step = 1;
  for (const int s : {1, 2, 5, 10, 20, 50, 100}) {
    step = s;
    if ((hi - lo) / s + 1 <= max_labels) break;
  }
  axis a;
  a.lo = lo - pad;
  a.hi = hi + pad;
  for (int v = lo; v <= hi; ++v) {
    if (v % step == 0) a.ticks.push_back({static_cast<double>(v), std::to_string(v)});
  }
  return a;
}

/// The label of the decade 10^e on a log axis: "1", "10", "100", then "1e3", "1e-2", ...
std::string decade_label(int e) {
  if (e >= 0 && e <= 2) return e == 0 ? "1" : e == 1 ? "10" : "100";
  return fmt::format("1e{}", e);
}

/// Decades lo_exp .. hi_exp (domain log10), labelled on every decade up to 7 of them, else on
/// every second one.
axis decade_axis(double lo_log, int lo_exp, int hi_exp) {
  axis a;
  a.lo = lo_log;
  a.hi = hi_exp;
  const int every = hi_exp - lo_exp > 7 ? 2 : 1;
  for (int e = lo_exp; e <= hi_exp; ++e) {
    a.ticks.push_back({static_cast<double>(e), (hi_exp - e) % every == 0 ? decade_label(e) : std::string()});
  }
  return a;
}

// ---------------------------------------------------------------------------------------------
// Charts

constexpr double chart_width = 340.0;
constexpr double chart_height = 252.0;

/// The plot area inside a chart, in pixels.
struct plot_area {
  double left, top, right, bottom;
};

struct chart_point {
  double x = 0.0;
  std::optional<double> y;  ///< nullopt: no value (drawn at the top edge, hollow)
  std::string title;        ///< the point's <title>: what it is and its value
};

struct chart_series {
  std::string name;
  std::vector<chart_point> points;
};

struct xy_chart {
  std::string id;
  std::string kind;  ///< data-chart: "sweep-sinr", "sweep-evm", "sweep-overflow"
  std::string node;
  std::string title;
  std::string x_label;
  std::string y_label;
  bool log_y = false;                ///< log10 axis; values <= 0 sit on a separate floor row labelled "0"
  std::vector<chart_series> series;  ///< at most two: solid with filled circles, dashed with open squares
};

std::string svg_open(std::string& out, const std::string& id, const std::string& kind, const std::string& node,
                     const std::string& title) {
  out += fmt::format(
      "<svg class=\"chart\" id=\"{}\" data-chart=\"{}\" data-node=\"{}\" width=\"{}\" height=\"{}\" "
      "viewBox=\"0 0 {} {}\" role=\"img\" aria-label=\"{}\">\n<title>{}</title>\n",
      esc(id), esc(kind), esc(node), chart_width, chart_height, chart_width, chart_height, esc(title), esc(title));
  out += fmt::format("<rect x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#fff\" stroke=\"none\"/>\n", chart_width,
                     chart_height);
  out += fmt::format("<text class=\"chart-title\" x=\"{}\" y=\"17\" text-anchor=\"middle\">{}</text>\n",
                     px(chart_width / 2), esc(title));
  return out;
}

/// Frame, grid, ticks, tick labels and axis labels.
void draw_axes(std::string& out, const plot_area& pa, const axis& xa, const linear_map& mx, const axis& ya,
               const linear_map& my, const std::string& x_label, const std::string& y_label) {
  for (const tick& t : ya.ticks) {
    const double y = my(t.value);
    out += fmt::format(
        "<line class=\"grid\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"#c8c8c8\" "
        "stroke-width=\"0.6\"/>\n",
        px(pa.left), px(y), px(pa.right), px(y));
  }
  out += fmt::format(
      "<rect class=\"plot-frame\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" "
      "stroke=\"#000\" stroke-width=\"1\"/>\n",
      px(pa.left), px(pa.top), px(pa.right - pa.left), px(pa.bottom - pa.top));
  for (const tick& t : xa.ticks) {
    const double x = mx(t.value);
    out += fmt::format("<line class=\"tick-x\" x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\" stroke=\"#000\"/>\n", px(x),
                       px(pa.bottom), px(pa.bottom + 4));
    if (!t.label.empty()) {
      out += fmt::format("<text class=\"tick-label-x\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>\n", px(x),
                         px(pa.bottom + 16), esc(t.label));
    }
  }
  for (const tick& t : ya.ticks) {
    const double y = my(t.value);
    out += fmt::format("<line class=\"tick-y\" x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"#000\"/>\n",
                       px(pa.left - 4), px(y), px(pa.left));
    if (!t.label.empty()) {
      out += fmt::format(
          "<text class=\"tick-label-y\" x=\"{}\" y=\"{}\" text-anchor=\"end\" dominant-baseline=\"middle\">{}</text>\n",
          px(pa.left - 6), px(y), esc(t.label));
    }
  }
  out += fmt::format("<text class=\"axis-label axis-label-x\" x=\"{}\" y=\"{}\" text-anchor=\"middle\">{}</text>\n",
                     px((pa.left + pa.right) / 2), px(chart_height - 8), esc(x_label));
  out += fmt::format(
      "<text class=\"axis-label axis-label-y\" x=\"{}\" y=\"14\" transform=\"rotate(-90)\" "
      "text-anchor=\"middle\">{}</text>\n",
      px(-(pa.top + pa.bottom) / 2), esc(y_label));
}

/// The marker of series `s` (0: filled circle, 1: open square) centred at (x, y).
void draw_marker(std::string& out, std::size_t s, double x, double y, bool missing, const std::string& title) {
  const std::string cls = fmt::format("marker s{}{}", s + 1, missing ? " missing" : "");
  if (s == 0) {
    out += fmt::format(
        "<circle class=\"{}\" cx=\"{}\" cy=\"{}\" r=\"3.5\" fill=\"{}\" stroke=\"#000\" "
        "stroke-width=\"1.2\"><title>{}</title></circle>\n",
        cls, px(x), px(y), missing ? "#fff" : "#000", esc(title));
  } else {
    // Unfilled, so a filled circle of the first series at the same place shows through.
    out += fmt::format(
        "<rect class=\"{}\" x=\"{}\" y=\"{}\" width=\"7\" height=\"7\" fill=\"none\" stroke=\"#000\" "
        "stroke-width=\"1.4\"><title>{}</title></rect>\n",
        cls, px(x - 3.5), px(y - 3.5), esc(title));
  }
}

std::string dash_of(std::size_t s) { return s == 0 ? "" : " stroke-dasharray=\"5 3\""; }

/// One entry of a chart's legend: a line sample in the series' dash with its marker.
struct legend_item {
  std::string name;
  std::size_t series;  ///< 0: solid, filled circle; 1: dashed, open square
  double stroke_width;
  bool with_marker = true;
};

/// The legend in a row above the plot, starting at x; entries are spaced by an estimate of the
/// text width (6.2 px per character at 11 px sans-serif).
void draw_legend(std::string& out, const std::vector<legend_item>& items, double x, double y) {
  for (const legend_item& item : items) {
    out += fmt::format(
        "<g class=\"legend-item\"><line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"#000\" "
        "stroke-width=\"{3}\"{4}/>",
        px(x), px(y), px(x + 24), item.stroke_width, dash_of(item.series));
    if (item.with_marker && item.series == 0) {
      out += fmt::format("<circle cx=\"{}\" cy=\"{}\" r=\"3.5\" fill=\"#000\" stroke=\"#000\"/>", px(x + 12), px(y));
    } else if (item.with_marker) {
      out += fmt::format(
          "<rect x=\"{}\" y=\"{}\" width=\"7\" height=\"7\" fill=\"#fff\" stroke=\"#000\" "
          "stroke-width=\"1.4\"/>",
          px(x + 8.5), px(y - 3.5));
    }
    out += fmt::format("<text x=\"{}\" y=\"{}\" dominant-baseline=\"middle\">{}</text></g>\n", px(x + 29), px(y),
                       esc(item.name));
    x += 29 + 6.2 * static_cast<double>(item.name.size()) + 14;
  }
}

std::string render_xy_chart(const xy_chart& c) {
  const bool with_legend = c.series.size() > 1;
  const plot_area pa{66.0, with_legend ? 46.0 : 30.0, chart_width - 14.0, chart_height - 46.0};

  int x_min = INT_MAX, x_max = INT_MIN;
  std::vector<double> ys;
  for (const chart_series& s : c.series) {
    for (const chart_point& p : s.points) {
      x_min = std::min(x_min, static_cast<int>(std::floor(p.x)));
      x_max = std::max(x_max, static_cast<int>(std::ceil(p.x)));
      if (p.y && std::isfinite(*p.y)) ys.push_back(*p.y);
    }
  }
  if (x_min > x_max) x_min = x_max = 0;
  const axis xa = integer_axis(x_min, x_max, 12);
  const linear_map mx{xa.lo, xa.hi, pa.left + 4, pa.right - 4};

  axis ya;
  bool zero_row = false;
  double floor_gap = 0.0;  // pixels between the zero row and the lowest decade
  if (c.log_y) {
    double min_pos = INFINITY, max_pos = 0.0;
    for (const double y : ys) {
      if (y > 0) {
        min_pos = std::min(min_pos, y);
        max_pos = std::max(max_pos, y);
      } else {
        zero_row = true;
      }
    }
    int lo_exp = -4, hi_exp = 0;
    if (max_pos > 0) {
      lo_exp = static_cast<int>(std::floor(std::log10(min_pos)));
      hi_exp = static_cast<int>(std::ceil(std::log10(max_pos)));
      if (hi_exp == lo_exp) --lo_exp;  // rates reach 1 at most: widen downwards
    }
    ya = decade_axis(lo_exp, lo_exp, hi_exp);
    floor_gap = zero_row ? 20.0 : 0.0;
  } else {
    double lo = 0.0, hi = 0.0;
    for (const double y : ys) {
      lo = std::min(lo, y);
      hi = std::max(hi, y);
    }
    ya = round_axis(lo, hi, 5);
  }
  const linear_map my{ya.lo, ya.hi, pa.bottom - floor_gap, pa.top};
  const auto y_pixel = [&](const chart_point& p) -> double {
    if (!p.y || !std::isfinite(*p.y)) return pa.top;
    if (c.log_y) return *p.y > 0 ? my(std::log10(*p.y)) : pa.bottom;
    return my(*p.y);
  };

  std::string out;
  svg_open(out, c.id, c.kind, c.node, c.title);
  draw_axes(out, pa, xa, mx, ya, my, c.x_label, c.y_label);
  if (zero_row) {
    out += fmt::format(
        "<text class=\"tick-label-y zero-row\" x=\"{}\" y=\"{}\" text-anchor=\"end\" "
        "dominant-baseline=\"middle\">0</text>\n",
        px(pa.left - 6), px(pa.bottom));
    out += fmt::format("<line class=\"tick-y\" x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"#000\"/>\n",
                       px(pa.left - 4), px(pa.bottom), px(pa.left));
    // A break in the axis: the zero row is not on the log scale.
    const double yb = pa.bottom - floor_gap / 2;
    out += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"10\" height=\"6\" fill=\"#fff\" stroke=\"none\"/>\n",
                       px(pa.left - 5), px(yb - 3));
    out += fmt::format("<path class=\"axis-break\" d=\"M{},{} L{},{} M{},{} L{},{}\" fill=\"none\" stroke=\"#000\"/>\n",
                       px(pa.left - 5), px(yb - 1), px(pa.left + 5), px(yb - 5), px(pa.left - 5), px(yb + 5),
                       px(pa.left + 5), px(yb + 1));
  }
  for (std::size_t s = 0; s < c.series.size(); ++s) {
    // One polyline per run of points with values; a missing value breaks the line.
    std::vector<std::string> runs(1);
    for (const chart_point& p : c.series[s].points) {
      if (!p.y || !std::isfinite(*p.y)) {
        if (!runs.back().empty()) runs.emplace_back();
        continue;
      }
      runs.back() += fmt::format("{}{},{}", runs.back().empty() ? "" : " ", px(mx(p.x)), px(y_pixel(p)));
    }
    for (const std::string& r : runs) {
      if (r.find(' ') == std::string::npos) continue;
      out += fmt::format(
          "<polyline class=\"line s{}\" points=\"{}\" fill=\"none\" stroke=\"#000\" "
          "stroke-width=\"1.4\"{}/>\n",
          s + 1, r, dash_of(s));
    }
    for (const chart_point& p : c.series[s].points) {
      draw_marker(out, s, mx(p.x), y_pixel(p), !p.y || !std::isfinite(*p.y), p.title);
    }
  }
  if (with_legend) {
    std::vector<legend_item> items;
    for (std::size_t i = 0; i < c.series.size(); ++i) items.push_back({c.series[i].name, i, 1.4});
    draw_legend(out, items, pa.left, 34.0);
  }
  out += "</svg>\n";
  return out;
}

struct histogram_chart {
  std::string id;
  std::string node;
  std::string title;
  int min_exp = 0;
  std::vector<double> counts;  ///< counts[i]: values with 2^(min_exp+i) <= |v| < 2^(min_exp+i+1)
  int proposed_int_bits = 0;
  std::optional<int> analytic_int_bits;
};

/// Bars on a log2 |value| axis (bar e spans [e, e+1)), counts on a log axis, the proposed (solid)
/// and analytic (dashed) integer bits m as vertical lines at log2 |value| = m: a signed Qm.n holds
/// |v| < 2^m.
std::string render_histogram(const histogram_chart& h) {
  const plot_area pa{66.0, 46.0, chart_width - 14.0, chart_height - 46.0};
  std::optional<int> first, last;
  double max_count = 0.0, total = 0.0;
  for (std::size_t i = 0; i < h.counts.size(); ++i) {
    if (h.counts[i] <= 0) continue;
    const int e = h.min_exp + static_cast<int>(i);
    if (!first) first = e;
    last = e;
    max_count = std::max(max_count, h.counts[i]);
    total += h.counts[i];
  }
  int lo = first.value_or(h.proposed_int_bits - 1);
  int hi = last.value_or(h.proposed_int_bits - 1) + 1;
  lo = std::min(lo, h.proposed_int_bits);
  hi = std::max(hi, h.proposed_int_bits);
  if (h.analytic_int_bits) {
    lo = std::min(lo, *h.analytic_int_bits);
    hi = std::max(hi, *h.analytic_int_bits);
  }
  const axis xa = integer_axis(lo - 1, hi + 1, 12, 0.0);
  const linear_map mx{xa.lo, xa.hi, pa.left, pa.right};
  // Counts from 1 upwards; the floor at 0.5 keeps a single value's bar visible.
  const int hi_exp = std::max(1, static_cast<int>(std::ceil(std::log10(std::max(max_count, 1.0)))));
  const axis ya = decade_axis(std::log10(0.5), 0, hi_exp);
  const linear_map my{ya.lo, ya.hi, pa.bottom, pa.top};

  std::string out;
  svg_open(out, h.id, "range-histogram", h.node, h.title);
  draw_axes(out, pa, xa, mx, ya, my, "log2 |value|  (= integer bits m)", "values per bin (log)");
  for (std::size_t i = 0; i < h.counts.size(); ++i) {
    if (h.counts[i] <= 0) continue;
    const int e = h.min_exp + static_cast<int>(i);
    const double x0 = mx(e), x1 = mx(e + 1), y = my(std::log10(h.counts[i]));
    out += fmt::format(
        "<rect class=\"bar\" data-exp=\"{}\" x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"#a0a0a0\" "
        "stroke=\"#000\" stroke-width=\"0.6\"><title>2^{} &lt;= |v| &lt; 2^{}: {} values ({} %)</title></rect>\n",
        e, px(x0), px(y), px(x1 - x0), px(pa.bottom - y), e, e + 1, num(h.counts[i], 12),
        num(100.0 * h.counts[i] / total, 3));
  }
  const auto mark = [&](const char* cls, int m, std::size_t style, const std::string& label) {
    const double x = mx(m);
    out += fmt::format(
        "<line class=\"{}\" data-bits=\"{}\" x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"#000\" "
        "stroke-width=\"2\"{}><title>{}</title></line>\n",
        cls, m, px(x), px(pa.top), px(x), px(pa.bottom), dash_of(style), esc(label));
  };
  std::vector<legend_item> legend{{fmt::format("proposed m = {}", h.proposed_int_bits), 0, 2.0, false}};
  mark("mark-proposed", h.proposed_int_bits, 0, legend[0].name);
  if (h.analytic_int_bits) {
    legend.push_back({fmt::format("analytic m = {}", *h.analytic_int_bits), 1, 2.0, false});
    mark("mark-analytic", *h.analytic_int_bits, 1, legend[1].name);
  }
  draw_legend(out, legend, pa.left, 34.0);
  out += "</svg>\n";
  return out;
}

// ---------------------------------------------------------------------------------------------
// Sections

std::string kind_name(report_kind k) {
  switch (k) {
    case report_kind::run: return "run";
    case report_kind::range: return "range";
    case report_kind::sweep: return "sweep";
    case report_kind::tune: return "tune";
  }
  return "?";
}

/// Everything the page needs from one input, read and checked before anything is drawn.
struct input_view {
  std::string file;
  report_kind kind = report_kind::run;
  const json* doc = nullptr;
  std::string scenario;
  std::optional<double> trials;
  std::string headline;  ///< one line for the summary table
};

std::string scenario_name(const json& doc, const where& w) {
  const json& s = member(doc, w, "scenario");
  if (s.is_string()) return s.get<std::string>();
  return text(s, w.at("scenario"), "name");
}

class page {
 public:
  std::string out;

  std::string next_id(std::string_view what) { return fmt::format("c{}-{}", ++num_ids_, what); }

  /// One table row of ready markup; `align` has an 'l' for each left-aligned (text) column, the
  /// others are right-aligned numbers.
  void row(const std::vector<std::string>& cells, bool header = false, std::string_view align = "l") {
    out += "<tr>";
    for (std::size_t i = 0; i < cells.size(); ++i) {
      const char* tag = header ? "th" : "td";
      const bool left = i < align.size() && align[i] == 'l';
      out += fmt::format("<{0}{1}>{2}</{0}>", tag, left ? " class=\"l\"" : "", cells[i]);
    }
    out += "</tr>\n";
  }

 private:
  int num_ids_ = 0;
};

// --- sweep

struct sweep_point {
  std::string node;
  int bits = 0;
  std::string format;
  std::optional<double> sinr_loss_db, evm_impl_pct, evm_fixed_pct, sqnr_db, overflow_rate, max_overflow_rate;
};

std::string vary_symbol(const std::string& vary) { return vary == "frac" ? "F" : vary == "word" ? "W" : "m"; }

std::string vary_axis_label(const std::string& vary) {
  if (vary == "frac") return "fraction bits F (bits)";
  if (vary == "word") return "word length W (bits)";
  return "integer bits m (bits)";
}

std::string vary_words(const std::string& vary) {
  if (vary == "frac") return "fraction bits";
  if (vary == "word") return "word length";
  return "integer bits";
}

void render_sweep(page& pg, const input_view& in) {
  const json& doc = *in.doc;
  const where w{in.file, ""};
  const std::string vary = text(doc, w, "vary");
  if (vary != "frac" && vary != "word" && vary != "int") w.at("vary").fail("expected \"frac\", \"word\" or \"int\"");
  const json& points_json = array_member(doc, w, "points");
  std::map<std::string, std::vector<sweep_point>> by_node;
  for (std::size_t i = 0; i < points_json.size(); ++i) {
    const json& pj = points_json[i];
    const where wp = w.at("points").at(i);
    sweep_point p;
    p.node = text(pj, wp, "node");
    p.bits = integer(pj, wp, "bits");
    p.format = optional_text(pj, "format");
    p.sinr_loss_db = number_or_null(pj, wp, "sinr_loss_db");
    p.evm_impl_pct = number_or_null(pj, wp, "evm_impl_pct");
    p.evm_fixed_pct = number_or_null(pj, wp, "evm_fixed_pct");
    p.overflow_rate = number_or_null(pj, wp, "overflow_rate");
    p.sqnr_db = optional_number(pj, wp, "sqnr_db");
    p.max_overflow_rate = optional_number(pj, wp, "max_overflow_rate");
    by_node[p.node].push_back(p);
  }
  std::vector<std::string> nodes;
  for (const auto& [name, pts] : by_node) nodes.push_back(name);
  nodes = datapath_order(std::move(nodes));

  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>, {} trials per point; {} of {} swept, every other node as in the "
      "scenario. SINR loss and EVM are means over cell 0's users; implementation EVM compares the "
      "fixed-point DAC samples with the golden model's.</p>\n",
      esc(in.scenario), in.trials ? num(*in.trials, 10) : "?", esc(vary_words(vary)),
      nodes.size() == 1 ? "one node" : fmt::format("{} nodes", nodes.size()));
  if (nodes.empty()) pg.out += "<p>The sweep has no points.</p>\n";
  const std::string sym = vary_symbol(vary);
  for (const std::string& node : nodes) {
    std::vector<sweep_point>& pts = by_node[node];
    std::stable_sort(pts.begin(), pts.end(),
                     [](const sweep_point& a, const sweep_point& b) { return a.bits < b.bits; });
    const auto where_text = [&](const sweep_point& p) {
      return fmt::format("{}{}, {} = {}", node, p.format.empty() ? "" : " " + p.format, sym, p.bits);
    };
    xy_chart sinr{pg.next_id("sinr"),    "sweep-sinr",     node,  node + ": SINR loss",
                  vary_axis_label(vary), "SINR loss (dB)", false, {{"SINR loss", {}}}};
    xy_chart evm{pg.next_id("evm"),     "sweep-evm", node,  node + ": EVM",
                 vary_axis_label(vary), "EVM (%)",   false, {{"implementation", {}}, {"fixed, at users", {}}}};
    xy_chart ovf{pg.next_id("overflow"),
                 "sweep-overflow",
                 node,
                 node + ": overflow rate",
                 vary_axis_label(vary),
                 "overflows per value (log)",
                 true,
                 {{"this node", {}}}};
    bool all_have_max = true;
    for (const sweep_point& p : pts) all_have_max = all_have_max && p.max_overflow_rate.has_value();
    if (all_have_max) ovf.series.push_back({"worst node", {}});
    for (const sweep_point& p : pts) {
      const double x = p.bits;
      const std::string at = where_text(p);
      sinr.series[0].points.push_back(
          {x, p.sinr_loss_db, fmt::format("{}: SINR loss {} dB", at, num_or_dash(p.sinr_loss_db))});
      evm.series[0].points.push_back(
          {x, p.evm_impl_pct, fmt::format("{}: implementation EVM {} %", at, num_or_dash(p.evm_impl_pct))});
      evm.series[1].points.push_back(
          {x, p.evm_fixed_pct, fmt::format("{}: EVM at users (fixed) {} %", at, num_or_dash(p.evm_fixed_pct))});
      const auto rate_text = [](const std::optional<double>& r) {
        return !r ? std::string("no value") : *r > 0 ? num(*r, 3) : std::string("0 (no overflow)");
      };
      ovf.series[0].points.push_back(
          {x, p.overflow_rate, fmt::format("{}: overflow rate {}", at, rate_text(p.overflow_rate))});
      if (all_have_max) {
        ovf.series[1].points.push_back(
            {x, p.max_overflow_rate,
             fmt::format("{}: worst node's overflow rate {}", at, rate_text(p.max_overflow_rate))});
      }
    }
    pg.out += fmt::format("<div class=\"node-group\">\n<h3>{}</h3>\n<div class=\"charts\">\n", esc(node));
    pg.out += render_xy_chart(sinr);
    pg.out += render_xy_chart(evm);
    if (vary == "int") pg.out += render_xy_chart(ovf);
    pg.out += "</div>\n<details><summary>values</summary>\n<table>\n";
    pg.row({esc(sym + " (bits)"), "format", "SINR loss (dB)", "EVM impl. (%)", "EVM fixed (%)", "SQNR (dB)",
            "overflow rate"},
           true);
    for (const sweep_point& p : pts) {
      pg.row({std::to_string(p.bits), esc(p.format), num_or_dash(p.sinr_loss_db), num_or_dash(p.evm_impl_pct),
              num_or_dash(p.evm_fixed_pct), p.sqnr_db ? num(*p.sqnr_db) : "exact", num_or_dash(p.overflow_rate, 3)});
    }
    pg.out += "</table>\n</details>\n</div>\n";
  }
}

// --- range

void render_range(page& pg, const input_view& in) {
  const json& doc = *in.doc;
  const where w{in.file, ""};
  const json& nodes = object_member(doc, w, "nodes");
  const std::optional<double> prob = optional_number(doc, w, "overflow_prob");
  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>, {} golden trials. Each histogram counts the real and imaginary parts of a node by "
      "binary exponent (bar e: 2^e &lt;= |v| &lt; 2^(e+1)); the solid line is the proposed integer bits m for "
      "an overflow probability of {} (a signed Qm.n holds |v| &lt; 2^m), the dashed line the worst-case "
      "analytic growth where there is a simple rule.</p>\n<div class=\"charts\">\n",
      esc(in.scenario), in.trials ? num(*in.trials, 10) : "?", prob ? num(*prob, 3) : "?");
  std::string table;
  const std::vector<std::string> names = object_keys(nodes);
  for (const std::string& name : names) {
    const json& n = nodes[name];
    const where wn = w.at("nodes").at(name);
    histogram_chart h;
    h.id = pg.next_id("hist");
    h.node = name;
    h.title = name + ": |value| histogram";
    h.min_exp = integer(n, wn, "hist_min_exp");
    const json& hist = array_member(n, wn, "log2_histogram");
    for (std::size_t i = 0; i < hist.size(); ++i) {
      if (!hist[i].is_number() || hist[i].get<double>() < 0) wn.at("log2_histogram").at(i).fail("expected a count");
      h.counts.push_back(hist[i].get<double>());
    }
    h.proposed_int_bits = integer(n, wn, "proposed_int_bits");
    const json& analytic = member(n, wn, "analytic_int_bits");
    if (!analytic.is_null()) h.analytic_int_bits = integer(n, wn, "analytic_int_bits");
    pg.out += render_histogram(h);
    const auto cell = [&](std::string_view key) { return num_or_dash(optional_number(n, wn, key)); };
    table += "<tr>";
    for (const std::string& c :
         {fmt::format("<td class=\"l\">{}</td>", esc(name)),
          fmt::format("<td>{}</td>", num_or_dash(optional_number(n, wn, "values"), 15)),
          fmt::format("<td>{}</td>", cell("max_abs")), fmt::format("<td>{}</td>", cell("p99")),
          fmt::format("<td>{}</td>", cell("p99_99")), fmt::format("<td>{}</td>", cell("p99_9999")),
          fmt::format("<td><b>{}</b></td>", h.proposed_int_bits),
          fmt::format("<td class=\"l\">{}</td>", esc(optional_text(n, "proposal_basis", "—"))),
          fmt::format("<td>{}</td>", h.analytic_int_bits ? std::to_string(*h.analytic_int_bits) : "—"),
          fmt::format("<td class=\"l\">{}</td>", esc(optional_text(n, "analytic_rule", "—")))}) {
      table += c;
    }
    table += "</tr>\n";
  }
  pg.out += "</div>\n<table>\n";
  pg.row({"node", "values", "max |v|", "p99 |v|", "p99.99 |v|", "p99.9999 |v|", "proposed m", "basis", "analytic m",
          "analytic rule"},
         true, "lrrrrrrlrl");
  pg.out += table + "</table>\n";
}

// --- tune

void render_tune(page& pg, const input_view& in) {
  const json& doc = *in.doc;
  const where w{in.file, ""};
  const std::string cost_model = text(doc, w, "cost_model");
  const double cost = number(doc, w, "cost");
  const json& limits = object_member(doc, w, "limits");
  const json& verification = object_member(doc, w, "verification");
  const json& margins = object_member(doc, w, "margins");
  const json& nodes = object_member(doc, w, "nodes");
  const where wv = w.at("verification"), wl = w.at("limits"), wm = w.at("margins");
  const json& meets_json = member(verification, wv, "meets_limits");
  if (!meets_json.is_boolean()) wv.at("meets_limits").fail("expected true or false");
  const bool meets = meets_json.get<bool>();
  const json* met_json = find_member(doc, "met");
  const bool search_met = met_json == nullptr || !met_json->is_boolean() || met_json->get<bool>();
  const std::string unit = cost_model == "bits" ? "register bits"
                                                : "area units (proxy: multiplier widths products, "
                                                  "register and memory bits)";
  const std::optional<double> verify_trials = optional_number(verification, wv, "trials");

  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>. Cheapest widths found under cost model <b>{}</b>: total cost "
      "<b>{}</b> {}.</p>\n",
      esc(in.scenario), esc(cost_model), num(cost, 10), esc(unit));
  pg.out += fmt::format(
      "<p class=\"verdict {}\">Re-verification on {} fresh trials: <b>{}</b> — {}</p>\n", meets ? "pass" : "fail",
      verify_trials ? num(*verify_trials, 10) : "?", meets ? "PASS" : "FAIL",
      meets ? "the widths meet every limit." : "the widths do NOT meet every limit; see the margins below.");
  if (const std::string note = optional_text(doc, "note"); !note.empty()) {
    pg.out += fmt::format("<p class=\"note\">{}</p>\n", esc(note));
  }
  if (!search_met) {
    pg.out += "<p class=\"verdict fail\"><b>FAIL</b> — the search itself found no widths that meet every limit.</p>\n";
  }
  pg.out += "<table>\n";
  pg.row({"node", "format", "word W", "fraction F", "integer m", "cost"}, true, "ll");
  for (const std::string& name : object_keys(nodes)) {
    const json& n = nodes[name];
    const where wn = w.at("nodes").at(name);
    pg.row({esc(name), esc(optional_text(n, "format", "—")), num(number(n, wn, "word_bits")),
            num(number(n, wn, "frac_bits")), num_or_dash(optional_number(n, wn, "int_bits")),
            num_or_dash(optional_number(n, wn, "cost"), 10)},
           false, "ll");
  }
  pg.out += fmt::format("<tr><th class=\"l\">total</th><td></td><td></td><td></td><td></td><th>{}</th></tr>\n",
                        num(cost, 10));
  pg.out += "</table>\n<table>\n";
  pg.row({"limit", "limit", "re-verified", "margin (limit − value)", "verdict"}, true, "l");
  const auto limit_row = [&](const std::string& label, std::string_view limit_key, std::string_view value_key,
                             std::string_view margin_key, int sig) {
    const auto limit = number_or_null(limits, wl, limit_key);
    const auto value = number_or_null(verification, wv, value_key);
    const auto margin = number_or_null(margins, wm, margin_key);
    std::string verdict = "no limit";
    if (limit && value) verdict = *value <= *limit ? "within" : "<b>EXCEEDED</b>";
    pg.row({esc(label), num_or_dash(limit, sig), num_or_dash(value, sig), num_or_dash(margin, sig), verdict});
  };
  limit_row("SINR loss (dB)", "max_sinr_loss_db", "sinr_loss_db", "sinr_loss_db", 4);
  limit_row("implementation EVM (%)", "max_evm_pct", "evm_impl_pct", "evm_pct", 4);
  limit_row("overflow rate (worst node)", "max_overflow_rate", "max_overflow_rate", "overflow_rate", 3);
  // The RMS transmit-power error: its keys since schema 1 of tune files; files written before
  // fxmimo 0.2 name it max_tx_power_error_db / abs_tx_power_error_db / tx_power_error_db.
  if (find_member(limits, "max_rms_tx_power_error_db") != nullptr) {
    limit_row("RMS tx power error (dB)", "max_rms_tx_power_error_db", "rms_tx_power_error_db", "rms_tx_power_error_db",
              4);
  } else if (find_member(limits, "max_tx_power_error_db") != nullptr) {
    limit_row("RMS tx power error (dB)", "max_tx_power_error_db", "abs_tx_power_error_db", "tx_power_error_db", 4);
  }
  pg.out += "</table>\n";
}

// --- run

void render_run(page& pg, const input_view& in) {
  const json& doc = *in.doc;
  const where w{in.file, ""};
  const json& summary = object_member(doc, w, "summary");
  const json& users = array_member(doc, w, "users");
  const where ws = w.at("summary");
  const json* scen = find_member(doc, "scenario");
  const std::string source = scen != nullptr ? optional_text(*scen, "source") : "";
  pg.out += fmt::format("<p>Scenario <b>{}</b>{}, {} trials.</p>\n", esc(in.scenario),
                        source.empty() ? "" : " (" + esc(source) + ")", in.trials ? num(*in.trials, 10) : "?");
  pg.out += "<table>\n";
  pg.row({"mean over cell 0's users", "golden", "fixed", "loss / implementation", "3GPP limit"}, true);
  const auto s = [&](std::string_view key) { return num_or_dash(optional_number(summary, ws, key)); };
  pg.row({"SINR (dB)", s("sinr_golden_db"), s("sinr_fixed_db"), s("sinr_loss_db"), ""});
  pg.row({"EVM (%)", s("evm_golden_pct"), s("evm_fixed_pct"), s("evm_impl_pct"), s("evm_limit_pct")});
  pg.out += "</table>\n";
  if (const json* nodes = find_member(doc, "nodes"); nodes != nullptr && nodes->is_object()) {
    pg.out += "<table>\n";
    pg.row({"node", "format", "rounding", "overflow", "SQNR (dB)", "max error (LSB)", "overflows", "overflow rate"},
           true, "llll");
    for (const std::string& name : object_keys(*nodes)) {
      const json& n = (*nodes)[name];
      const where wn = w.at("nodes").at(name);
      const json* sqnr = find_member(n, "sqnr_db");
      pg.row({esc(name), esc(optional_text(n, "format", "—")), esc(optional_text(n, "rounding", "—")),
              esc(optional_text(n, "overflow", "—")),
              sqnr == nullptr   ? "—"
              : sqnr->is_null() ? "exact"
                                : num_or_dash(optional_number(n, wn, "sqnr_db")),
              num_or_dash(optional_number(n, wn, "max_err_lsb")), num_or_dash(optional_number(n, wn, "overflows"), 12),
              num_or_dash(optional_number(n, wn, "overflow_rate"), 3)},
             false, "llll");
    }
    pg.out += "</table>\n";
  }
  pg.out += "<table>\n";
  pg.row({"user", "SINR golden (dB)", "SINR fixed (dB)", "SINR loss (dB)", "EVM golden (%)", "EVM fixed (%)"}, true);
  for (std::size_t i = 0; i < users.size(); ++i) {
    const where wu = w.at("users").at(i);
    const auto u = [&](std::string_view key) { return num_or_dash(optional_number(users[i], wu, key)); };
    pg.row({std::to_string(i), u("sinr_golden_db"), u("sinr_fixed_db"), u("sinr_loss_db"), u("evm_golden_pct"),
            u("evm_fixed_pct")});
  }
  pg.out += "</table>\n";
  if (const json* warnings = find_member(doc, "warnings");
      warnings != nullptr && warnings->is_array() && !warnings->empty()) {
    pg.out += "<ul class=\"warnings\">\n";
    for (const json& wtext : *warnings) {
      pg.out += fmt::format("<li>warning: {}</li>\n", esc(wtext.is_string() ? wtext.get<std::string>() : wtext.dump()));
    }
    pg.out += "</ul>\n";
  }
}

/// The headline of an input for the summary table (and the checks its section relies on first).
input_view view_of(const std::string& file, const json& doc) {
  input_view v;
  v.file = file;
  v.doc = &doc;
  v.kind = report_input_kind(file, doc);
  const where w{file, ""};
  v.scenario = scenario_name(doc, w);
  v.trials = optional_number(doc, w, "trials");
  if (const json* ver = find_member(doc, "verification"); !v.trials && ver != nullptr) {
    v.trials = optional_number(*ver, w.at("verification"), "trials");
  }
  switch (v.kind) {
    case report_kind::run: {
      const json& s = object_member(doc, w, "summary");
      const auto limit = optional_number(s, w.at("summary"), "evm_limit_pct");
      v.headline = fmt::format("SINR loss {} dB, implementation EVM {} %{}",
                               num_or_dash(optional_number(s, w.at("summary"), "sinr_loss_db")),
                               num_or_dash(optional_number(s, w.at("summary"), "evm_impl_pct")),
                               limit ? fmt::format(" (3GPP limit {} %)", num(*limit)) : "");
      break;
    }
    case report_kind::range: {
      const auto prob = optional_number(doc, w, "overflow_prob");
      v.headline = fmt::format("integer bits of {} for overflow probability {}",
                               count_of(object_member(doc, w, "nodes").size(), "node"), prob ? num(*prob, 3) : "?");
      break;
    }
    case report_kind::sweep: {
      std::set<std::string> nodes;
      const json& pts = array_member(doc, w, "points");
      for (std::size_t i = 0; i < pts.size(); ++i) nodes.insert(text(pts[i], w.at("points").at(i), "node"));
      v.headline = fmt::format("{} of {}, {}", vary_words(text(doc, w, "vary")), count_of(nodes.size(), "node"),
                               count_of(pts.size(), "point"));
      break;
    }
    case report_kind::tune: {
      const json& ver = object_member(doc, w, "verification");
      const json* meets = find_member(ver, "meets_limits");
      v.headline =
          fmt::format("cost {} ({}); re-verification {}", num(number(doc, w, "cost"), 10), text(doc, w, "cost_model"),
                      meets != nullptr && meets->is_boolean() && meets->get<bool>() ? "PASS" : "FAIL");
      break;
    }
  }
  return v;
}

std::string section_title(const input_view& in) {
  switch (in.kind) {
    case report_kind::run: return "Run";
    case report_kind::range: return "Range profile";
    case report_kind::sweep: {
      const std::string vary = text(*in.doc, where{in.file, ""}, "vary");
      return "Sweep of " + vary_words(vary);
    }
    case report_kind::tune: return "Tuned widths";
  }
  return "";
}

constexpr std::string_view page_style = R"(
body { font-family: sans-serif; color: #000; background: #fff; margin: 20px 28px; max-width: 1160px; }
h1 { font-size: 22px; margin-bottom: 4px; }
h2 { font-size: 18px; border-bottom: 2px solid #000; padding-bottom: 2px; margin-top: 28px; }
h3 { font-size: 15px; margin: 14px 0 6px; }
p, li { font-size: 14px; line-height: 1.4; }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 13px; }
th, td { border: 1px solid #555; padding: 3px 8px; text-align: right; }
th { background: #e8e8e8; }
td.l, th.l { text-align: left; }
.charts { display: flex; flex-wrap: wrap; gap: 10px; }
svg.chart { border: 1px solid #999; background: #fff; }
svg.chart text { font-family: sans-serif; font-size: 11px; fill: #000; }
svg.chart text.chart-title { font-size: 13px; font-weight: bold; }
svg.chart text.axis-label { font-size: 12px; }
.verdict { font-size: 15px; border: 2px solid #000; padding: 6px 10px; display: inline-block; }
.verdict.fail { border: 4px double #000; }
.note { font-size: 13px; }
details summary { font-size: 13px; }
@media print { body { margin: 0; } .node-group, svg.chart, table { break-inside: avoid; } }
)";

}  // namespace

report_kind report_input_kind(const std::string& name, const json& doc) {
  if (!doc.is_object()) throw report_input_error(name + ": expected a JSON object with a \"kind\"");
  const json* kind = find_member(doc, "kind");
  if (kind == nullptr) {
    if (find_member(doc, "summary") != nullptr && find_member(doc, "users") != nullptr) return report_kind::run;
    throw report_input_error(name + ": no \"kind\" (expected run, range, sweep or tune)");
  }
  if (!kind->is_string()) throw report_input_error(name + ": \"kind\" is not a string");
  // Files without "schema" were written before results files were versioned: schema 1.
  if (const json* schema = find_member(doc, "schema"); schema != nullptr) {
    if (!schema->is_number_integer()) throw report_input_error(name + ": \"schema\" is not an integer");
    if (schema->get<long long>() != results_schema) {
      throw report_input_error(
          fmt::format("{}: schema {} is not supported (this reader knows {}); use the fxmimo that wrote it", name,
                      schema->get<long long>(), results_schema));
    }
  }
  const std::string k = kind->get<std::string>();
  if (k == "run") return report_kind::run;
  if (k == "range") return report_kind::range;
  if (k == "sweep") return report_kind::sweep;
  if (k == "tune") return report_kind::tune;
  throw report_input_error(
      fmt::format("{}: unknown kind \"{}\" (expected run, range, sweep or tune)", name, esc(k).substr(0, 60)));
}

json read_report_input(const std::filesystem::path& path) {
  const std::string name = path.string();
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec)) throw report_input_error(name + ": is a directory, not a results file");
  std::ifstream in(path, std::ios::binary);
  if (!in) throw report_input_error(name + ": cannot open the file");
  std::ostringstream content;
  content << in.rdbuf();
  json doc;
  try {
    doc = json::parse(content.str());
  } catch (const json::parse_error& e) {
    // "[json.exception.parse_error.101] parse error at line 1, column 2: ..." without the tag.
    std::string what = e.what();
    if (const auto close = what.find("] "); what.rfind("[json.exception", 0) == 0 && close != std::string::npos) {
      what.erase(0, close + 2);
    }
    std::replace(what.begin(), what.end(), '\n', ' ');
    throw report_input_error(fmt::format("{}: not valid JSON: {}", name, what));
  }
  report_input_kind(name, doc);
  return doc;
}

std::string render_report_html(const std::vector<std::pair<std::string, json>>& inputs) {
  std::vector<input_view> views;
  views.reserve(inputs.size());
  for (const auto& [file, doc] : inputs) views.push_back(view_of(file, doc));

  page pg;
  pg.out +=
      "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n"
      "<title>fxmimo word-length report</title>\n<style>";
  pg.out += page_style;
  pg.out += "</style>\n</head>\n<body>\n<h1>fxmimo word-length report</h1>\n";
  pg.out +=
      "<p class=\"note\">Simulated results of the bit-true datapath model against its golden model. "
      "Sign-off belongs to RTL or gate-level verification and the applicable conformance tests.</p>\n";

  pg.out += "<h2 id=\"summary\">Scenario summary</h2>\n<table>\n";
  pg.row({"file", "kind", "scenario", "trials", "result"}, true, "lllrl");
  std::set<std::string> scenarios;
  for (std::size_t i = 0; i < views.size(); ++i) {
    const input_view& v = views[i];
    scenarios.insert(v.scenario);
    pg.out += fmt::format(
        "<tr><td class=\"l\"><a href=\"#in{}\">{}</a></td><td class=\"l\">{}</td><td class=\"l\">{}</td><td>{}</td>"
        "<td class=\"l\">{}</td></tr>\n",
        i + 1, esc(v.file), kind_name(v.kind), esc(v.scenario), v.trials ? num(*v.trials, 10) : "—", esc(v.headline));
  }
  pg.out += "</table>\n";
  if (views.empty()) pg.out += "<p>No results files were given.</p>\n";
  if (scenarios.size() > 1) {
    std::string list;
    for (const std::string& s : scenarios) list += (list.empty() ? "" : ", ") + esc(s);
    pg.out += fmt::format(
        "<p class=\"note\"><b>Note:</b> the inputs come from {} different scenarios ({}); their "
        "numbers are not directly comparable.</p>\n",
        scenarios.size(), list);
  }

  for (std::size_t i = 0; i < views.size(); ++i) {
    const input_view& v = views[i];
    pg.out += fmt::format("<section id=\"in{}\">\n<h2>{}: {}</h2>\n", i + 1, esc(section_title(v)), esc(v.file));
    switch (v.kind) {
      case report_kind::run: render_run(pg, v); break;
      case report_kind::range: render_range(pg, v); break;
      case report_kind::sweep: render_sweep(pg, v); break;
      case report_kind::tune: render_tune(pg, v); break;
    }
    pg.out += "</section>\n";
  }
  pg.out += "</body>\n</html>\n";
  return pg.out;
}

}  // namespace fxmimo::report
