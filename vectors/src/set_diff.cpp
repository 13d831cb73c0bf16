#include "fxmimo/vectors/set_diff.hpp"

#include <fmt/core.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "fxmimo/fixedpoint/integer.hpp"

namespace fxmimo::vectors {

std::string_view to_string(diff_status status) {
  switch (status) {
    case diff_status::identical: return "identical";
    case diff_status::changed: return "changed";
    case diff_status::only_in_a: return "removed";
    case diff_status::only_in_b: return "added";
  }
  return "?";
}

std::size_t set_diff_report::unallowed_changes() const {
  return static_cast<std::size_t>(std::count_if(records.begin(), records.end(), [](const record_diff& r) {
    return r.status != diff_status::identical && !r.allowed;
  }));
}

namespace {

std::string dims_text(const node_words& r) {
  std::string s;
  for (std::size_t d = 0; d < r.dim_names.size(); ++d)
    s += fmt::format("{}{}={}", d == 0 ? "" : " x ", r.dim_names[d], r.dim_sizes[d]);
  return s.empty() ? "(scalar)" : s;
}

/// a * 2^-fa == b * 2^-fb exactly.
bool same_value(std::int64_t a, int fa, std::int64_t b, int fb) {
  if (fa == fb) return a == b;
  const int f = std::max(fa, fb);
  const fp::big_int wa = fp::big_int(a) << static_cast<unsigned>(f - fa);
  const fp::big_int wb = fp::big_int(b) << static_cast<unsigned>(f - fb);
  return wa == wb;
}

void compare_records(const node_words& a, const node_words& b, record_diff& d) {
  if (a.spec.fmt != b.spec.fmt)
    d.what.push_back(fmt::format("format {} -> {}", fp::describe(a.spec.fmt), fp::describe(b.spec.fmt)));
  if (a.spec.rounding != b.spec.rounding)
    d.what.push_back(fmt::format("rounding {} -> {}", fp::to_string(a.spec.rounding), fp::to_string(b.spec.rounding)));
  if (a.spec.overflow != b.spec.overflow)
    d.what.push_back(fmt::format("overflow {} -> {}", fp::to_string(a.spec.overflow), fp::to_string(b.spec.overflow)));
  if (a.dim_names != b.dim_names || a.dim_sizes != b.dim_sizes || a.is_complex != b.is_complex) {
    d.what.push_back(fmt::format("dims {}{} -> {}{}", dims_text(a), a.is_complex ? " complex" : "", dims_text(b),
                                 b.is_complex ? " complex" : ""));
    d.status = diff_status::changed;
    d.sqnr_db = std::numeric_limits<double>::quiet_NaN();
    return;
  }
  const int fa = a.spec.fmt.frac_bits;
  const int fb = b.spec.fmt.frac_bits;
  double signal = 0.0;
  double noise = 0.0;
  auto run = [&](const std::vector<std::int64_t>& pa, const std::vector<std::int64_t>& pb) {
    for (std::size_t i = 0; i < pa.size(); ++i) {
      ++d.words;
      // Reporting only: values as doubles (exact for |word| < 2^53).
      const double va = std::ldexp(static_cast<double>(pa[i]), -fa);
      const double vb = std::ldexp(static_cast<double>(pb[i]), -fb);
      signal += va * va;
      if (same_value(pa[i], fa, pb[i], fb)) continue;
      ++d.changed_words;
      noise += (vb - va) * (vb - va);
      d.max_diff_lsb = std::max(d.max_diff_lsb, std::ldexp(std::abs(vb - va), fa));
    }
  };
  run(a.re, b.re);
  run(a.im, b.im);
  if (d.changed_words > 0) d.what.push_back(fmt::format("{} of {} words", d.changed_words, d.words));
  d.status = d.what.empty() ? diff_status::identical : diff_status::changed;
  d.sqnr_db = noise == 0.0    ? std::numeric_limits<double>::infinity()
              : signal == 0.0 ? -std::numeric_limits<double>::infinity()
                              : 10.0 * std::log10(signal / noise);
}

}  // namespace

set_diff_report diff_vector_sets(const vector_set& a, const vector_set& b, const std::vector<std::string>& allowed) {
  set_diff_report report;
  report.scenario_a = a.man.scenario_sha256;
  report.scenario_b = b.man.scenario_sha256;
  if (report.scenario_a != report.scenario_b) {
    report.notes.push_back(
        fmt::format("scenario texts differ (A {}..., B {}...): expected when the datapath configuration changed",
                    report.scenario_a.substr(0, 12), report.scenario_b.substr(0, 12)));
  }
  if (a.man.info.seed != b.man.info.seed) {
    report.notes.push_back(fmt::format("seeds differ (A {}, B {}): the stimulus differs, so every node may change",
                                       a.man.info.seed, b.man.info.seed));
  }
  if (a.man.info.trials != b.man.info.trials) report.notes.push_back("trial lists differ: the stimulus differs");
  auto is_allowed = [&](const std::string& node) {
    return std::find(allowed.begin(), allowed.end(), node) != allowed.end();
  };

  for (const node_words& ra : a.records) {
    record_diff d;
    d.label = record_label(ra);
    d.node = ra.node;
    d.allowed = is_allowed(ra.node);
    const node_words* rb = nullptr;
    for (const node_words& r : b.records) {
      if (r.node == ra.node && r.direction == ra.direction && r.port_name() == ra.port_name()) rb = &r;
    }
    if (rb == nullptr) {
      d.status = diff_status::only_in_a;
      d.sqnr_db = std::numeric_limits<double>::quiet_NaN();
    } else {
      compare_records(ra, *rb, d);
    }
    report.records.push_back(std::move(d));
  }
  for (const node_words& rb : b.records) {
    const bool in_a = std::any_of(a.records.begin(), a.records.end(), [&](const node_words& r) {
      return r.node == rb.node && r.direction == rb.direction && r.port_name() == rb.port_name();
    });
    if (in_a) continue;
    record_diff d;
    d.label = record_label(rb);
    d.node = rb.node;
    d.allowed = is_allowed(rb.node);
    d.status = diff_status::only_in_b;
    d.sqnr_db = std::numeric_limits<double>::quiet_NaN();
    report.records.push_back(std::move(d));
  }
  return report;
}

std::string format_diff(const set_diff_report& report) {
  std::string out;
  for (const std::string& note : report.notes) out += "note: " + note + "\n";
  out += fmt::format("{:<28} {:<10} {:>14} {:>12} {:>10}  {}\n", "record", "status", "changed words", "max |B-A|",
                     "SQNR dB", "what");
  for (const record_diff& r : report.records) {
    std::string status(to_string(r.status));
    if (r.status != diff_status::identical && r.allowed) status += " (allowed)";
    const std::string changed = r.words == 0 ? "-" : fmt::format("{}/{}", r.changed_words, r.words);
    const std::string max_lsb = r.words == 0 ? "-" : fmt::format("{:.6g} LSB", r.max_diff_lsb);
    const std::string sqnr = std::isnan(r.sqnr_db)   ? "-"
                             : std::isinf(r.sqnr_db) ? (r.sqnr_db > 0 ? "inf" : "-inf")
                                                     : fmt::format("{:.2f}", r.sqnr_db);
    std::string what;
    for (const std::string& w : r.what) what += (what.empty() ? "" : "; ") + w;
    out += fmt::format("{:<28} {:<10} {:>14} {:>12} {:>10}  {}\n", r.label, status, changed, max_lsb, sqnr, what);
  }
  const std::size_t bad = report.unallowed_changes();
  out += bad == 0 ? "result: no unallowed changes\n"
                  : fmt::format("result: {} record(s) changed that are not allowed\n", bad);
  return out;
}

nlohmann::json to_json(const set_diff_report& report) {
  nlohmann::json j;
  j["scenario_a"] = report.scenario_a;
  j["scenario_b"] = report.scenario_b;
  j["notes"] = report.notes;
  j["unallowed_changes"] = report.unallowed_changes();
  j["records"] = nlohmann::json::array();
  for (const record_diff& r : report.records) {
    nlohmann::json e{{"record", r.label},
                     {"node", r.node},
                     {"status", std::string(to_string(r.status))},
                     {"allowed", r.allowed},
                     {"words", r.words},
                     {"changed_words", r.changed_words},
                     {"max_diff_lsb", r.max_diff_lsb},
                     {"what", r.what}};
    // JSON has no inf/NaN: null for "not comparable", a string for infinity.
    if (std::isnan(r.sqnr_db))
      e["sqnr_db"] = nullptr;
    else if (std::isinf(r.sqnr_db))
      e["sqnr_db"] = r.sqnr_db > 0 ? "inf" : "-inf";
    else
      e["sqnr_db"] = r.sqnr_db;
    j["records"].push_back(std::move(e));
  }
  return j;
}

io::junit_suite to_junit(const set_diff_report& report) {
  io::junit_suite suite;
  suite.name = "fxmimo diff";
  suite.properties = {{"scenario_a", report.scenario_a}, {"scenario_b", report.scenario_b}};
  for (const std::string& note : report.notes) suite.properties.push_back({"note", note});
  const std::string table = format_diff(report);
  for (const record_diff& r : report.records) {
    io::junit_case c;
    c.name = r.label;
    c.classname = "fxmimo.diff." + r.node;
    // The record's row of the table (the line that starts with its label).
    std::string row;
    for (std::size_t pos = 0; pos < table.size();) {
      const std::size_t end = std::min(table.find('\n', pos), table.size());
      if (table.compare(pos, r.label.size() + 1, r.label + " ") == 0) row = table.substr(pos, end - pos);
      pos = end + 1;
    }
    c.details = row;
    if (r.status != diff_status::identical && !r.allowed) {
      c.failed = true;
      c.failure_type = std::string(to_string(r.status));
      std::string what;
      for (const std::string& w : r.what) what += (what.empty() ? "" : "; ") + w;
      c.failure_message = what.empty() ? fmt::format("{} {}: {} of {} words changed", r.label, to_string(r.status),
                                                     r.changed_words, r.words)
                                       : fmt::format("{} {}: {}", r.label, to_string(r.status), what);
    }
    suite.cases.push_back(std::move(c));
  }
  return suite;
}

}  // namespace fxmimo::vectors
