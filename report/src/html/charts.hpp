#pragma once
// The HTML report's charts as inline SVG: x-y charts of up to two series and log2 |value|
// histograms. Black and grey on white; series differ by marker shape and line dash, never by
// colour alone, and every data point carries a <title> with its value.

#include <optional>
#include <string>
#include <vector>

namespace fxmimo::report::html {

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

/// An x-y chart on whole-number x (bit counts): polylines broken at missing values, a marker per
/// point (a missing value hollow at the top edge), a legend when there are two series.
std::string render_xy_chart(const xy_chart& c);

/// The empirical CDF of a quantity from its 0, 1, ..., 100 % percentiles.
struct cdf_chart {
  std::string id;
  std::string kind;  ///< data-chart, e.g. "sinr-loss-cdf"
  std::string title;
  std::string x_label;
  std::vector<double> percentiles;  ///< 101 values, non-decreasing (non-finite ones are left out)
  std::optional<double> limit;      ///< a vertical dashed line (a limit on the quantity)
  std::string limit_label;
};

/// A line through (percentile q, q / 100) on a linear x axis and a 0..1 probability axis; the 5,
/// 50 and 95 % points marked and titled; the limit, where given, as a dashed vertical line.
std::string render_cdf_chart(const cdf_chart& c);

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
std::string render_histogram(const histogram_chart& h);

}  // namespace fxmimo::report::html
