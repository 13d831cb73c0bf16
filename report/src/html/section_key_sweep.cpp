// The report's section for a sweep over a scenario key: golden SINR and the golden
// interference-to-signal ratio against the key's value (e.g. the number of antennas), the SINR
// loss of the fixed datapath, and the integer bits the accumulating nodes need at each value.
#include <fmt/core.h>

#include <charconv>
#include <cmath>

#include "charts.hpp"
#include "sections.hpp"

namespace fxmimo::report::html {

namespace {

/// The value as a chart abscissa: the number it is (whole numbers only), else its position.
double abscissa(const key_sweep_record& r, std::size_t i) {
  for (const key_sweep_point_record& p : r.points) {
    double v = 0;
    const auto [ptr, ec] = std::from_chars(p.value.data(), p.value.data() + p.value.size(), v);
    if (ec != std::errc{} || ptr != p.value.data() + p.value.size() || v != std::floor(v) || std::abs(v) > 1e6)
      return static_cast<double>(i);
  }
  double v = 0;
  std::from_chars(r.points[i].value.data(), r.points[i].value.data() + r.points[i].value.size(), v);
  return v;
}

}  // namespace

std::string section_title(const key_sweep_record& r) { return "Sweep over " + r.key; }

std::string headline(const key_sweep_record& r) {
  if (r.points.empty()) return "no points";
  return fmt::format("{} = {} .. {}: interference {} .. {} dB", r.key, r.points.front().value, r.points.back().value,
                     num_or_dash(r.points.front().interference_db), num_or_dash(r.points.back().interference_db));
}

std::optional<std::uint64_t> trials_of(const key_sweep_record& r) { return r.trials; }

void render_section(page& pg, const key_sweep_record& r) {
  pg.out += fmt::format(
      "<p>Scenario <b>{}</b>, {} trials per point; each point is the scenario with <code>{}</code> set to the "
      "value, every width as configured.</p>\n",
      esc(r.scenario.name), trials_text(r.trials), esc(r.key));
  xy_chart c{pg.next_id("key-sweep"), "key-sweep", "", "Golden SINR and interference", r.key, "dB", false, {}};
  chart_series sinr{"SINR golden", {}}, interference{"interference / signal", {}};
  for (std::size_t i = 0; i < r.points.size(); ++i) {
    const key_sweep_point_record& p = r.points[i];
    sinr.points.push_back({abscissa(r, i), p.sinr_golden_db,
                           fmt::format("{} = {}: SINR {} dB", r.key, p.value, num_or_dash(p.sinr_golden_db))});
    interference.points.push_back(
        {abscissa(r, i), p.interference_db,
         fmt::format("{} = {}: interference {} dB", r.key, p.value, num_or_dash(p.interference_db))});
  }
  c.series = {sinr, interference};
  pg.out += "<div class=\"charts\">\n" + render_xy_chart(c) + "</div>\n";
  pg.out += "<table>\n";
  std::vector<std::string> head{esc(r.key),       "SINR golden (dB)",       "interference (dB)",
                                "SINR loss (dB)", "implementation EVM (%)", "max overflow rate"};
  if (!r.points.empty()) {
    for (const auto& [node, bits] : r.points.front().growth_int_bits) head.push_back(esc(node) + " int bits");
  }
  pg.row(head, true, "l");
  for (const key_sweep_point_record& p : r.points) {
    std::vector<std::string> cells{esc(p.value),
                                   num_or_dash(p.sinr_golden_db),
                                   num_or_dash(p.interference_db),
                                   num_or_dash(p.sinr_loss_db),
                                   num_or_dash(p.evm_impl_pct),
                                   num_or_dash(p.max_overflow_rate, 3)};
    for (const auto& [node, bits] : p.growth_int_bits) cells.push_back(std::to_string(bits));
    pg.row(cells, false, "l");
  }
  pg.out += "</table>\n";
}

}  // namespace fxmimo::report::html
