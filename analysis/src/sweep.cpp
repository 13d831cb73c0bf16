#include "fxmimo/analysis/sweep.hpp"

#include <fmt/core.h>

#include <cmath>

namespace fxmimo::analysis {

namespace fp = fxmimo::fixedpoint;

std::string_view to_string(sweep_axis axis) {
  switch (axis) {
    case sweep_axis::frac: return "frac";
    case sweep_axis::word: return "word";
    case sweep_axis::int_bits: return "int";
  }
  return "?";
}

fp::format swept_format(const fp::format& base, sweep_axis axis, int bits) {
  fp::format f = base;
  const int int_bits = base.int_bits();
  switch (axis) {
    case sweep_axis::frac:
      f.frac_bits = bits;
      f.word_bits = (base.is_signed ? 1 : 0) + int_bits + bits;
      break;
    case sweep_axis::word:
      f.word_bits = bits;
      f.frac_bits = bits - (base.is_signed ? 1 : 0) - int_bits;
      break;
    case sweep_axis::int_bits: f.word_bits = (base.is_signed ? 1 : 0) + bits + base.frac_bits; break;
  }
  if (f.word_bits < 2 || f.container_bits() > datapath::max_node_word_bits) {
    throw std::invalid_argument(fmt::format("{} = {} gives a {}-bit word from {}: datapath words hold 2 to 64 bits",
                                            to_string(axis), bits, f.word_bits, fp::to_q_string(base)));
  }
  return f;
}

sweep_results run_sweep(const golden::scenario& scen, const datapath::datapath_config& config,
                        const std::vector<datapath::node_id>& nodes, int lo, int hi, sweep_axis axis,
                        const std::vector<std::uint64_t>& trials, unsigned num_threads,
                        const progress_callback& progress) {
  if (lo > hi) throw std::invalid_argument(fmt::format("empty bit range {}:{}", lo, hi));
  // Check every point before running any, so a bad range fails at once.
  for (datapath::node_id id : nodes)
    for (int b = lo; b <= hi; ++b) (void)swept_format(config[id].spec.fmt, axis, b);
  sweep_results out;
  out.scenario_name = scen.name;
  out.num_trials = trials.size();
  out.axis = axis;
  const std::size_t total = nodes.size() * static_cast<std::size_t>(hi - lo + 1) * trials.size();
  std::size_t before = 0;
  for (datapath::node_id id : nodes) {
    for (int b = lo; b <= hi; ++b) {
      datapath::datapath_config c = config;
      c[id].spec.fmt = swept_format(config[id].spec.fmt, axis, b);
      c[id].is_default = false;
      const run_results r = run_trials(scen, c, trials, num_threads, [&](std::size_t done, std::size_t) {
        if (progress) progress(before + done, total);
      });
      before += trials.size();
      sweep_point p;
      p.id = id;
      p.bits = b;
      p.fmt = c[id].spec.fmt;
      p.summary = r.summary;
      for (const node_result& n : r.nodes) {
        p.max_overflow_rate = std::max(p.max_overflow_rate, n.overflow_rate());
        if (n.id == id) {
          p.node_sqnr_db = n.sqnr_db();
          p.node_overflow_rate = n.overflow_rate();
        }
      }
      out.points.push_back(p);
    }
  }
  return out;
}

}  // namespace fxmimo::analysis
