#include "fxmimo/harness/sweep.hpp"

#include <fmt/core.h>

#include <cmath>

namespace fxmimo::harness {

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
    case sweep_axis::int_bits:
      f.word_bits = (base.is_signed ? 1 : 0) + bits + base.frac_bits;
      break;
  }
  if (f.word_bits < 2 || f.container_bits() > max_node_word_bits) {
    throw std::invalid_argument(fmt::format("{} = {} gives a {}-bit word from {}: datapath words hold 2 to 64 bits",
                                            to_string(axis), bits, f.word_bits, fp::to_q_string(base)));
  }
  return f;
}

sweep_results run_sweep(const golden::scenario& scen, const datapath_config& config, const std::vector<node_id>& nodes,
                        int lo, int hi, sweep_axis axis, const std::vector<std::uint64_t>& trials, unsigned num_threads,
                        const progress_callback& progress) {
  if (lo > hi) throw std::invalid_argument(fmt::format("empty bit range {}:{}", lo, hi));
  // Check every point before running any, so a bad range fails at once.
  for (node_id id : nodes)
    for (int b = lo; b <= hi; ++b) (void)swept_format(config[id].spec.fmt, axis, b);
  sweep_results out;
  out.scenario_name = scen.name;
  out.num_trials = trials.size();
  out.axis = axis;
  const std::size_t total = nodes.size() * static_cast<std::size_t>(hi - lo + 1) * trials.size();
  std::size_t before = 0;
  for (node_id id : nodes) {
    for (int b = lo; b <= hi; ++b) {
      datapath_config c = config;
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

std::string format_sweep_table(const sweep_results& r) {
  std::string out = fmt::format("scenario {}, {} trials per point, sweeping {} bits\n\n", r.scenario_name, r.num_trials,
                                to_string(r.axis));
  out += fmt::format("{:<15} {:>5} {:<10} {:>12} {:>12} {:>11} {:>9} {:>11} {:>12}\n", "node", "bits", "format",
                     "SINR loss dB", "EVM fixed %", "EVM impl %", "SQNR dB", "ovf rate", "max ovf rate");
  for (const sweep_point& p : r.points) {
    out += fmt::format("{:<15} {:>5} {:<10} {:>12.4f} {:>12.3f} {:>11.4f} {:>9} {:>11.3g} {:>12.3g}\n", node_name(p.id),
                       p.bits, fp::to_q_string(p.fmt), p.summary.sinr_loss_db, p.summary.evm_fixed_pct,
                       p.summary.evm_impl_pct,
                       std::isinf(p.node_sqnr_db) ? std::string("exact") : fmt::format("{:.1f}", p.node_sqnr_db),
                       p.node_overflow_rate, p.max_overflow_rate);
  }
  return out;
}

nlohmann::json to_json(const sweep_results& r) {
  nlohmann::json out;
  out["kind"] = "sweep";
  out["scenario"] = {{"name", r.scenario_name}};
  out["trials"] = r.num_trials;
  out["vary"] = std::string(to_string(r.axis));
  out["points"] = nlohmann::json::array();
  for (const sweep_point& p : r.points) {
    out["points"].push_back({{"node", std::string(node_name(p.id))},
                             {"bits", p.bits},
                             {"format", fp::to_q_string(p.fmt)},
                             {"word_bits", p.fmt.word_bits},
                             {"frac_bits", p.fmt.frac_bits},
                             {"int_bits", p.fmt.int_bits()},
                             {"sinr_loss_db", p.summary.sinr_loss_db},
                             {"sinr_fixed_db", p.summary.sinr_fixed_db},
                             {"evm_fixed_pct", p.summary.evm_fixed_pct},
                             {"evm_impl_pct", p.summary.evm_impl_pct},
                             {"sqnr_db", std::isinf(p.node_sqnr_db) ? nlohmann::json(nullptr) : nlohmann::json(p.node_sqnr_db)},
                             {"overflow_rate", p.node_overflow_rate},
                             {"max_overflow_rate", p.max_overflow_rate}});
  }
  return out;
}

std::string to_csv(const sweep_results& r) {
  std::string out = "node,bits,format,sinr_loss_db,evm_fixed_pct,evm_impl_pct,sqnr_db,overflow_rate,max_overflow_rate\n";
  for (const sweep_point& p : r.points) {
    out += fmt::format("{},{},{},{:.6g},{:.6g},{:.6g},{},{:.6g},{:.6g}\n", node_name(p.id), p.bits, fp::to_q_string(p.fmt),
                       p.summary.sinr_loss_db, p.summary.evm_fixed_pct, p.summary.evm_impl_pct,
                       std::isinf(p.node_sqnr_db) ? std::string("inf") : fmt::format("{:.6g}", p.node_sqnr_db),
                       p.node_overflow_rate, p.max_overflow_rate);
  }
  return out;
}

}  // namespace fxmimo::harness
