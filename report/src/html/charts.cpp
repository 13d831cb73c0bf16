#include "charts.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <climits>
#include <cmath>

#include "axes.hpp"
#include "markup.hpp"

namespace fxmimo::report::html {

namespace {

constexpr double chart_width = 340.0;
constexpr double chart_height = 252.0;

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

}  // namespace

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

std::string render_cdf_chart(const cdf_chart& c) {
  const plot_area pa{66.0, 30.0, chart_width - 14.0, chart_height - 46.0};
  std::vector<std::pair<double, double>> pts;  // (value, probability)
  for (std::size_t i = 0; i < c.percentiles.size(); ++i) {
    if (std::isfinite(c.percentiles[i]))
      pts.emplace_back(c.percentiles[i], static_cast<double>(i) / static_cast<double>(c.percentiles.size() - 1));
  }
  double lo = pts.empty() ? 0.0 : pts.front().first, hi = pts.empty() ? 1.0 : pts.back().first;
  if (c.limit && std::isfinite(*c.limit)) {
    lo = std::min(lo, *c.limit);
    hi = std::max(hi, *c.limit);
  }
  if (hi <= lo) hi = lo + 1e-3;
  const axis xa = round_axis(lo, hi, 5);
  const axis ya = round_axis(0.0, 1.0, 5);
  const linear_map mx{xa.lo, xa.hi, pa.left + 4, pa.right - 4};
  const linear_map my{ya.lo, ya.hi, pa.bottom, pa.top};
  std::string out;
  svg_open(out, c.id, c.kind, "", c.title);
  draw_axes(out, pa, xa, mx, ya, my, c.x_label, "fraction at or below");
  std::string path;
  for (const auto& [x, y] : pts) path += fmt::format("{}{},{}", path.empty() ? "M" : " L", px(mx(x)), px(my(y)));
  if (!path.empty())
    out +=
        fmt::format("<path class=\"series s1\" d=\"{}\" fill=\"none\" stroke=\"#000\" stroke-width=\"1.6\"/>\n", path);
  for (const std::size_t q : {5U, 50U, 95U}) {
    if (q >= c.percentiles.size() || !std::isfinite(c.percentiles[q])) continue;
    draw_marker(out, 0, mx(c.percentiles[q]), my(static_cast<double>(q) / 100.0), false,
                fmt::format("{} % at or below {}", q, num(c.percentiles[q])));
  }
  if (c.limit && std::isfinite(*c.limit)) {
    out += fmt::format(
        "<line class=\"limit\" x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\" stroke=\"#000\" stroke-width=\"1.2\"{3}>"
        "<title>{4}</title></line>\n",
        px(mx(*c.limit)), px(pa.top), px(pa.bottom), dash_of(1), esc(c.limit_label));
  }
  out += "</svg>\n";
  return out;
}

}  // namespace fxmimo::report::html
