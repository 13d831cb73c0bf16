// The visual report: results records drawn into one self-contained page with inline SVG.
//
// No scripts, no links out of the page, no fonts but the reader's own sans-serif; the markup is
// also well-formed XML (html/markup.hpp). The pieces: html/markup (escaping, numbers, tables),
// html/axes, html/charts, one html/section_KIND.cpp per kind of results file, and this page.
#include "fxmimo/report/report_html.hpp"

#include <fmt/core.h>

#include <set>

#include "html/markup.hpp"
#include "html/sections.hpp"

namespace fxmimo::report {

namespace {

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

namespace html {

std::string trials_text(const std::optional<std::uint64_t>& trials) { return trials ? std::to_string(*trials) : "?"; }

}  // namespace html

report_kind report_input_kind(const std::string& name, const nlohmann::json& doc) {
  return kind_of(io::checked_json(doc, name));
}

nlohmann::json read_report_input(const std::filesystem::path& path) {
  nlohmann::json doc = io::read_json_file(path);
  report_input_kind(path.string(), doc);
  return doc;
}

std::string render_report_html(const std::vector<std::pair<std::string, nlohmann::json>>& inputs) {
  std::vector<named_record> records;
  records.reserve(inputs.size());
  for (const auto& [file, doc] : inputs) records.push_back({file, record_from_json(io::checked_json(doc, file))});
  return render_report_html(records);
}

std::string render_report_html(const std::vector<named_record>& inputs) {
  using namespace html;
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
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    const named_record& in = inputs[i];
    std::visit(
        [&](const auto& r) {
          scenarios.insert(r.scenario.name);
          const auto trials = trials_of(r);
          pg.out += fmt::format(
              "<tr><td class=\"l\"><a href=\"#in{}\">{}</a></td><td class=\"l\">{}</td><td class=\"l\">{}</td>"
              "<td>{}</td><td class=\"l\">{}</td></tr>\n",
              i + 1, esc(in.file), to_string(kind_of(in.record)), esc(r.scenario.name),
              trials ? std::to_string(*trials) : "—", esc(headline(r)));
        },
        in.record);
  }
  pg.out += "</table>\n";
  if (inputs.empty()) pg.out += "<p>No results files were given.</p>\n";
  if (scenarios.size() > 1) {
    std::string list;
    for (const std::string& s : scenarios) list += (list.empty() ? "" : ", ") + esc(s);
    pg.out += fmt::format(
        "<p class=\"note\"><b>Note:</b> the inputs come from {} different scenarios ({}); their "
        "numbers are not directly comparable.</p>\n",
        scenarios.size(), list);
  }

  for (std::size_t i = 0; i < inputs.size(); ++i) {
    const named_record& in = inputs[i];
    std::visit(
        [&](const auto& r) {
          pg.out += fmt::format("<section id=\"in{}\">\n<h2>{}: {}</h2>\n", i + 1, esc(section_title(r)), esc(in.file));
          render_section(pg, r);
          pg.out += "</section>\n";
        },
        in.record);
  }
  pg.out += "</body>\n</html>\n";
  return pg.out;
}

}  // namespace fxmimo::report
